using System.Collections;
using System.Collections.Immutable;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using TapeVault.Core.Tests.RoundTrip;
using Xunit;

namespace TapeVault.Core.Tests.Decoding;

/// <summary>
/// The reading spool: a decode hands each reading to it as its block is finished, not at the end of the capture, and
/// what comes back from it is the reading that went in, every field of it.
/// </summary>
public sealed class ReadingSpoolTests(RoundTripFolder folder) : IClassFixture<RoundTripFolder>
{
    [Theory]
    [InlineData("orrin-80")]
    [InlineData("biphase-1200")]
    [InlineData("three-class-pairs")]
    public void Session_HandsReadingsToItsSpool_BeforeTheCaptureEnds(string profileId)
    {
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
        string path = folder.NewCapture("spool-" + profileId);

        // Two files of many blocks each (these formats write blocks of a few hundred bytes at most).
        var random = new Random(4242);
        var files = new List<TapeFile>();
        foreach (string name in new[] { "FIRST", "SECOND" })
        {
            var content = new byte[1500];
            random.NextBytes(content);
            files.Add(new TapeFile(name, content));
        }

        CaptureSynthesizer.Write(path, profile, files, new ChannelDamage());

        using var spool = ReadingSpool.InMemory();
        using var reader = CaptureReader.Open(path);
        var settings = CaptureDecoder.BankFor(profile, DetectorBanks.Default);
        var session = new CaptureDecoder.DecodeSession(profile, settings, reader.SampleRate, spool: spool);
        long half = reader.FrameCount / 2;
        int spooledByHalf = -1;
        var chunk = new float[4096];
        int read;
        while ((read = reader.Read(chunk)) > 0)
        {
            session.Process(chunk.AsSpan(0, read));
            if (spooledByHalf < 0 && session.SamplesSeen >= half)
            {
                spooledByHalf = spool.Count;
            }
        }

        var (candidates, best) = session.FinishSpooled();

        // The capture holds many blocks one after the other, so blocks are finished within its first half.
        Assert.True(spooledByHalf > 0, $"no reading was spooled by the middle of the capture ({spool.Count} at the end)");
        Assert.True(spooledByHalf < spool.Count, "every reading was spooled by the middle of the capture");
        Assert.Equal(spool.Count, candidates.Count);
        Assert.Contains(best, b => b.Status is BlockStatus.Clean or BlockStatus.Unchecked);
    }

    [Theory]
    [InlineData("orrin-80")]
    [InlineData("kcs-300")]
    [InlineData("three-class-pairs")]
    public void Decode_GivesTheBestOfTheSpooledReadings_AsThePositionerChoosesThem(string profileId)
    {
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
        string path = folder.NewCapture("best-" + profileId);
        var damage = new ChannelDamage { SnrDb = 14, WowPercent = 0.3, RandomDropoutsPerMinute = 20, Seed = 11 };
        CaptureSynthesizer.Write(path, profile, RoundTrips.Files(profile), damage);

        using var result = CaptureDecoder.Decode(path, profile);
        var whole = result.Candidates.ToList();

        Assert.Equal(Describe(BlockPositioner.BestPerPosition(whole)), Describe(result.Best));
        Assert.Equal(whole.Count, whole.Select(c => (c.SettingIndex, c.StartSeconds, c.EndSeconds)).Distinct().Count());
    }

    [Fact]
    public void A_disposed_decode_result_has_closed_its_spool()
    {
        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        string path = folder.NewCapture("closed");
        CaptureSynthesizer.Write(path, profile, RoundTrips.Files(profile), new ChannelDamage());

        var result = CaptureDecoder.Decode(path, profile);
        Assert.NotEmpty(result.Candidates);
        Assert.NotNull(result.Spool);

        // The spool's file is given back when the result is disposed, not when the collector finalises it: a reading
        // asked for afterwards finds its stream closed.
        result.Dispose();
        Assert.Throws<ObjectDisposedException>(() => result.Candidates[0]);
    }

    [Fact]
    public void Spool_GivesBackEveryFieldOfAReading()
    {
        // Every property set to a value of its own, so a property the spool forgot would come back as its default.
        var full = new BlockCandidate
        {
            SettingIndex = 3,
            SettingName = "hp-300-diff",
            Position = -1,
            Identity = new BlockIdentity("GAME", 17, 4, 9),
            Header = [0x47, 0x41, 0x11, 0x04],
            Payload = [1, 2, 3, 255, 0],
            StoredChecksum = 0xBEEF,
            Status = BlockStatus.Failed,
            Doubts = BlockDoubts.CutShort | BlockDoubts.ChecksumMismatch,
            Confidence = 0.123456789,
            ModelConfidence = 0.987654321,
            ByteMargins = [0.5f, 0.25f, 1f, 0f, 0.125f],
            ByteErrorOdds = [1e-3f, 2e-3f, 0.5f, 1f, 1e-9f],
            HeaderErrorOdds = [0.1f, 0.2f, 0.3f, 0.4f],
            ChecksumErrorOdds = [0.01f, 0.02f],
            ByteSeconds = [1.0 / 3, 2.5, 2.75, 3.0, Math.PI],
            Decisions = 123,
            AmbiguousDecisions = 7,
            MinimumMargin = 0.01,
            MeanMargin = 0.7,
            FramingErrors = 2,
            LevelDbfs = -12.5,
            SnrDb = double.PositiveInfinity,
            Speed = 1.031,
            StartSeconds = 12.345,
            EndSeconds = 13.5,
            Truncated = true,
            SyncCopy = 1,
        };
        foreach (var property in typeof(BlockCandidate).GetProperties())
        {
            object? value = property.GetValue(full);
            Assert.False(value is null or 0 or 0.0 or false or "" || value is IEnumerable { } e && !e.Cast<object>().Any(), $"{property.Name} is not set in the test's reading");
        }

        var bare = full with
        {
            Identity = new BlockIdentity(null, null, null, 0),
            Header = [],
            Payload = [],
            StoredChecksum = null,
            HeaderErrorOdds = [],
            ChecksumErrorOdds = [],
            ByteMargins = [],
            ByteErrorOdds = [],
            ByteSeconds = [],
            Truncated = false,
            SyncCopy = null,
        };

        using var spool = ReadingSpool.InTemporaryFile(folder.Root);
        int first = spool.Add(full);
        int second = spool.Add(bare);
        foreach (var (record, reading) in new[] { (second, bare), (first, full), (first, full) })
        {
            var back = spool.Read(record, 41);
            foreach (var property in typeof(BlockCandidate).GetProperties())
            {
                object? expected = property.Name == nameof(BlockCandidate.Position) ? 41 : property.GetValue(reading);
                object? actual = property.GetValue(back);
                Assert.True(SameValue(expected, actual), $"{property.Name} was {expected}, came back {actual}");
            }
        }

        // The spool's file has no name left in the folder: nothing stays behind however the process ends.
        if (!OperatingSystem.IsWindows())
        {
            Assert.Empty(Directory.GetFiles(folder.Root, "*.spool"));
        }
    }

    private static bool SameValue(object? expected, object? actual)
    {
        if (expected is IEnumerable a && actual is IEnumerable b && expected is not string)
        {
            return a.Cast<object>().SequenceEqual(b.Cast<object>());
        }

        return Equals(expected, actual);
    }

    private static List<string> Describe(IEnumerable<BlockCandidate> candidates) =>
        [.. candidates.Select(c => $"{c.Position} {c.SettingName} {c.Status} {c.PayloadHex} {c.Confidence:R} {c.StartSeconds:R} {string.Join(',', c.ByteMargins)}")];
}
