using System.Diagnostics;
using System.Globalization;
using System.Text;
using Xunit;

namespace TapeVault.Core.Tests.OutsideChecks;

/// <summary>A fresh temporary folder for one test class, deleted with everything in it when the class is done.</summary>
public sealed class OutsideTempFolder : IDisposable
{
    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-outside-").FullName;

    /// <summary>A path inside the folder.</summary>
    public string File(string name) => Path.Combine(Root, name);

    /// <summary>A new empty sub-folder, for a test that must see exactly what it wrote.</summary>
    public string NewFolder(string name) => Directory.CreateDirectory(File(name)).FullName;

    public void Dispose()
    {
        try
        {
            Directory.Delete(Root, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless.
        }
    }
}

/// <summary>What an outside program printed.</summary>
internal sealed record ToolOutput(string StandardOutput, string StandardError);

/// <summary>
/// The general-purpose programs the outside checks lean on, none of which shares code with TapeVault: minimodem
/// (Debian's software FSK modem) writes and reads FSK audio, SoX converts, damages and measures WAV files, Debian's
/// flac (the reference encoder of RFC 9639) encodes them as FLAC, and GNU coreutils' sha256sum hashes them. scripts/test installs them when they are missing.
/// </summary>
internal static class OutsideTool
{
    public const string MinimodemPath = "/usr/bin/minimodem";
    public const string SoxPath = "/usr/bin/sox";
    public const string Sha256SumPath = "/usr/bin/sha256sum";

    /// <summary>Debian's flac, the reference encoder of RFC 9639.</summary>
    public const string FlacPath = "/usr/bin/flac";

    /// <summary>Runs a program to completion and returns what it printed; a non-zero exit is an error.</summary>
    public static ToolOutput Run(string program, IReadOnlyList<string> arguments, byte[]? standardInput = null)
    {
        if (!System.IO.File.Exists(program))
        {
            throw new InvalidOperationException($"{program} is missing: run scripts/test, which installs sox, minimodem and flac.");
        }

        var start = new ProcessStartInfo(program)
        {
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,

            // One character a byte: what minimodem's receiver prints is the bytes it read, not UTF-8 text (as UTF-8, a
            // byte of 0x80 or more that starts no valid sequence came back as U+FFFD, and Latin-1 made that "?", 0x3F).
            StandardOutputEncoding = Encoding.Latin1,
        };
        foreach (string argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        using Process process = Process.Start(start) ?? throw new InvalidOperationException($"Could not start {program}.");
        Task<string> stdout = process.StandardOutput.ReadToEndAsync();
        Task<string> stderr = process.StandardError.ReadToEndAsync();
        if (standardInput is not null)
        {
            process.StandardInput.BaseStream.Write(standardInput);
        }

        process.StandardInput.Close();
        if (!process.WaitForExit(60_000))
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{program} did not finish within 60 s.");
        }

        process.WaitForExit();
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"{program} {string.Join(' ', arguments)} exited with {process.ExitCode}: {stderr.Result}");
        }

        return new ToolOutput(stdout.Result, stderr.Result);
    }

    /// <summary>Runs SoX with <c>-R</c> (SoX's repeatable random numbers, so dither and noise are the same every run).</summary>
    public static void Sox(params string[] arguments) => Run(SoxPath, ["-R", .. arguments]);

    /// <summary>
    /// A full dropout made by SoX: <paramref name="output"/> is <paramref name="source"/> with the <paramref name="seconds"/>
    /// after <paramref name="at"/> seconds replaced by digital silence of the source's rate, width and channels. The
    /// pieces are written beside <paramref name="output"/>.
    /// </summary>
    public static void SoxSilence(string source, string output, double at, double seconds)
    {
        string invariant(double x) => x.ToString("R", CultureInfo.InvariantCulture);
        string before = output + ".before.wav";
        string after = output + ".after.wav";
        string gap = output + ".gap.wav";
        Sox(source, before, "trim", "0", invariant(at));
        Sox(source, after, "trim", invariant(at + seconds));
        Sox("-n", "-r", SoxInfo("-r", source), "-b", SoxInfo("-b", source), "-c", SoxInfo("-c", source), gap, "trim", "0", invariant(seconds));
        Sox(before, gap, after, output);
    }

    /// <summary><c>sox --i -X file</c>: SoX's own reading of a file's header.</summary>
    public static string SoxInfo(string option, string path) => Run(SoxPath, ["--i", option, path]).StandardOutput.Trim();

    public static int SoxSampleRate(string path) => int.Parse(SoxInfo("-r", path), CultureInfo.InvariantCulture);

    public static int SoxChannels(string path) => int.Parse(SoxInfo("-c", path), CultureInfo.InvariantCulture);

    public static double SoxDurationSeconds(string path) => double.Parse(SoxInfo("-D", path), CultureInfo.InvariantCulture);

    /// <summary>The RMS amplitude (full scale 1) that SoX's <c>stat</c> effect measures over the whole file.</summary>
    public static double SoxRms(string path)
    {
        string report = Run(SoxPath, [path, "-n", "stat"]).StandardError;
        foreach (string line in report.Split('\n'))
        {
            if (line.StartsWith("RMS     amplitude:", StringComparison.Ordinal))
            {
                return double.Parse(line["RMS     amplitude:".Length..].Trim(), CultureInfo.InvariantCulture);
            }
        }

        throw new InvalidOperationException($"sox stat printed no RMS amplitude for {path}: {report}");
    }

    /// <summary>The SHA-256 of the file as GNU sha256sum prints it.</summary>
    public static string Sha256Sum(string path)
    {
        string output = Run(Sha256SumPath, ["-b", path]).StandardOutput;
        string hex = output.Split(' ', 2)[0].TrimStart('\\');
        Assert.Matches("^[0-9a-f]{64}$", hex);
        return hex;
    }

    /// <summary>What minimodem's receiver reads from an FSK capture with the Kansas City tones.</summary>
    public static byte[] MinimodemReceive(string path, int baud)
    {
        var output = Run(MinimodemPath, ["--rx", baud.ToString(CultureInfo.InvariantCulture), "--mark", "2400", "--space", "1200", "--quiet", "-f", path]);
        return Encoding.Latin1.GetBytes(output.StandardOutput);
    }
}

/// <summary>
/// Captures in the Kansas City Standard's tones written by minimodem, a general-purpose FSK modem that shares no code
/// with TapeVault. minimodem is a modem, not a tape deck: it sends only two bits of mark tone before the first start
/// bit, and every tape profile asks for a lead-in (kcs-300 and kcs-1200: at least 0.1 s of mark tone) before it will
/// trust a start bit. So SoX puts one second of 2400 Hz (the mark tone) in front, as a tape's lead-in would be.
/// </summary>
internal static class KcsCaptures
{
    public const double LeadInSeconds = 1.0;

    /// <summary>
    /// A few hundred bytes of text: every byte value from 0x20 to 0x7E and newlines, so each data bit pattern of
    /// printable ASCII is on the tape.
    /// </summary>
    public static byte[] Text { get; } = BuildText();

    /// <summary>
    /// Writes <paramref name="name"/>: minimodem at <paramref name="baud"/> with mark 2400 Hz and space 1200 Hz
    /// (8 data bits, no parity, one start bit, <paramref name="stopBits"/> stop bits), after a lead-in of mark tone.
    /// </summary>
    public static string Write(string folder, string name, int baud, int sampleRate, int stopBits, double amplitude = 1.0)
    {
        string invariant(double x) => x.ToString(CultureInfo.InvariantCulture);
        string tones = WriteTones(folder, name, baud, sampleRate, stopBits, amplitude);
        string leadIn = Path.Combine(folder, $"{name}.lead-in.wav");
        OutsideTool.Sox("-n", "-r", invariant(sampleRate), "-b", "16", "-c", "1", leadIn,
            "synth", invariant(LeadInSeconds), "sine", "2400", "vol", invariant(Math.Min(amplitude, 0.99)));
        string capture = Path.Combine(folder, $"{name}.wav");
        OutsideTool.Sox(leadIn, tones, capture);
        return capture;
    }

    /// <summary>
    /// Writes <paramref name="path"/>: minimodem alone sending <paramref name="written"/> at <paramref name="baud"/> with
    /// two stop bits, no lead-in added. Outside reference: minimodem's own receiver, told of the two stop bits, reads the
    /// bytes it was given back from the file it wrote.
    /// </summary>
    public static void WriteRun(string path, int baud, int sampleRate, byte[] written)
    {
        string bits = baud.ToString(CultureInfo.InvariantCulture);
        OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--tx", bits, "--mark", "2400", "--space", "1200", "--stopbits", "2", "-R", sampleRate.ToString(CultureInfo.InvariantCulture), "-f", path],
            written);
        var received = OutsideTool.Run(OutsideTool.MinimodemPath, ["--rx", bits, "--mark", "2400", "--space", "1200", "--stopbits", "2", "--quiet", "-f", path]);
        Assert.Equal(Hex(written), Hex(Encoding.Latin1.GetBytes(received.StandardOutput)));
    }

    /// <summary>
    /// Writes what minimodem alone sends for the text, with no lead-in added: <paramref name="name"/>.minimodem.wav,
    /// checked as <see cref="Write"/> describes.
    /// </summary>
    public static string WriteTones(string folder, string name, int baud, int sampleRate, int stopBits, double amplitude = 1.0)
    {
        string invariant(double x) => x.ToString(CultureInfo.InvariantCulture);
        string tones = Path.Combine(folder, $"{name}.minimodem.wav");
        OutsideTool.Run(
            OutsideTool.MinimodemPath,
            ["--tx", invariant(baud), "--mark", "2400", "--space", "1200", "--stopbits", invariant(stopBits),
             "--volume", invariant(amplitude), "-R", invariant(sampleRate), "-f", tones],
            Text);

        // The file minimodem wrote is what was asked for: SoX reads it as 16-bit PCM, mono, at the rate given; its
        // length is the text's frames (1 start + 8 data + stop bits each) plus minimodem's few bits of leader and
        // trailer, which tells one stop bit from two; and minimodem's own receiver reads the text back from it.
        // minimodem makes every bit a whole number of samples (37 at 1200 baud and 44.1 kHz, so it really sends
        // 1191.9 baud there, with exact tones): the length is counted in those.
        Assert.Equal(sampleRate, OutsideTool.SoxSampleRate(tones));
        Assert.Equal(1, OutsideTool.SoxChannels(tones));
        Assert.Equal("16", OutsideTool.SoxInfo("-b", tones));
        Assert.Equal("Signed Integer PCM", OutsideTool.SoxInfo("-e", tones));
        long frames = Text.Length * (1 + 8 + stopBits);
        long samplesPerBit = (long)Math.Round((double)sampleRate / baud);
        long samples = long.Parse(OutsideTool.SoxInfo("-s", tones), CultureInfo.InvariantCulture);
        Assert.Equal(0, samples % samplesPerBit);
        Assert.InRange((samples / samplesPerBit) - frames, 0, 8);
        Assert.Equal(Hex(Text), Hex(OutsideTool.MinimodemReceive(tones, baud)));
        return tones;
    }

    /// <summary>Seconds per character frame.</summary>
    public static double FrameSeconds(int baud, int stopBits) => (1.0 + 8 + stopBits) / baud;

    public static string Hex(ReadOnlySpan<byte> bytes) => Convert.ToHexStringLower(bytes);

    private static byte[] BuildText()
    {
        var text = new StringBuilder();
        text.Append("TAPEVAULT OUTSIDE CHECK: KANSAS CITY STANDARD TONES FROM MINIMODEM\n");
        for (int c = 0x20; c <= 0x7E; c++)
        {
            text.Append((char)c);
        }

        text.Append('\n');
        for (int c = 0x7E; c >= 0x20; c--)
        {
            text.Append((char)c);
        }

        text.Append("\nThe quick brown fox jumps over the lazy dog. 0123456789\n");
        return Encoding.ASCII.GetBytes(text.ToString());
    }
}
