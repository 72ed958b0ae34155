using TapeVault.Core.Tests.Hardening.Fuzzing;
using Xunit;
using Xunit.Abstractions;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// A bounded random-mutation run over the three readers of outside files, fixed in seed and count so that every run
/// tries the same inputs: only the documented exception (with a one-sentence message) or success, no input over a
/// second, and no allocation beyond a few times the input's size plus a fixed allowance. Longer runs:
/// <c>dotnet run -c Release --project tests/TapeVault.Bench -- fuzz COUNT SEED</c>.
/// </summary>
public sealed class FuzzTests(ITestOutputHelper log) : IDisposable
{
    public const int Seed = 20_261_202;

    private readonly string folder = Directory.CreateTempSubdirectory("tapevault-fuzz-").FullName;

    public void Dispose() => Directory.Delete(folder, recursive: true);

    [Theory]
    [InlineData("wav", 1500)]
    [InlineData("profile", 1500)]
    [InlineData("image", 1500)]
    public void MutatedInputs_AreReadOrRefusedWithTheDocumentedException_QuicklyAndInBoundedMemory(string target, int count)
    {
        var fuzz = FuzzTargets.All(folder).Single(t => t.Name == target);

        var report = FuzzRun.Run(fuzz, count, Seed, TimeSpan.FromSeconds(1));

        log.WriteLine(report.Summary);
        string failures = string.Join('\n', report.Failures.Take(10).Select(f => $"#{f.Index} {f.Fault}: {f.Detail} [{f.Mutations}]"));
        Assert.True(report.Failures.Count == 0, $"{report.Summary}\n{failures}");

        // Both outcomes are reached: the mutations neither all break the input nor all leave it readable.
        Assert.True(report.Refused > count / 4, report.Summary);
        Assert.True(report.Accepted > 0, report.Summary);
    }
}
