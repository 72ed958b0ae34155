using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using Xunit;

namespace TapeVault.Core.Tests.Detection;

/// <summary>The scalar trace drawn on the capture page must be the bank's chain: the same edges, at the same times.</summary>
public sealed class DetectorTraceTests
{
    private const int SampleRate = 44_100;

    public static TheoryData<int> DefaultSettings()
    {
        var data = new TheoryData<int>();
        for (int i = 0; i < DetectorBanks.Default.Count; i++)
        {
            data.Add(i);
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(DefaultSettings))]
    public void The_trace_counts_the_same_edges_as_the_bank_on_a_noisy_pulse_train(int settingIndex)
    {
        var setting = DetectorBanks.Default[settingIndex];
        float[] signal = NoisyPulseTrain(seconds: 0.6);

        // The bank in chunks that do not line up with its internal slices, with a neighbour setting in the same lane group.
        var bank = new DetectorBank([setting, DetectorBanks.Default[(settingIndex + 1) % DetectorBanks.Default.Count]], SampleRate);
        var buffers = new[] { new EdgeBuffer(), new EdgeBuffer() };
        var bankEdges = new List<Edge>();
        for (int offset = 0; offset < signal.Length; offset += 5000)
        {
            buffers[0].Clear();
            buffers[1].Clear();
            bank.Process(signal.AsSpan(offset, Math.Min(5000, signal.Length - offset)), buffers);
            bankEdges.AddRange(buffers[0].Items.ToArray());
        }

        var trace = DetectorTrace.Run(signal, SampleRate, setting);

        Assert.True(bankEdges.Count > 200, $"only {bankEdges.Count} edges");
        Assert.Equal(bankEdges.Count, trace.Edges.Length);
        for (int i = 0; i < bankEdges.Count; i++)
        {
            Assert.Equal(bankEdges[i].Rising, trace.Edges[i].Rising);

            // The bank keeps crossing times in single precision within 4096-sample slices (1/2048 sample apart at worst).
            Assert.Equal(bankEdges[i].Sample, trace.Edges[i].Sample, 1e-3);
            Assert.Equal(bankEdges[i].Level, trace.Edges[i].Level);
        }
    }

    [Fact]
    public void The_trigger_goes_high_only_above_the_band_and_low_only_below_its_negative()
    {
        var setting = DetectorBanks.Default[0];
        var trace = DetectorTrace.Run(NoisyPulseTrain(seconds: 0.2), SampleRate, setting, firstSample: 1000);
        int switches = 0;
        for (int n = 1; n < trace.High.Length; n++)
        {
            if (trace.High[n] != trace.High[n - 1])
            {
                switches++;
                Assert.True(trace.High[n] ? trace.Conditioned[n] > trace.Band[n] : trace.Conditioned[n] < -trace.Band[n]);
            }
        }

        Assert.True(switches > 100);

        // Rising-edge setting: one counted edge per upward switch, timed in capture samples (after firstSample).
        Assert.All(trace.Edges, e => Assert.True(e.Rising && e.Sample >= 1000));
    }

    /// <summary>Cycles of 320 and 640 µs (two pulse classes) with a level change, a dropout and noise; seeded, so repeatable.</summary>
    private static float[] NoisyPulseTrain(double seconds)
    {
        var signal = new float[(int)(seconds * SampleRate)];
        var random = new Random(6);
        double phase = 0;
        double period = 320e-6;
        for (int n = 0; n < signal.Length; n++)
        {
            phase += 1.0 / SampleRate / period;
            if (phase >= 1)
            {
                phase -= 1;
                period = random.Next(2) == 0 ? 320e-6 : 640e-6;
            }

            double level = n < signal.Length / 2 ? 0.6 : 0.25;
            bool dropout = n > signal.Length * 0.7 && n < signal.Length * 0.72;
            signal[n] = (float)(((dropout ? 0.02 : level) * Math.Sin(2 * Math.PI * phase)) + ((random.NextDouble() - 0.5) * 0.04) + 0.05);
        }

        return signal;
    }
}
