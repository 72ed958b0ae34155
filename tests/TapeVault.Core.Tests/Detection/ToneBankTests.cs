using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Detection;

/// <summary>
/// The tone correlators of every FSK setting run four to a vector inside the bank's pass; the scalar correlator is
/// their reference, and the FSK decoder's decisions hang on every bit of the energies, so the two must agree exactly.
/// </summary>
public sealed class ToneBankTests
{
    private const int SampleRate = 44_100;

    [Fact]
    public void The_bank_lanes_give_bit_for_bit_the_energies_of_the_scalar_correlator_for_every_setting()
    {
        // The FSK bank of the Kansas City Standard's tones (1 = 2400 Hz, 0 = 1200 Hz) at 1200 baud, with a fifth setting
        // so that a second group of four lanes is partly used.
        var fsk = ProfileCatalog.BuiltIn.Get("kcs-1200").Fsk!;
        var settings = CaptureDecoder.BankFor(ProfileCatalog.BuiltIn.Get("kcs-1200"), DetectorBanks.Default).ToList();
        settings.Add(new DetectorSetting("wide", 15, 12000, differentiate: false, invert: true, ThresholdMode.Relative, 0.3, EdgeSelection.Both));
        float[] signal = NoisyFsk(seconds: 0.5, fsk.MarkHz, fsk.SpaceHz, fsk.Baud);

        var bank = new DetectorBank(settings, SampleRate);
        var tones = new ToneBank(settings.Count, fsk.MarkHz, fsk.SpaceHz, fsk.Baud, SampleRate);
        var edges = settings.Select(_ => new EdgeBuffer()).ToArray();
        var energies = new ToneEnergies(settings.Count, 5000);
        var scalar = settings.Select(_ => new ToneCorrelator(fsk.MarkHz, fsk.SpaceHz, fsk.Baud, SampleRate)).ToArray();
        var gates = settings.Select(_ => new ToneGate(tones.Window, SampleRate)).ToArray();
        var answers = new int[8];
        var conditioned = settings.Select(s => DetectorTrace.Run(signal, SampleRate, s).Conditioned).ToArray();

        // Chunks that do not line up with the bank's internal slices; the oscillators are renormalised after each.
        int compared = 0;
        for (int offset = 0; offset < signal.Length; offset += 5000)
        {
            int length = Math.Min(5000, signal.Length - offset);
            bank.Process(signal.AsSpan(offset, length), edges, tones, energies);
            for (int s = 0; s < settings.Count; s++)
            {
                var lane = energies.Lane(s, length);
                for (int n = 0; n < length; n++)
                {
                    scalar[s].Next(conditioned[s][offset + n], out double mark, out double space);
                    Assert.Equal(mark, lane.Mark(n));
                    Assert.Equal(space, lane.Space(n));
                    int answer = gates[s].Next(mark, space);
                    Assert.Equal(answer, lane.Gate(n));
                    answers[answer]++;
                    compared++;
                }

                scalar[s].Renormalise();
            }
        }

        Assert.Equal(signal.Length * settings.Count, compared);

        // The signal holds windows of each kind the gate tells apart: no carrier (in its dropout), carrier with
        // both tones, mark alone, space alone.
        Assert.All(new[] { 0, ToneGate.Carrier, ToneGate.Carrier | ToneGate.PureMark, ToneGate.Carrier | ToneGate.PureSpace }, a => Assert.True(answers[a] > 0, $"no window answered {a}"));
    }

    [Fact]
    public void At_300_baud_a_sparse_bank_reads_every_fourth_window_and_gives_bit_for_bit_the_scalar_correlator_s_energies_there()
    {
        // 300 baud at 44.1 kHz: a window of 147 samples, read every fourth sample (147 / 32 = 4). Reading r is the
        // window that ends at sample 4r + 3, whatever the chunks (here of an odd length, so that they begin at every
        // phase of the stride); the gate runs on the windows read, its reference at the rate they are read.
        var profile = ProfileCatalog.BuiltIn.Get("kcs-300");
        var fsk = profile.Fsk!;
        var settings = CaptureDecoder.BankFor(profile, DetectorBanks.Default);
        float[] signal = NoisyFsk(seconds: 0.5, fsk.MarkHz, fsk.SpaceHz, fsk.Baud);

        var bank = new DetectorBank(settings, SampleRate);
        var tones = new ToneBank(settings.Count, fsk.MarkHz, fsk.SpaceHz, fsk.Baud, SampleRate, ToneCorrelator.StrideFor(fsk.Baud, SampleRate));
        Assert.Equal(147, tones.Window);
        Assert.Equal(4, tones.Stride);
        var edges = settings.Select(_ => new EdgeBuffer()).ToArray();
        const int chunk = 4999;
        var energies = new ToneEnergies(settings.Count, chunk);
        var scalar = settings.Select(_ => new ToneCorrelator(fsk.MarkHz, fsk.SpaceHz, fsk.Baud, SampleRate)).ToArray();
        var gates = settings.Select(_ => new ToneGate(tones.Window, SampleRate / 4.0)).ToArray();
        var conditioned = settings.Select(s => DetectorTrace.Run(signal, SampleRate, s).Conditioned).ToArray();

        long readings = 0;
        for (int offset = 0; offset < signal.Length; offset += chunk)
        {
            int length = Math.Min(chunk, signal.Length - offset);
            bank.Process(signal.AsSpan(offset, length), edges, tones, energies);
            Assert.Equal(readings, energies.FirstReading);
            for (int s = 0; s < settings.Count; s++)
            {
                var lane = energies.Lane(s);
                int r = 0;
                for (int n = offset; n < offset + length; n++)
                {
                    scalar[s].Next(conditioned[s][n], out double mark, out double space);
                    if ((n + 1) % 4 != 0)
                    {
                        continue;
                    }

                    Assert.Equal(mark, lane.Mark(r));
                    Assert.Equal(space, lane.Space(r));
                    Assert.Equal(gates[s].Next(mark, space), lane.Gate(r));
                    r++;
                }

                Assert.Equal(energies.Readings, r);
                scalar[s].Renormalise();
            }

            readings += energies.Readings;
        }

        Assert.Equal(signal.Length / 4, readings);
    }

    [Fact]
    public void A_pure_tone_gives_the_energy_of_a_sinusoid_in_its_own_correlator_and_almost_none_in_the_other()
    {
        // A sinusoid of amplitude A over a window of W samples at its own frequency gives |X| = A·W/2 (the DFT of a
        // sinusoid, any DSP textbook, e.g. Oppenheim and Schafer); 2400 Hz over a window of 37 samples (1200 baud) holds
        // about two cycles, and the other tone's correlator sees about none of it.
        var correlator = new ToneCorrelator(2400, 1200, 1200, SampleRate);
        double mark = 0, space = 0;
        const double amplitude = 0.5;
        for (int n = 0; n < 2000; n++)
        {
            correlator.Next((float)(amplitude * Math.Sin(2 * Math.PI * 2400 * n / SampleRate)), out mark, out space);
        }

        double expected = Math.Pow(amplitude * correlator.Window / 2, 2);
        Assert.Equal(37, correlator.Window);
        Assert.InRange(mark, expected * 0.9, expected * 1.1);
        Assert.True(space < expected * 0.05, $"space energy {space} against mark {mark}");
    }

    /// <summary>Random bits in the two tones, phase-continuous, with a level change, noise and a dropout of 50 ms; seeded, so repeatable.</summary>
    private static float[] NoisyFsk(double seconds, double markHz, double spaceHz, double baud)
    {
        var signal = new float[(int)(seconds * SampleRate)];
        var random = new Random(9);
        double phase = 0;
        bool mark = true;
        int bitSamples = (int)(SampleRate / baud);
        for (int n = 0; n < signal.Length; n++)
        {
            if (n % bitSamples == 0)
            {
                mark = random.Next(2) == 0;
            }

            phase += 2 * Math.PI * (mark ? markHz : spaceHz) / SampleRate;
            double level = n < signal.Length / 2 ? 0.6 : 0.2;
            bool dropout = n >= 0.3 * SampleRate && n < 0.35 * SampleRate;
            signal[n] = dropout ? 0 : (float)((level * Math.Sin(phase)) + ((random.NextDouble() - 0.5) * 0.1));
        }

        return signal;
    }
}
