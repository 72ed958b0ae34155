using System.Security.Cryptography;
using TapeVault.Core.Tests.Audio;
using TapeVault.Core.Tests.Cli;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Hardening;

/// <summary>
/// The command line's side of every bad-input case (README.md): a WAV file or a profile the core refuses ends the
/// run with exit code 2, one line on standard error that carries the core's sentence, nothing on standard output,
/// and nothing written; a damaged image makes <c>image verify</c> and <c>image extract</c> exit 1 the same way.
/// </summary>
public sealed class CliBadInputTests : IDisposable
{
    private readonly OutsideTempFolder temp = new();

    public void Dispose() => temp.Dispose();

    public static TheoryData<string> WavCases() => WavRefusalTests.Names();

    public static TheoryData<string> ProfileCases() => ProfileRefusalTests.Names();

    public static TheoryData<string> ImageCases() => ImageDamageTests.Names();

    [Theory]
    [MemberData(nameof(WavCases))]
    public void Decode_ExitsTwo_WithTheReadersSentence_AndWritesNothing_ForEveryRefusedWav(string name)
    {
        string folder = temp.NewFolder(WavRefusalTests.Safe(name));
        string capture = Path.Combine(folder, "capture.wav");
        File.WriteAllBytes(capture, WavRefusalTests.Cases[name].File);
        string before = Snapshot(folder);

        var run = CliRun.Run("decode", capture, "--profile", "kcs-300", "--json", Path.Combine(folder, "out.json"), "--payload", Path.Combine(folder, "out.bin"));

        AssertBadInput(run, 2, WavRefusalTests.Cases[name].Expected);
        Assert.Equal(before, Snapshot(folder));
    }

    [Theory]
    [MemberData(nameof(ProfileCases))]
    public void ProfilesAndDecode_ExitTwo_WithTheLoadersSentence_ForEveryRefusedProfileInTheFolder(string name)
    {
        string folder = temp.NewFolder(WavRefusalTests.Safe(name));
        string profiles = Directory.CreateDirectory(Path.Combine(folder, "profiles")).FullName;
        File.WriteAllText(Path.Combine(profiles, "broken.json"), ProfileRefusalTests.Cases[name].Text());
        string capture = Path.Combine(folder, "capture.wav");
        File.WriteAllBytes(capture, WavBytes.Pcm16(8000, 1, new short[800]));
        string before = Snapshot(folder);

        var list = CliRun.Run("profiles", "--profiles", profiles);
        var decode = CliRun.Run("decode", capture, "--profile", "kcs-300", "--profiles", profiles, "--json", Path.Combine(folder, "out.json"));

        // The text-size case is refused by Load before parsing, in bytes rather than characters.
        string[] expected = name == "text over the size limit" ? ["broken.json", "at most 262144 bytes"] : ProfileRefusalTests.Cases[name].Expected;
        AssertBadInput(list, 2, expected);
        AssertBadInput(decode, 2, expected);
        Assert.Equal(before, Snapshot(folder));
    }

    [Theory]
    [MemberData(nameof(ImageCases))]
    public void ImageVerifyAndExtract_ExitOne_WithTheReadersSentence_AndWriteNothing_ForEveryDamagedImage(string name)
    {
        string folder = temp.NewFolder(WavRefusalTests.Safe(name));
        string image = Path.Combine(folder, "tape.tvimg");
        File.WriteAllBytes(image, ImageDamageTests.Cases[name].Container());
        string before = Snapshot(folder);

        var verify = CliRun.Run("image", "verify", image);
        var extract = CliRun.Run("image", "extract", image, Path.Combine(folder, "files"));

        AssertBadInput(verify, 1, ImageDamageTests.Cases[name].Expected);
        AssertBadInput(extract, 1, ImageDamageTests.Cases[name].Expected);
        Assert.Equal(before, Snapshot(folder));
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void Decode_ExitsZero_AndSaysSo_WhenTheCaptureIsCutOffBeforeTheAudioItsHeaderDeclares(bool cutOff)
    {
        // A cut-off capture is not refused: what is there is decoded, and the table and the JSON say it is cut off.
        string folder = temp.NewFolder($"cut-off-{cutOff}");
        string capture = Path.Combine(folder, "capture.wav");
        File.WriteAllBytes(capture, WavBytes.Pcm16(8000, 1, new short[800], declaredDataSize: cutOff ? 1_000_000u : null));
        string json = Path.Combine(folder, "out.json");

        var run = CliRun.Run("decode", capture, "--profile", "kcs-300", "--json", json);

        Assert.True(run.ExitCode == 0, run.ToString());
        Assert.Equal(string.Empty, run.Error);
        Assert.Equal(cutOff, run.Output.Contains("cut off: the file ends before the audio its header declares", StringComparison.Ordinal));
        using var document = System.Text.Json.JsonDocument.Parse(File.ReadAllBytes(json));
        Assert.Equal(cutOff, document.RootElement.GetProperty("capture").GetProperty("truncated").GetBoolean());
        Assert.Equal(800, document.RootElement.GetProperty("capture").GetProperty("durationSeconds").GetDouble() * 8000, 6);
    }

    private static void AssertBadInput(CliResult run, int exitCode, string[] expected)
    {
        Assert.True(run.ExitCode == exitCode, run.ToString());
        Assert.Equal(string.Empty, run.Output);
        string line = Assert.Single(run.ErrorLines);
        Assert.StartsWith("tapevault: ", line, StringComparison.Ordinal);
        Assert.EndsWith(".", line, StringComparison.Ordinal);
        foreach (string fragment in expected)
        {
            Assert.Contains(fragment, line, StringComparison.Ordinal);
        }
    }

    /// <summary>Every entry under the folder with the SHA-256 of each file, so that anything written or changed shows.</summary>
    private static string Snapshot(string folder) => string.Join('\n', Directory
        .GetFileSystemEntries(folder, "*", SearchOption.AllDirectories)
        .Order(StringComparer.Ordinal)
        .Select(p => File.Exists(p) ? $"{p} {Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(p)))}" : $"{p}/"));
}
