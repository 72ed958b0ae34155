using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;

namespace TapeVault.Core.Tests.Decoding;

/// <summary>
/// The decode pipeline (the bank on the reading thread, the settings' decoders shared between two workers): it stops
/// when asked, and gives the same result as one thread.
/// </summary>
public sealed class DecodePipelineTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    [Fact]
    public async Task Decode_StopsWithOperationCanceled_WhenCancelledPartWay()
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        string path = folder.NewCapture("cancel");
        CaptureSynthesizer.Write(path, profile, RoundTrips.Files(profile), new ChannelDamage());
        using var cancel = new CancellationTokenSource();
        var options = new DecodeOptions
        {
            ChunkSamples = 1024,
            Cancellation = cancel.Token,
            Progress = new CancelAt(0.3, cancel),
        };

        var decode = Task.Run(() => CaptureDecoder.Decode(path, profile, options: options));

        var finished = await Task.WhenAny(decode, Task.Delay(TimeSpan.FromSeconds(30)));
        Assert.Same(decode, finished);
        await Assert.ThrowsAnyAsync<OperationCanceledException>(() => decode);
    }

    [Theory]
    [InlineData("orrin-80")]
    [InlineData("kcs-1200")]
    [InlineData("biphase-1200")]
    public void Decode_OnSeveralThreads_GivesTheSameCandidatesAsOneThread(string profileId)
    {
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
        string path = folder.NewCapture("threads-" + profileId);
        var damage = new ChannelDamage { SnrDb = 14, WowPercent = 0.3, RandomDropoutsPerMinute = 20, Seed = 7 };
        CaptureSynthesizer.Write(path, profile, RoundTrips.Files(profile), damage);

        var pipelined = CaptureDecoder.Decode(path, profile, options: new DecodeOptions { ChunkSamples = 4096 });
        var session = new CaptureDecoder.DecodeSession(profile, pipelined.Settings, pipelined.Capture.SampleRate);
        using (var reader = CaptureReader.Open(path))
        {
            var chunk = new float[4096];
            int read;
            while ((read = reader.Read(chunk)) > 0)
            {
                session.Process(chunk.AsSpan(0, read));
            }
        }

        var single = session.Finish();
        Assert.Contains(single, c => c.Status is BlockStatus.Clean or BlockStatus.Unchecked);
        Assert.Equal(Describe(single), Describe(pipelined.Candidates));
    }

    private static List<string> Describe(IReadOnlyList<BlockCandidate> candidates) =>
        [.. candidates.Select(c => $"{c.Position} {c.SettingName} {c.Status} {c.PayloadHex} {c.Confidence:R} {c.StartSeconds:R}")];

    private sealed class CancelAt(double fraction, CancellationTokenSource cancel) : IProgress<DecodeProgress>
    {
        public void Report(DecodeProgress value)
        {
            if (value.Fraction >= fraction)
            {
                cancel.Cancel();
            }
        }
    }
}
