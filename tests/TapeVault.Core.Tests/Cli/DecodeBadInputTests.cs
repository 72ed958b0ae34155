using System.Buffers.Binary;
using System.Text;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Cli;

/// <summary>
/// The decode command's contract for bad input (README.md): exit code 2, exactly one line on standard error, nothing
/// on standard output, and no output file created, not even a temporary one.
/// </summary>
public sealed class DecodeBadInputTests : IClassFixture<CliCaptures>
{
    private readonly CliCaptures captures;

    public DecodeBadInputTests(CliCaptures captures)
    {
        this.captures = captures;
    }

    [Theory]
    [InlineData("missing file")]
    [InlineData("text file")]
    [InlineData("MPEG Layer-3 format code written by hand")]
    [InlineData("u-law written by sox")]
    [InlineData("zero frames written by sox")]
    [InlineData("unknown profile")]
    [InlineData("unknown channel")]
    [InlineData("json folder missing")]
    [InlineData("payload folder missing")]
    [InlineData("json is a folder")]
    [InlineData("json and payload name one file")]
    public void Decode_ExitsTwoWithOneLineAndWritesNothing_ForBadInput(string problem)
    {
        string folder = captures.Temp.NewFolder("bad-" + problem.Replace(' ', '-'));
        string json = Path.Combine(folder, "out.json");
        string payload = Path.Combine(folder, "out.bin");
        string capture = captures.Mono;
        string profile = "kcs-300";
        var extra = new List<string>();
        switch (problem)
        {
            case "missing file":
                capture = Path.Combine(folder, "no-such-capture.wav");
                break;
            case "text file":
                capture = Path.Combine(folder, "notes.wav");
                File.WriteAllText(capture, "Side A: three programs, recorded twice.\n", Encoding.ASCII);
                break;
            case "MPEG Layer-3 format code written by hand":
                capture = Path.Combine(folder, "mp3-in-wav.wav");
                File.WriteAllBytes(capture, WaveWithFormatCode(0x0055));
                break;
            case "u-law written by sox":
                capture = Path.Combine(folder, "u-law.wav");
                OutsideTool.Sox(captures.Mono, "-e", "u-law", capture);
                Assert.Equal("u-law", OutsideTool.SoxInfo("-e", capture));
                break;
            case "zero frames written by sox":
                capture = Path.Combine(folder, "empty.wav");
                OutsideTool.Sox("-n", "-r", "44100", "-b", "16", "-c", "1", capture, "trim", "0", "0");
                Assert.Equal("0", OutsideTool.SoxInfo("-s", capture));
                break;
            case "unknown profile":
                profile = "no-such-profile";
                break;
            case "unknown channel":
                extra.AddRange(["--channel", "centre"]);
                break;
            case "json folder missing":
                json = Path.Combine(folder, "no-such-folder", "out.json");
                break;
            case "payload folder missing":
                payload = Path.Combine(folder, "no-such-folder", "out.bin");
                break;
            case "json is a folder":
                json = Directory.CreateDirectory(Path.Combine(folder, "a-folder")).FullName;
                break;
            case "json and payload name one file":
                payload = Path.Combine(folder, ".", "out.json");
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(problem), problem, "Unknown problem.");
        }

        var before = Snapshot(folder);
        var run = CliRun.Run(["decode", capture, "--profile", profile, "--json", json, "--payload", payload, .. extra]);

        Assert.True(run.ExitCode == 2, run.ToString());
        var line = Assert.Single(run.ErrorLines);
        Assert.StartsWith("tapevault: ", line, StringComparison.Ordinal);
        Assert.True(line.Length > "tapevault: ".Length + 10, run.ToString());
        Assert.Equal(string.Empty, run.Output);
        Assert.Equal(before, Snapshot(folder));
    }

    [Fact]
    public void Decode_NeverWritesOverTheCapture_WhenAnOutputNamesIt()
    {
        string folder = captures.Temp.NewFolder("over-the-capture");
        string capture = Path.Combine(folder, "capture.wav");
        File.Copy(captures.Mono, capture);

        // GNU sha256sum, an outside tool, is the judge of "unchanged".
        string hash = OutsideTool.Sha256Sum(capture);
        foreach (string option in new[] { "--json", "--payload" })
        {
            var run = CliRun.Run("decode", capture, "--profile", "kcs-300", option, Path.Combine(folder, ".", "capture.wav"));

            Assert.True(run.ExitCode == 2, run.ToString());
            Assert.Single(run.ErrorLines);
            Assert.Equal(string.Empty, run.Output);
            Assert.Equal(hash, OutsideTool.Sha256Sum(capture));
            Assert.Equal(["capture.wav"], Directory.GetFiles(folder).Select(Path.GetFileName));
        }
    }

    /// <summary>Every file under the folder, with its length and hash, so a test sees anything written or touched.</summary>
    private static List<string> Snapshot(string folder) =>
        [.. Directory.GetFileSystemEntries(folder, "*", SearchOption.AllDirectories)
            .Order(StringComparer.Ordinal)
            .Select(p => File.Exists(p) ? $"{p} {Convert.ToHexString(System.Security.Cryptography.SHA256.HashData(File.ReadAllBytes(p)))}" : $"{p}/")];

    /// <summary>A RIFF/WAVE file with a 20-byte fmt chunk naming <paramref name="code"/> and a little data.</summary>
    private static byte[] WaveWithFormatCode(ushort code)
    {
        var fmt = new byte[20];
        BinaryPrimitives.WriteUInt16LittleEndian(fmt.AsSpan(0), code);
        BinaryPrimitives.WriteUInt16LittleEndian(fmt.AsSpan(2), 2);
        BinaryPrimitives.WriteUInt32LittleEndian(fmt.AsSpan(4), 44_100);
        BinaryPrimitives.WriteUInt32LittleEndian(fmt.AsSpan(8), 16_000);
        BinaryPrimitives.WriteUInt16LittleEndian(fmt.AsSpan(12), 1);
        BinaryPrimitives.WriteUInt16LittleEndian(fmt.AsSpan(14), 0);
        BinaryPrimitives.WriteUInt16LittleEndian(fmt.AsSpan(16), 2);
        var data = new byte[400];
        using var file = new MemoryStream();
        void chunk(string id, byte[] body)
        {
            file.Write(Encoding.ASCII.GetBytes(id));
            Span<byte> size = stackalloc byte[4];
            BinaryPrimitives.WriteUInt32LittleEndian(size, (uint)body.Length);
            file.Write(size);
            file.Write(body);
        }

        file.Write("RIFF"u8);
        file.Write(new byte[4]);
        file.Write("WAVE"u8);
        chunk("fmt ", fmt);
        chunk("data", data);
        byte[] bytes = file.ToArray();
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(4), (uint)(bytes.Length - 8));
        return bytes;
    }
}
