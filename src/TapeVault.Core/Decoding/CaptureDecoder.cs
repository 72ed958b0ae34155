using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
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

        // Each reading goes to a spool file the moment its block is finished; the decode keeps only their summaries.
        var spool = ReadingSpool.InTemporaryFile();
        try
        {
            return Decode(reader, profile, bank, options, spool);
        }
        catch
        {
            spool.Dispose();
            throw;
        }
    }

    private static DecodeResult Decode(CaptureReader reader, FormatProfile profile, IReadOnlyList<DetectorSetting> bank, DecodeOptions options, ReadingSpool spool)
    {
        var session = new DecodeSession(profile, bank, reader.SampleRate, options.SurveyIntervals, spool, options.SparseToneReadings);
        long total = reader.FrameCount;
        var overview = options.OverviewColumns > 0 && total > 0 ? new WaveformOverview.Builder(total, options.OverviewColumns) : null;

        // This thread reads (and hashes) the capture and runs the bank over each chunk; the symbol decoders of the
        // settings are shared out between workers (as many as the machine has cores, at most two, and never more than
        // the settings), each taking every chunk in order for its own decoders. With two cores both stay busy for the
        // whole decode: the bank and the decoders of one chunk overlap the next. A chunk goes back to be read into once
        // every worker is done with it; a bounded number of chunk buffers bounds the memory whatever the length.
        int workers = Math.Clamp(Math.Min(Environment.ProcessorCount, options.DecoderThreads), 1, Math.Max(1, Math.Min(2, session.Settings)));
        int buffers = 2 + workers;

        // A decoder that throws stops its worker, which then returns no buffers: the token frees this thread too.
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(options.Cancellation);
        using var free = new ChunkQueue(buffers, stop.Token);
        var full = new ChunkQueue[workers];
        for (int i = 0; i < buffers; i++)
        {
            free.Add(session.NewChunk(options.ChunkSamples));
        }

        // Workers block on their queues for the whole decode, so each gets a thread of its own rather than one of the
        // pool's, which a web app needs for its requests.
        var running = new Task[workers];
        for (int w = 0; w < workers; w++)
        {
            var queue = full[w] = new ChunkQueue(buffers, stop.Token);
            int part = w;
            running[w] = Task.Factory.StartNew(
                () =>
            {
                try
                {
                    while (queue.TryTake(out var work))
                    {
                        session.Decode(work, part, workers);
                        if (Interlocked.Decrement(ref work.Pending) == 0)
                        {
                            free.Add(work);
                        }
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
        }

        try
        {
            while (true)
            {
                if (!free.TryTake(out var work))
                {
                    break;
                }

                work.Length = reader.Read(work.Samples);
                if (work.Length == 0)
                {
                    break;
                }

                overview?.Add(work.Samples.AsSpan(0, work.Length));
                session.Detect(work);
                work.Pending = workers;
                foreach (var queue in full)
                {
                    queue.Add(work);
                }

                options.Progress?.Report(new DecodeProgress(session.SamplesSeen, total));
            }
        }
        catch (OperationCanceledException) when (!options.Cancellation.IsCancellationRequested)
        {
            // A worker failed; its exception is the one to report, below.
        }
        finally
        {
            foreach (var queue in full)
            {
                queue.CompleteAdding();
            }

            try
            {
                Task.WaitAll(running, CancellationToken.None);
            }
            catch (AggregateException e) when (FirstFailure(e) is { } failure)
            {
                System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(failure).Throw();
            }
            catch (AggregateException) when (options.Cancellation.IsCancellationRequested)
            {
                // Cancelled by the caller: the cancellation below says so.
            }
            finally
            {
                foreach (var queue in full)
                {
                    queue.Dispose();
                }
            }
        }

        options.Cancellation.ThrowIfCancellationRequested();
        var capture = reader.Complete();
        var (candidates, best) = session.FinishSpooled();
        return new DecodeResult(capture, profile, bank, candidates, best, CodeVersion)
        {
            Spool = spool,
            Surveys = session.Surveys,
            Overview = overview?.Finish(reader.SampleRate),
        };
    }

    /// <summary>The exception a worker failed with, if any failed with more than the cancellation that stopped the rest.</summary>
    private static Exception? FirstFailure(AggregateException e)
    {
        foreach (var inner in e.Flatten().InnerExceptions)
        {
            if (inner is not OperationCanceledException)
            {
                return inner;
            }
        }

        return null;
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

    /// <summary>The streaming state of one decode: the bank, the tone correlators of a tone format, and one symbol decoder per setting.</summary>
    public sealed class DecodeSession
    {
        private readonly DetectorBank _bank;
        private readonly ToneBank? _tones;
        private readonly ISymbolDecoder[] _decoders;
        private readonly ReadingSpool _spool;
        private readonly List<BlockCandidate>[] _summaries;
        private readonly List<int>[] _records;
        private readonly IntervalSurvey[]? _surveys;
        private readonly int _copies;
        private ChunkWork? _single;

        /// <param name="surveyIntervals">Count each setting's edge intervals as well, for the plots' pulse-length histograms.</param>
        /// <param name="spool">Where each reading goes as its block is finished; by default a spool in memory (for short stretches).</param>
        /// <param name="sparseToneReadings">Read a slow tone format's windows every few samples (<see cref="DecodeOptions.SparseToneReadings"/>).</param>
        public DecodeSession(FormatProfile profile, IReadOnlyList<DetectorSetting> settings, int sampleRate, bool surveyIntervals = false, ReadingSpool? spool = null, bool sparseToneReadings = false)
        {
            ArgumentNullException.ThrowIfNull(profile);
            ArgumentNullException.ThrowIfNull(settings);
            int toneStride = sparseToneReadings && profile.Fsk is { } tones ? ToneCorrelator.StrideFor(tones.Baud, sampleRate) : 1;
            _bank = new DetectorBank(settings, sampleRate);
            _decoders = new ISymbolDecoder[settings.Count];
            _spool = spool ?? ReadingSpool.InMemory();
            _summaries = new List<BlockCandidate>[settings.Count];
            _records = new List<int>[settings.Count];
            _copies = profile.Layout.Copies;
            for (int i = 0; i < settings.Count; i++)
            {
                var summaries = _summaries[i] = [];
                var records = _records[i] = [];
                var assembler = new BlockAssembler(profile, i, settings[i].Name, sampleRate, reading =>
                {
                    // Only this setting's worker adds to its lists; the spool takes every worker's readings.
                    records.Add(_spool.Add(reading));
                    summaries.Add(_spool.Summarize(reading));
                });
                bool both = settings[i].Edges == EdgeSelection.Both;
                _decoders[i] = profile.Family switch
                {
                    FormatFamily.PulseWidth => new PulseWidthDecoder(profile, both, sampleRate, assembler),
                    FormatFamily.Biphase => new BiphaseDecoder(profile, sampleRate, assembler),
                    FormatFamily.Fsk => new FskDecoder(profile, both, sampleRate, assembler, toneStride),
                    _ => throw new ArgumentOutOfRangeException(nameof(profile)),
                };
            }

            if (Array.Exists(_decoders, d => d.ReadsTones))
            {
                var fsk = profile.Fsk ?? throw new ArgumentException("Only a tone format's decoders read tones.", nameof(profile));
                _tones = new ToneBank(settings.Count, fsk.MarkHz, fsk.SpaceHz, fsk.Baud, sampleRate, toneStride);
            }

            if (surveyIntervals)
            {
                _surveys = new IntervalSurvey[settings.Count];
                for (int i = 0; i < _surveys.Length; i++)
                {
                    _surveys[i] = new IntervalSurvey(sampleRate);
                }
            }
        }

        public long SamplesSeen => _bank.SamplesSeen;

        /// <summary>How many settings (and so symbol decoders) the session runs.</summary>
        public int Settings => _decoders.Length;

        /// <summary>Each setting's edge intervals so far, when the session was asked to count them; else null.</summary>
        public IReadOnlyList<IntervalSurvey>? Surveys => _surveys;

        public ChunkWork NewChunk(int samples)
        {
            var edges = new EdgeBuffer[_decoders.Length];
            for (int i = 0; i < edges.Length; i++)
            {
                edges[i] = new EdgeBuffer();
            }

            return new ChunkWork(new float[samples], edges, _tones is null ? null : new ToneEnergies(_decoders.Length, samples));
        }

        /// <summary>The bank's half of a chunk: edges (and the tone energies) of every setting.</summary>
        public void Detect(ChunkWork work)
        {
            ArgumentNullException.ThrowIfNull(work);
            work.Start = _bank.SamplesSeen;
            foreach (var buffer in work.Edges)
            {
                buffer.Clear();
            }

            _bank.Process(work.Samples.AsSpan(0, work.Length), work.Edges, _tones, work.Tones);
        }

        /// <summary>The decoders' half of a chunk; chunks must arrive in order.</summary>
        public void Decode(ChunkWork work) => Decode(work, 0, 1);

        /// <summary>
        /// Part <paramref name="part"/> of <paramref name="parts"/> of the decoders' half of a chunk: the settings whose
        /// index leaves that remainder. Each part must see every chunk in order; different parts may run at once.
        /// </summary>
        public void Decode(ChunkWork work, int part, int parts)
        {
            ArgumentNullException.ThrowIfNull(work);
            for (int i = part; i < _decoders.Length; i += parts)
            {
                _decoders[i].OnEdges(work.Edges[i].Items);
                _surveys?[i].AddIntervals(work.Edges[i].Items);
                if (_decoders[i].ReadsTones)
                {
                    _decoders[i].OnTones(work.Tones!.Lane(i), work.Tones.FirstReading);
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

        /// <summary>Ends the decode: every reading, placed and read back from the spool whole.</summary>
        public List<BlockCandidate> Finish() => [.. FinishSpooled().Candidates];

        /// <summary>
        /// Ends the decode: every reading placed (by position, then start) and the best per position, both read back
        /// from the spool a reading at a time as they are asked for.
        /// </summary>
        public (SpooledReadings Candidates, SpooledReadings Best) FinishSpooled()
        {
            foreach (var decoder in _decoders)
            {
                decoder.Finish(_bank.SamplesSeen);
            }

            // The settings' readings one after the other, as the positioner has always been given them.
            var summaries = new List<BlockCandidate>();
            var records = new List<int>();
            for (int i = 0; i < _summaries.Length; i++)
            {
                summaries.AddRange(_summaries[i]);
                records.AddRange(_records[i]);
            }

            var order = BlockPositioner.PlaceInOrder(summaries, _copies);
            var placedRecords = new int[order.Length];
            var placedPositions = new int[order.Length];
            var placed = new List<BlockCandidate>(order.Length);
            for (int i = 0; i < order.Length; i++)
            {
                placedRecords[i] = records[order[i].Reading];
                placedPositions[i] = order[i].Position;
                placed.Add(summaries[order[i].Reading]);
            }

            var best = BlockPositioner.BestIndexPerPosition(placed, i => placedPositions[i]);
            var bestRecords = new int[best.Count];
            var bestPositions = new int[best.Count];
            for (int i = 0; i < best.Count; i++)
            {
                bestRecords[i] = placedRecords[best[i]];
                bestPositions[i] = placedPositions[best[i]];
            }

            return (new SpooledReadings(_spool, placedRecords, placedPositions), new SpooledReadings(_spool, bestRecords, bestPositions));
        }
    }
}

/// <summary>One chunk on its way from the bank to the decoders.</summary>
public sealed class ChunkWork(float[] samples, EdgeBuffer[] edges, ToneEnergies? tones)
{
    /// <summary>Workers still to decode this chunk before it may be read into again.</summary>
    internal int Pending;

    public float[] Samples { get; } = samples;

    public int Length { get; set; }

    public long Start { get; set; }

    public EdgeBuffer[] Edges { get; } = edges;

    /// <summary>Every setting's tone energies over the chunk, for a tone format; else null.</summary>
    public ToneEnergies? Tones { get; } = tones;
}
