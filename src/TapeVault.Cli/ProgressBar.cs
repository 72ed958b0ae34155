namespace TapeVault.Cli;

/// <summary>A one-line progress bar on standard error, drawn only when standard error is a terminal.</summary>
public sealed class ProgressBar : IProgress<double>, IDisposable
{
    private readonly string _label;
    private readonly bool _enabled = !Console.IsErrorRedirected;
    private int _lastPercent = -1;

    public ProgressBar(string label) => _label = label;

    public void Report(double value)
    {
        if (!_enabled)
        {
            return;
        }

        int percent = (int)Math.Clamp(value * 100, 0, 100);
        if (percent == _lastPercent)
        {
            return;
        }

        _lastPercent = percent;
        int filled = percent * 30 / 100;
        Console.Error.Write($"\r{_label} [{new string('#', filled)}{new string('.', 30 - filled)}] {percent,3}%");
    }

    public void Dispose()
    {
        if (_enabled && _lastPercent >= 0)
        {
            Console.Error.WriteLine();
        }
    }
}
