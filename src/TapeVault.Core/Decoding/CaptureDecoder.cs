using System.Collections.Concurrent;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Symbols;

namespace TapeVault.Core.Decoding;

/// <summary>
/// The read path end to end: one pass over the capture feeds every detector setting of the bank, each setting's
/// symbol decoder turns its edges into block candidates, and the candidates are placed and ranked.
/// </summary>
public static class CaptureDecoder
{
    public static string CodeVersion { get; } =
        typeof(CaptureDecoder).Assembly.GetName().Version?.ToString() ?? "0.0.0";

    public static DecodeResult Decode(string path, FormatProfile profile, IReadOnlyList<DetectorSetting>? settings = null, DecodeOptions? options = null)
    {
        options ??= new DecodeOptions();
        using var reader = CaptureReader.Open(path, options.Channel);
        return Decode(reader, profile, settings, options);
    }

    public static DecodeResult Decode(CaptureReader reader, FormatProfile profile, IReadOnlyList<DetectorSetting>? settings = null, DecodeOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(reader);
        ArgumentNullException.ThrowIfNull(profile);
        options ??= new DecodeOptions();
        var bank = BankFor(profile, settings ?? DetectorBanks.Default);
        var session = new DecodeSession(profile, bank, reader.SampleRate);
        long total = reader.FrameCount;

        // Two stages on two cores: this thread reads (and hashes) the capture and runs the bank; a worker runs the
        // symbol decoders on the previous chunk's edges. Three chunk buffers bound the memory whatever the length.
        using var free = new BlockingCollection<ChunkWork>(boundedCapacity: 3);
        using var full = new BlockingCollection<ChunkWork>(boundedCapacity: 3);
        for (int i = 0; i < 3; i++)
        {
            free.Add(session.NewChunk(options.ChunkSamples));
        }

        // A decoder that throws stops the worker, which then returns no buffers: the token frees this thread too.
        // The worker blocks on the queue for the whole decode, so it gets a thread of its own rather than one of the
        // pool's, which a web app needs for its requests.
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(options.Cancellation);
        var worker = Task.Factory.StartNew(
            () =>
        {
            try
            {
                foreach (var work in full.GetConsumingEnumerable(stop.Token))
                {
                    session.Decode(work);
                    free.Add(work, stop.Token);
                }
            }
            catch (Exception) when (!stop.IsCancellationRequested)
            {
                stop.Cancel();
                throw;
            }
        },
            CancellationToken.None,
            TaskCreationOptions.LongRunning,
            TaskScheduler.Default);
        try
        {
            while (true)
            {
                var work = free.Take(stop.Token);
                work.Length = reader.Read(work.Samples);
                if (work.Length == 0)
                {
                    break;
                }

                session.Detect(work);
                full.Add(work, stop.Token);
                options.Progress?.Report(new DecodeProgress(session.SamplesSeen, total));
            }
        }
        catch (OperationCanceledException) when (!options.Cancellation.IsCancellationRequested)
        {
            // The worker failed; its exception is the one to report, below.
        }
        finally
        {
            full.CompleteAdding();
            try
            {
                worker.Wait(CancellationToken.None);
            }
            catch (AggregateException e) when (e.InnerException is not null and not OperationCanceledException)
            {
                System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(e.InnerException).Throw();
            }
            catch (AggregateException) when (options.Cancellation.IsCancellationRequested)
            {
                // Cancelled by the caller: the cancellation below says so.
            }
        }

        options.Cancellation.ThrowIfCancellationRequested();
        var capture = reader.Complete();
        var candidates = session.Finish();
        return new DecodeResult(capture, profile, bank, candidates, BlockPositioner.BestPerPosition(candidates), CodeVersion);
    }

    /// <summary>
    /// The settings worth running for a profile's family. Tone detectors ignore polarity and which edges count, so for
    /// FSK the first setting of each kind of conditioning stands for the rest. Biphase needs every transition, so its
    /// settings count both edges, and settings that then coincide are run once.
    /// </summary>
    public static IReadOnlyList<DetectorSetting> BankFor(FormatProfile profile, IReadOnlyList<DetectorSetting> settings)
    {
        ArgumentNullException.ThrowIfNull(profile);
        ArgumentNullException.ThrowIfNull(settings);
        if (profile.Family == FormatFamily.PulseWidth)
        {
            return settings;
        }

        var distinct = new List<DetectorSetting>();
        foreach (var setting in settings)
        {
            var s = profile.Family == FormatFamily.Biphase && setting.Edges != EdgeSelection.Both
                ? new DetectorSetting(setting.Name, setting.HighPassHz, setting.LowPassHz, setting.Differentiate, setting.Invert, setting.ThresholdMode, setting.Hysteresis, EdgeSelection.Both)
                : setting;
            bool same(DetectorSetting d) =>
                d.HighPassHz == s.HighPassHz && d.LowPassHz == s.LowPassHz && d.Differentiate == s.Differentiate &&
                (profile.Family == FormatFamily.Fsk || (d.Invert == s.Invert && d.ThresholdMode == s.ThresholdMode && d.Hysteresis == s.Hysteresis));
            if (!distinct.Exists(same))
            {
                distinct.Add(s);
            }
        }

        return distinct;
    }

    /// <summary>The streaming state of one decode: the bank and one symbol decoder per setting.</summary>
    public sealed class DecodeSession
    {
        private readonly DetectorBank _bank;
        private readonly ISymbolDecoder[] _decoders;
        private readonly List<BlockCandidate>[] _candidates;
        private readonly int _copies;
        private ChunkWork? _single;

        public DecodeSession(FormatProfile profile, IReadOnlyList<DetectorSetting> settings, int sampleRate)
        {
            ArgumentNullException.ThrowIfNull(profile);
            ArgumentNullException.ThrowIfNull(settings);
            _bank = new DetectorBank(settings, sampleRate);
            _decoders = new ISymbolDecoder[settings.Count];
            _candidates = new List<BlockCandidate>[settings.Count];
            _copies = profile.Layout.Copies;
            for (int i = 0; i < settings.Count; i++)
            {
                _candidates[i] = [];
                var assembler = new BlockAssembler(profile, i, settings[i].Name, sampleRate, _candidates[i]);
                bool both = settings[i].Edges == EdgeSelection.Both;
                _decoders[i] = profile.Family switch
                {
                    FormatFamily.PulseWidth => new PulseWidthDecoder(profile, both, sampleRate, assembler),
                    FormatFamily.Biphase => new BiphaseDecoder(profile, sampleRate, assembler),
                    FormatFamily.Fsk => new FskDecoder(profile, both, sampleRate, assembler),
                    _ => throw new ArgumentOutOfRangeException(nameof(profile)),
                };
            }
        }

        public long SamplesSeen => _bank.SamplesSeen;

        private bool NeedsConditioned => Array.Exists(_decoders, d => d.NeedsConditionedSignal);

        public ChunkWork NewChunk(int samples)
        {
            var edges = new EdgeBuffer[_decoders.Length];
            for (int i = 0; i < edges.Length; i++)
            {
                edges[i] = new EdgeBuffer();
            }

            float[][]? conditioned = null;
            if (NeedsConditioned)
            {
                conditioned = new float[_decoders.Length][];
                for (int i = 0; i < conditioned.Length; i++)
                {
                    conditioned[i] = new float[samples];
                }
            }

            return new ChunkWork(new float[samples], edges, conditioned);
        }

        /// <summary>The bank's half of a chunk: edges (and the conditioned signal) of every setting.</summary>
        public void Detect(ChunkWork work)
        {
            ArgumentNullException.ThrowIfNull(work);
            work.Start = _bank.SamplesSeen;
            foreach (var buffer in work.Edges)
            {
                buffer.Clear();
            }

            _bank.Process(work.Samples.AsSpan(0, work.Length), work.Edges, work.Conditioned);
        }

        /// <summary>The decoders' half of a chunk; chunks must arrive in order.</summary>
        public void Decode(ChunkWork work)
        {
            ArgumentNullException.ThrowIfNull(work);
            for (int i = 0; i < _decoders.Length; i++)
            {
                _decoders[i].OnEdges(work.Edges[i].Items);
                if (_decoders[i].NeedsConditionedSignal)
                {
                    _decoders[i].OnConditioned(work.Conditioned![i].AsSpan(0, work.Length), work.Start);
                }
            }
        }

        /// <summary>Both halves on the calling thread.</summary>
        public void Process(ReadOnlySpan<float> samples)
        {
            if (_single is null || _single.Samples.Length < samples.Length)
            {
                _single = NewChunk(samples.Length);
            }

            samples.CopyTo(_single.Samples);
            _single.Length = samples.Length;
            Detect(_single);
            Decode(_single);
        }

        public List<BlockCandidate> Finish()
        {
            foreach (var decoder in _decoders)
            {
                decoder.Finish(_bank.SamplesSeen);
            }

            var all = new List<BlockCandidate>();
            foreach (var list in _candidates)
            {
                all.AddRange(list);
            }

            return BlockPositioner.Place(all, _copies);
        }
    }
}

/// <summary>One chunk on its way from the bank to the decoders.</summary>
public sealed class ChunkWork(float[] samples, EdgeBuffer[] edges, float[][]? conditioned)
{
    public float[] Samples { get; } = samples;

    public int Length { get; set; }

    public long Start { get; set; }

    public EdgeBuffer[] Edges { get; } = edges;

    public float[][]? Conditioned { get; } = conditioned;
}
