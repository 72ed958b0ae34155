namespace TapeVault.Bench;

/// <summary>The machine's 1, 5 and 15-minute load averages, printed beside figures that a loaded machine would skew.</summary>
internal static class MachineLoad
{
    public static string Averages() =>
        File.Exists("/proc/loadavg") ? string.Join(' ', File.ReadAllText("/proc/loadavg").Split(' ').Take(3)) : "unknown";
}
