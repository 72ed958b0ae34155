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
        var chunk = new float[options.ChunkSamples];
        long total = reader.FrameCount;
        int read;
        while ((read = reader.Read(chunk)) > 0)
        {
            options.Cancellation.ThrowIfCancellationRequested();
            session.Process(chunk.AsSpan(0, read));
            options.Progress?.Report(new DecodeProgress(session.SamplesSeen, total));
        }

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
        private readonly EdgeBuffer[] _edges;
        private readonly List<BlockCandidate> _candidates = [];
        private float[][]? _conditioned;

        public DecodeSession(FormatProfile profile, IReadOnlyList<DetectorSetting> settings, int sampleRate)
        {
            ArgumentNullException.ThrowIfNull(profile);
            ArgumentNullException.ThrowIfNull(settings);
            _bank = new DetectorBank(settings, sampleRate);
            _decoders = new ISymbolDecoder[settings.Count];
            _edges = new EdgeBuffer[settings.Count];
            for (int i = 0; i < settings.Count; i++)
            {
                _edges[i] = new EdgeBuffer();
                var assembler = new BlockAssembler(profile, i, settings[i].Name, sampleRate, _candidates);
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

        public void Process(ReadOnlySpan<float> samples)
        {
            long chunkStart = _bank.SamplesSeen;
            bool conditioned = Array.Exists(_decoders, d => d.NeedsConditionedSignal);
            if (conditioned && (_conditioned is null || _conditioned[0].Length < samples.Length))
            {
                _conditioned = new float[_decoders.Length][];
                for (int i = 0; i < _conditioned.Length; i++)
                {
                    _conditioned[i] = new float[samples.Length];
                }
            }

            foreach (var buffer in _edges)
            {
                buffer.Clear();
            }

            _bank.Process(samples, _edges, conditioned ? _conditioned : null);
            for (int i = 0; i < _decoders.Length; i++)
            {
                _decoders[i].OnEdges(_edges[i].Items);
                if (_decoders[i].NeedsConditionedSignal)
                {
                    _decoders[i].OnConditioned(_conditioned![i].AsSpan(0, samples.Length), chunkStart);
                }
            }
        }

        public List<BlockCandidate> Finish()
        {
            foreach (var decoder in _decoders)
            {
                decoder.Finish(_bank.SamplesSeen);
            }

            return BlockPositioner.Place(_candidates);
        }
    }
}
