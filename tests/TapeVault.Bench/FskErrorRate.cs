using System.Diagnostics;
using TapeVault.Core.Blocks;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Symbols;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// Bit error rate of the FSK detector against Eb/N0, beside the textbook curve for non-coherent binary FSK,
/// Pb = ½·exp(−Eb/2N0) (Proakis, Digital Communications). Noise is the channel model's additive white Gaussian
/// noise: with signal power P and sample rate fs, Eb = P/baud and N0 = 2σ²/fs, so SNR = 2·(Eb/N0)·baud/fs.
/// Errors are counted on the data bits of each written byte against the decoded byte found at its time; a byte the
/// decoder did not find at all counts as four errors, the expectation of a guess.
/// </summary>
public static class FskErrorRate
{
    private const int SampleRate = 44_100;

    public static void Run()
    {
        var profile = ProfileCatalog.BuiltIn.Get("kcs-1200");
        var fsk = profile.Fsk!;
        Console.WriteLine($"FSK bit error rate against Eb/N0 ({profile.Id}: {fsk.Baud} baud, {fsk.SpaceHz}/{fsk.MarkHz} Hz, line output, deck band 3 kHz)");
        Console.WriteLine($"{"Eb/N0 dB",9} {"bits",9} {"errors",8} {"lost bytes",10} {"BER",10} {"theory",10}");
        var stopwatch = Stopwatch.StartNew();
        var measured = new List<(double Db, double Ber)>();
        for (int db = 2; db <= 12; db++)
        {
            // Enough bits for about a hundred errors, and at least 2·10^5 so that BER 1e-4 is resolved.
            double theory = 0.5 * Math.Exp(-Math.Pow(10, db / 10.0) / 2);
            int bytes = (int)Math.Clamp(100 / theory / 8, 25_000, 200_000);
            var (bits, errors, lost) = Measure(profile, db, bytes, seed: 100 + db);
            double ber = (double)errors / bits;
            measured.Add((db, ber));
            Console.WriteLine($"{db,9} {bits,9} {errors,8} {lost,10} {ber,10:0.00e0} {theory,10:0.00e0}");
        }

        double theoryAt = 10 * Math.Log10(2 * Math.Log(0.5 / 1e-3));
        double measuredAt = Interpolate(measured, 1e-3);
        Console.WriteLine($"At BER 1e-3: theory {theoryAt:0.00} dB, measured {measuredAt:0.00} dB, gap {measuredAt - theoryAt:0.00} dB (goal: within 1.5 dB). {stopwatch.Elapsed.TotalSeconds:0} s.");
        Console.WriteLine();
    }

    private static (long Bits, long Errors, int Lost) Measure(FormatProfile profile, double ebN0Db, int byteCount, int seed)
    {
        var random = new Random(seed);
        var payload = new byte[byteCount];
        random.NextBytes(payload);
        var blocks = BlockWriter.Blocks(profile, [new TapeFile("BER", payload)]);
        var fsk = profile.Fsk!;
        double snrDb = ebN0Db + 10 * Math.Log10(2 * fsk.Baud / SampleRate);
        var damage = new ChannelDamage { SampleRate = SampleRate, SnrDb = snrDb, DeckLowPassHz = 3000, Seed = seed };
        var model = CaptureSynthesizer.Model(profile, blocks, damage, out _);

        // One setting: the detector itself, not the bank's choice among settings.
        var setting = new DetectorSetting("ber", 30, 3500, differentiate: false, invert: false, ThresholdMode.Relative, 0.2, EdgeSelection.Rising);
        var candidates = new List<BlockCandidate>();
        var session = new TapeVault.Core.Decoding.CaptureDecoder.DecodeSession(profile, [setting], SampleRate);
        var chunk = new float[16_384];
        int count;
        while ((count = model.Render(chunk)) > 0)
        {
            session.Process(chunk.AsSpan(0, count));
        }

        candidates.AddRange(session.Finish());

        // Written byte k starts (tape time) after the lead-in, one frame of 11 bits per byte.
        double frame = profile.Framing.BitsPerByte / fsk.Baud;
        double start = damage.MarginSeconds + profile.Recording.LeadInSeconds;
        start = Math.Ceiling(profile.Recording.LeadInSeconds * fsk.Baud) / fsk.Baud + damage.MarginSeconds;
        var found = new int[byteCount];
        Array.Fill(found, -1);
        foreach (var block in candidates)
        {
            for (int i = 0; i < block.Payload.Length; i++)
            {
                double t = block.ByteSeconds[i];
                int k = (int)Math.Round((t - start) / frame);
                if (k >= 0 && k < byteCount && Math.Abs(t - (start + k * frame)) < 0.4 * frame && found[k] < 0)
                {
                    found[k] = block.Payload[i];
                }
            }
        }

        long errors = 0;
        int lost = 0;
        for (int k = 0; k < byteCount; k++)
        {
            if (found[k] < 0)
            {
                lost++;
                errors += 4;
            }
            else
            {
                errors += System.Numerics.BitOperations.PopCount((uint)(found[k] ^ payload[k]));
            }
        }

        return ((long)byteCount * 8, errors, lost);
    }

    /// <summary>The Eb/N0 where the measured curve crosses <paramref name="ber"/>, interpolating log BER linearly in dB.</summary>
    private static double Interpolate(List<(double Db, double Ber)> points, double ber)
    {
        for (int i = 1; i < points.Count; i++)
        {
            var (d0, b0) = points[i - 1];
            var (d1, b1) = points[i];
            if (b0 >= ber && b1 < ber && b1 > 0)
            {
                double f = (Math.Log(b0) - Math.Log(ber)) / (Math.Log(b0) - Math.Log(b1));
                return d0 + f * (d1 - d0);
            }
        }

        return double.NaN;
    }
}
