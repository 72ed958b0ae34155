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

    /// <summary>
    /// An adapter for a decode's progress that draws on the reporting thread. (Progress&lt;T&gt; would post each
    /// report to the thread pool, where a late one could draw after the bar is finished.)
    /// </summary>
    public IProgress<TapeVault.Core.Decoding.DecodeProgress> ForDecode() => new DecodeAdapter(this);

    public void Dispose()
    {
        if (_enabled && _lastPercent >= 0)
        {
            Console.Error.WriteLine();
        }
    }

    private sealed class DecodeAdapter(ProgressBar bar) : IProgress<TapeVault.Core.Decoding.DecodeProgress>
    {
        public void Report(TapeVault.Core.Decoding.DecodeProgress value) => bar.Report(value.Fraction);
    }
}
