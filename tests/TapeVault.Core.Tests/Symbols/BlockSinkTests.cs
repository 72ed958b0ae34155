using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Symbols;
using TapeVault.Core.Tests.OutsideChecks;
using Xunit;

namespace TapeVault.Core.Tests.Symbols;

/// <summary>
/// A symbol decoder hands its work to the block stage through <see cref="IBlockSink"/> and nothing else: a recording
/// sink in place of the assembler sees every decision and byte the FSK decoder takes from a capture minimodem wrote.
/// </summary>
public sealed class BlockSinkTests : IClassFixture<OutsideTempFolder>
{
    private readonly OutsideTempFolder temp;

    public BlockSinkTests(OutsideTempFolder temp)
    {
        this.temp = temp;
    }

    [Theory]
    [InlineData(300, false)]
    [InlineData(300, true)]
    [InlineData(1200, false)]
    public void FskDecoder_HandsEachCharacterToTheSink_AsItsFrameDecisionsThenItsByte(int baud, bool sparse)
    {
        string capture = KcsCaptures.Write(temp.Root, $"sink-kcs-{baud}", baud, 44_100, stopBits: 2);
        var profile = ProfileCatalog.BuiltIn.Get($"kcs-{baud}");
        var sink = new RecordingSink();

        Run(capture, profile, sink, sparse);

        // Outside reference: the bytes minimodem was given to send (and read back itself, see KcsCaptures.Write).
        var begun = Assert.Single(sink.Begun);
        Assert.Equal(BlockStartEvidence.LeadIn, begun);
        Assert.Equal(KcsCaptures.Hex(KcsCaptures.Text), KcsCaptures.Hex([.. sink.Bytes.Select(b => b.Value)]));

        // The standard's frame (BYTE, February 1976): a start bit, eight data bits and the first stop bit are decided,
        // ten decisions a character, each byte's first decision right after the last byte's, none of them guessed.
        for (int i = 0; i < sink.Bytes.Count; i++)
        {
            Assert.Equal(10 * i, sink.Bytes[i].FirstDecision);
            Assert.True(sink.Bytes[i].FramingOk, $"byte {i} was framed badly");
        }

        Assert.Equal(10 * sink.Bytes.Count, sink.Decisions);
        Assert.Equal(0, sink.Guessed);
        Assert.Single(sink.Ended);
    }

    /// <summary>The read path of one setting by hand: the bank's edges and tone energies, then the decoder, into <paramref name="sink"/>.</summary>
    private static void Run(string capture, FormatProfile profile, IBlockSink sink, bool sparse)
    {
        using var reader = CaptureReader.Open(capture);
        var setting = CaptureDecoder.BankFor(profile, DetectorBanks.Default)[0];
        var bank = new DetectorBank([setting], reader.SampleRate);
        var fsk = profile.Fsk!;
        // Sparse: the windows read every few samples (ToneCorrelator.StrideFor), the decoder counting in readings.
        int stride = sparse ? ToneCorrelator.StrideFor(fsk.Baud, reader.SampleRate) : 1;
        var tones = new ToneBank(1, fsk.MarkHz, fsk.SpaceHz, fsk.Baud, reader.SampleRate, stride);
        var samples = new float[4096];
        var energies = new ToneEnergies(1, samples.Length);
        var edges = new[] { new EdgeBuffer() };
        var decoder = new FskDecoder(profile, setting.Edges == EdgeSelection.Both, reader.SampleRate, sink, stride);
        long start = 0;
        int read;
        while ((read = reader.Read(samples)) > 0)
        {
            edges[0].Clear();
            bank.Process(samples.AsSpan(0, read), edges, tones, energies);
            decoder.OnEdges(edges[0].Items);
            decoder.OnTones(energies.Lane(0), energies.FirstReading);
            start += read;
        }

        decoder.Finish(start);
    }

    private sealed class RecordingSink : IBlockSink
    {
        public List<BlockStartEvidence> Begun { get; } = [];

        public List<(byte Value, int FirstDecision, bool FramingOk)> Bytes { get; } = [];

        public List<double> Ended { get; } = [];

        public int Decisions { get; private set; }

        public int Guessed { get; private set; }

        public bool InBlock { get; private set; }

        public int DecisionCount => Decisions;

        public void Begin(double sample, BlockStartEvidence evidence)
        {
            Begun.Add(evidence);
            InBlock = true;
        }

        public IBlockSink? Alongside => null;

        public void BeginInside(double sample, BlockStartEvidence evidence, double cutSample) =>
            throw new InvalidOperationException("This sink reads one block at a time.");

        public void AddDecision(float distance, float residual, float scale) => Decisions++;

        public void AddGuessedDecision()
        {
            Decisions++;
            Guessed++;
        }

        public void NoteLevel(float envelope)
        {
        }

        public void NoteSpeed(double speed)
        {
        }

        public bool AddByte(byte value, int firstDecision, bool framingOk, double sample, float framingDoubt = 0)
        {
            Bytes.Add((value, firstDecision, framingOk));
            return false;
        }

        public void End(double sample, bool signalLost = false)
        {
            if (InBlock)
            {
                Ended.Add(sample);
                InBlock = false;
            }
        }

        public void EndAtMarker(double sample, bool asWritten = true) => End(sample);
    }
}
