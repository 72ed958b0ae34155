using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Synthesis;

/// <summary>A temporary folder for one test class of synthesised captures, deleted afterwards.</summary>
public sealed class SynthesisFolder : IDisposable
{
    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-synthesis-").FullName;

    public string File(string name) => Path.Combine(Root, name);

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

/// <summary>Playback speed, wow and the seed do what the damage record says.</summary>
public sealed class SpeedAndDeterminismTests(SynthesisFolder folder) : IClassFixture<SynthesisFolder>
{
    private static readonly TapeFile[] Files = [new("SEED", [.. Enumerable.Range(0, 60).Select(i => unchecked((byte)(i * 37)))])];

    [Theory]
    [InlineData(1.03)]
    [InlineData(0.97)]
    public void Tape_time_advances_at_the_playback_speed(double speed)
    {
        var model = new ChannelModel([0.0, 1.0], new ChannelDamage { Speed = speed }, 1.0);

        Assert.Equal(0, model.TapeTime(0.2), 12);
        Assert.Equal(speed * 0.5, model.TapeTime(0.7) - model.TapeTime(0.2), 12);
        Assert.Equal(speed * 0.3, model.TapeTime(1.0) - model.TapeTime(0.7), 12);
    }

    [Fact]
    public void A_fast_deck_plays_the_same_tape_in_proportionally_less_time()
    {
        var nominal = new ChannelModel([0.0, 10.0], new ChannelDamage { MarginSeconds = 0 }, 10.0);
        var fast = new ChannelModel([0.0, 10.0], new ChannelDamage { MarginSeconds = 0, Speed = 1.03 }, 10.0);

        // The sample count is rounded up to a whole sample.
        Assert.InRange(fast.TotalSamples, nominal.TotalSamples / 1.03, nominal.TotalSamples / 1.03 + 1);
    }

    [Fact]
    public void Wow_swings_the_instantaneous_speed_by_its_peak_percentage()
    {
        var model = new ChannelModel([0.0, 10.0], new ChannelDamage { WowPercent = 0.3, WowHz = 0.5 }, 10.0);
        double dt = 1e-4;
        double fastest = double.MinValue, slowest = double.MaxValue, sum = 0;
        int steps = 0;
        for (double t = 0.2; t < 2.2; t += dt)
        {
            double rate = (model.TapeTime(t + dt) - model.TapeTime(t)) / dt;
            fastest = Math.Max(fastest, rate);
            slowest = Math.Min(slowest, rate);
            sum += rate;
            steps++;
        }

        // Peak deviation ±0.3 % around the mean speed over one whole wow period.
        Assert.Equal(1.003, fastest, 5);
        Assert.Equal(0.997, slowest, 5);
        Assert.Equal(1, sum / steps, 5);
    }

    [Fact]
    public void The_same_seed_writes_byte_identical_captures()
    {
        var damage = Damaged(seed: 5);
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");

        CaptureSynthesizer.Write(folder.File("a.wav"), profile, Files, damage);
        CaptureSynthesizer.Write(folder.File("b.wav"), profile, Files, damage);

        Assert.Equal(File.ReadAllBytes(folder.File("a.wav")), File.ReadAllBytes(folder.File("b.wav")));
    }

    [Fact]
    public void Different_seeds_write_different_captures_of_the_same_length()
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");

        CaptureSynthesizer.Write(folder.File("s1.wav"), profile, Files, Damaged(seed: 1));
        CaptureSynthesizer.Write(folder.File("s2.wav"), profile, Files, Damaged(seed: 2));

        var one = File.ReadAllBytes(folder.File("s1.wav"));
        var two = File.ReadAllBytes(folder.File("s2.wav"));
        Assert.Equal(one.Length, two.Length);
        Assert.NotEqual(one, two);
    }

    [Fact]
    public void Without_noise_or_random_dropouts_the_seed_changes_nothing()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");

        CaptureSynthesizer.Write(folder.File("q1.wav"), profile, Files, new ChannelDamage { Seed = 1, WowPercent = 0.2 });
        CaptureSynthesizer.Write(folder.File("q2.wav"), profile, Files, new ChannelDamage { Seed = 2, WowPercent = 0.2 });

        Assert.Equal(File.ReadAllBytes(folder.File("q1.wav")), File.ReadAllBytes(folder.File("q2.wav")));
    }

    [Fact]
    public void The_noise_is_set_from_the_measured_signal_level_and_the_snr()
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        var blocks = BlockWriter.Blocks(profile, Files);
        var damage = new ChannelDamage { SnrDb = 20 };

        var model = CaptureSynthesizer.Model(profile, blocks, damage, out double tapeSeconds);
        double rms = CaptureSynthesizer.MeasureCleanRms(profile, blocks, damage, tapeSeconds);

        // SNR in dB = 20·log10(signal RMS / noise RMS), the usual definition (common practice).
        Assert.Equal(20, 20 * Math.Log10(rms / model.NoiseSigma), 9);
    }

    [Fact]
    public void The_ground_truth_returned_is_the_block_writers_layout()
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");

        var capture = CaptureSynthesizer.Write(folder.File("truth.wav"), profile, Files, new ChannelDamage());

        Assert.Equal(BlockWriter.Blocks(profile, Files), capture.Blocks);
        Assert.True(capture.TapeSeconds > profile.Recording.LeadInSeconds);
    }

    private static ChannelDamage Damaged(int seed) => new()
    {
        SnrDb = 20,
        RandomDropoutsPerMinute = 20,
        WowPercent = 0.2,
        Seed = seed,
    };
}
