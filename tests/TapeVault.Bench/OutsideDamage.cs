using System.Diagnostics;
using System.Globalization;
using TapeVault.Core.Formats;
using TapeVault.Tests.Shared;

namespace TapeVault.Bench;

/// <summary>
/// Damage and captures made by programs that share no code with TapeVault: SoX (a general-purpose audio tool) runs
/// effect chains drawn from a seed over a capture, and minimodem (a general-purpose software FSK modem) writes FSK
/// captures of its own. They are the outside reference of the trust benchmark: our channel model did not make this
/// damage, so a decoder tuned on our model meets it untuned.
/// </summary>
public static class OutsideDamage
{
    public const string SoxPath = "/usr/bin/sox";
    public const string MinimodemPath = "/usr/bin/minimodem";

    private static string F(double x) => x.ToString("0.####", CultureInfo.InvariantCulture);

    /// <summary>
    /// A SoX effect chain drawn from <paramref name="rng"/> with wide parameters: filters (sinc band-pass, low-pass,
    /// high-pass, a peaking equaliser), a speed change, inversion, a gain that may drive the signal past full scale
    /// (SoX then clips), a channel remix (a dead channel), a new sample rate, and the output's bits with or without
    /// dither. Returns SoX's arguments after the input and output file and a one-line description.
    /// </summary>
    public static (List<string> Output, List<string> Effects, string Description) SoxChain(Random rng, int channels, int sampleRate)
    {
        var effects = new List<string>();
        int rate = sampleRate;

        // Outside reference: every effect here is SoX's own (sox(1)); the values are drawn, not tuned.
        if (rng.NextDouble() < 0.4)
        {
            double low = 20 + (rng.NextDouble() * 380);
            double high = Math.Min(3000 + (rng.NextDouble() * 9000), 0.45 * rate);
            effects.AddRange(["sinc", $"{F(low)}-{F(high)}"]);
        }

        if (rng.NextDouble() < 0.4)
        {
            // One pole (-1) or two (the default): a gentle or a steeper deck roll-off.
            effects.AddRange(rng.NextDouble() < 0.5 ? ["lowpass", "-1", F(Math.Min(2500 + (rng.NextDouble() * 9500), 0.45 * rate))] : ["lowpass", F(Math.Min(2500 + (rng.NextDouble() * 9500), 0.45 * rate))]);
        }

        if (rng.NextDouble() < 0.4)
        {
            effects.AddRange(["highpass", F(20 + (rng.NextDouble() * 480))]);
        }

        if (rng.NextDouble() < 0.4)
        {
            effects.AddRange(["equalizer", F(300 + (rng.NextDouble() * 4700)), $"{F(0.5 + (rng.NextDouble() * 1.5))}q", F(-12 + (rng.NextDouble() * 18))]);
        }

        if (rng.NextDouble() < 0.5)
        {
            effects.AddRange(["speed", F(0.93 + (rng.NextDouble() * 0.14))]);
        }

        if (rng.NextDouble() < 0.5)
        {
            effects.AddRange(["vol", "-1"]);
        }

        double gain = rng.NextDouble() < 0.25 ? rng.NextDouble() * 15 : -20 + (rng.NextDouble() * 22);
        effects.AddRange(["gain", F(gain)]);
        if (rng.NextDouble() < 0.3)
        {
            // A remix to stereo with one channel dead, or to the other channel of a stereo capture.
            effects.AddRange(channels == 1
                ? ["remix", .. (rng.NextDouble() < 0.5 ? new[] { "1", "0" } : ["0", "1"])]
                : ["remix", rng.NextDouble() < 0.5 ? "1" : "2"]);
        }

        if (rng.NextDouble() < 0.5)
        {
            rate = Core.Synthesis.RandomDamage.SampleRates[rng.Next(Core.Synthesis.RandomDamage.SampleRates.Count)];
            effects.AddRange(["rate", rate.ToString(CultureInfo.InvariantCulture)]);
        }

        int bits = rng.NextDouble() switch
        {
            < 0.2 => 8,
            < 0.8 => 16,
            _ => 24,
        };
        if (rng.NextDouble() < 0.5)
        {
            effects.AddRange(rng.NextDouble() < 0.5 ? ["dither"] : ["dither", "-s"]);
        }

        List<string> output = ["-b", bits.ToString(CultureInfo.InvariantCulture)];
        return (output, effects, $"sox {string.Join(' ', effects)} -> {bits}-bit");
    }

    /// <summary>Runs SoX (with -R, its repeatable random numbers, and -V1, errors only) over <paramref name="input"/>.</summary>
    public static void ApplySox(string input, string output, IReadOnlyList<string> outputOptions, IReadOnlyList<string> effects) =>
        Run(SoxPath, ["-R", "-V1", input, .. outputOptions, output, .. effects]);

    /// <summary>Mixes <paramref name="noise"/> into <paramref name="signal"/> with SoX (-m, each input at volume 1: summed, not scaled down).</summary>
    public static void Mix(string signal, string noise, string output) =>
        Run(SoxPath, ["-R", "-V1", "-m", "-v", "1", signal, "-v", "1", noise, output]);

    /// <summary>
    /// Whether minimodem writes the profile's captures: any FSK profile of one copy a block. Characters of one start bit
    /// 0, eight data bits LSB first and no parity, after a lead-in of mark tone, are minimodem's own framing; any other
    /// framing, or a lead-in of repeated characters, minimodem writes from raw bits (<see cref="FramedBits"/>).
    /// </summary>
    public static bool MinimodemWrites(FormatProfile profile) => profile.Fsk is not null && profile.Layout.Copies == 1;

    /// <summary>Whether minimodem's own framing (start bit 0, eight data bits LSB first, no parity) is the profile's.</summary>
    private static bool MinimodemFrames(FormatProfile profile) =>
        profile.Framing.StartBits == "0" && profile.Framing.DataBits == 8 && profile.Framing.BitOrder == BitOrder.LsbFirst && profile.Framing.Parity == Parity.None
        && profile.Fsk?.LeadInCharacters is null;

    /// <summary>
    /// Characters of a lead-in of repeated characters that minimodem writes before each block: twice the count a reader
    /// needs, as a tape writer that pads its leader would (a value of the bench's own, not a format's rule).
    /// </summary>
    public static int LeaderCharacters(FormatProfile profile) => 2 * (profile.Fsk?.LeadInCharacters?.MinimumCount ?? 0);

    /// <summary>
    /// One character framed as the profile's framing declares it, written here apart from the decoder's code: the start
    /// bits as given, the data bits in the declared order, a parity bit that makes the count of ones even (or odd), the
    /// stop bits as given (asynchronous serial framing, common practice). '1' is mark.
    /// </summary>
    public static void FramedBits(ByteFraming framing, byte value, System.Text.StringBuilder bits)
    {
        bits.Append(framing.StartBits);
        int ones = 0;
        for (int i = 0; i < framing.DataBits; i++)
        {
            int bit = framing.BitOrder == BitOrder.LsbFirst ? (value >> i) & 1 : (value >> (framing.DataBits - 1 - i)) & 1;
            ones += bit;
            bits.Append(bit == 1 ? '1' : '0');
        }

        if (framing.Parity != Parity.None)
        {
            bool even = ones % 2 == 0;
            bits.Append((framing.Parity == Parity.Even) == even ? '0' : '1');
        }

        bits.Append(framing.StopBits);
    }

    /// <summary>
    /// An FSK capture written by minimodem (outside reference: Debian's software FSK modem). Each block goes through
    /// <c>minimodem --tx</c> on its own, with the profile's tones and baud and its stop bits, and SoX puts mark tone
    /// before each (a lead-in of <paramref name="leadInSeconds"/>, then the profile's block gap) and after the last,
    /// as a tape writer would (the same gap between every two blocks); minimodem's own phase restarts at each block. For a
    /// stream the "blocks" are the files.
    /// </summary>
    public static void MinimodemCapture(string path, FormatProfile profile, IReadOnlyList<byte[]> blocks, int sampleRate, double leadInSeconds, double volume)
    {
        var fsk = profile.Fsk ?? throw new ArgumentException("minimodem writes FSK profiles only.", nameof(profile));
        if (!MinimodemWrites(profile))
        {
            throw new ArgumentException("minimodem writes FSK profiles of one copy a block.", nameof(profile));
        }

        string folder = Path.GetDirectoryName(path)!;
        string stem = Path.GetFileNameWithoutExtension(path);
        string r = sampleRate.ToString(CultureInfo.InvariantCulture);
        var parts = new List<string>();
        string Tone(string name, double seconds)
        {
            string tone = Path.Combine(folder, $"{stem}.{name}.wav");
            Run(SoxPath, ["-R", "-V1", "-n", "-r", r, "-b", "16", "-c", "1", tone, "synth", F(seconds), "sine", F(fsk.MarkHz), "vol", F(volume)]);
            return tone;
        }

        string? gap = null;
        for (int b = 0; b < blocks.Count; b++)
        {
            if (b == 0)
            {
                if (leadInSeconds > 0)
                {
                    parts.Add(Tone("lead-in", leadInSeconds));
                }
            }
            else
            {
                gap ??= Tone("gap", profile.Recording.BlockGapSeconds);
                parts.Add(gap);
            }

            string tones = Path.Combine(folder, $"{stem}.block{b}.wav");
            if (MinimodemFrames(profile))
            {
                Run(MinimodemPath, ["--tx", F(fsk.Baud), "--mark", F(fsk.MarkHz), "--space", F(fsk.SpaceHz), "--stopbits", profile.Framing.StopBits.Length.ToString(CultureInfo.InvariantCulture),
                    "--volume", F(volume), "-R", r, "-f", tones], blocks[b]);
            }
            else
            {
                // Outside reference: minimodem writes the tones of raw bits framed here (the leader's characters, then the block's).
                var bits = new System.Text.StringBuilder();
                if (fsk.LeadInCharacters is { } leader)
                {
                    for (int i = 0; i < LeaderCharacters(profile); i++)
                    {
                        FramedBits(profile.Framing, (byte)leader.Character, bits);
                    }
                }

                foreach (byte value in blocks[b])
                {
                    FramedBits(profile.Framing, value, bits);
                }

                Run(MinimodemPath, ["--tx", F(fsk.Baud), "--mark", F(fsk.MarkHz), "--space", F(fsk.SpaceHz), "--startbits", "0", "--stopbits", "0",
                    "--volume", F(volume), "-R", r, "-f", tones], MinimodemRawBits.Pack(bits));
            }

            parts.Add(tones);
        }

        parts.Add(Tone("trailer", profile.Recording.TrailerSeconds));
        Run(SoxPath, ["-V1", .. parts, path]);
        foreach (string part in parts.Distinct())
        {
            File.Delete(part);
        }
    }

    private static void Run(string program, IReadOnlyList<string> arguments, byte[]? input = null)
    {
        var start = new ProcessStartInfo(program)
        {
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        foreach (string argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException($"Could not start {program}.");
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (input is not null)
        {
            process.StandardInput.BaseStream.Write(input);
        }

        process.StandardInput.Close();
        if (!process.WaitForExit(120_000))
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{program} did not finish within 120 s.");
        }

        process.WaitForExit();
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"{program} {string.Join(' ', arguments)} exited with {process.ExitCode}: {stderr.Result}");
        }

        _ = stdout.Result;
    }
}
