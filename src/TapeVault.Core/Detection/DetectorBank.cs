using System.Numerics;
using System.Runtime.Intrinsics;
using TapeVault.Core.Dsp;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Detection;

/// <summary>
/// Runs every detector setting over each chunk of samples in one pass. Eight settings share one
/// <see cref="Vector256{T}"/>: lane i of every state vector belongs to setting i of the group, so one trip through
/// the sample loop advances all eight. Only a switch of the Schmitt trigger (rare next to samples) leaves the
/// vector path, to append an edge.
/// </summary>
public sealed class DetectorBank
{
    public const int LanesPerGroup = 8;

    private readonly LaneGroup[] _groups;
    private long _samplesSeen;

    public DetectorBank(IReadOnlyList<DetectorSetting> settings, int sampleRate)
    {
        ArgumentNullException.ThrowIfNull(settings);
        if (settings.Count == 0)
        {
            throw new ArgumentException("A detector bank needs at least one setting.", nameof(settings));
        }

        if (sampleRate <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(sampleRate), sampleRate, "The sample rate must be positive.");
        }

        Settings = settings;
        SampleRate = sampleRate;
        int groupCount = (settings.Count + LanesPerGroup - 1) / LanesPerGroup;
        _groups = new LaneGroup[groupCount];
        for (int g = 0; g < groupCount; g++)
        {
            _groups[g] = LaneGroup.Create(settings, g * LanesPerGroup, sampleRate);
        }
    }

    public IReadOnlyList<DetectorSetting> Settings { get; }

    public int SampleRate { get; }

    /// <summary>Samples processed so far; the index of the next sample.</summary>
    public long SamplesSeen => _samplesSeen;

    /// <summary>
    /// Advances every setting over <paramref name="samples"/>. Edges are appended to <paramref name="edges"/>[setting]
    /// (the caller clears them between chunks). When <paramref name="tones"/> is given, each setting's conditioned
    /// signal also drives its tone correlators in the same pass, and their energies are written to
    /// <paramref name="energies"/> (FSK decoders read them).
    /// </summary>
    public void Process(ReadOnlySpan<float> samples, EdgeBuffer[] edges, ToneBank? tones = null, ToneEnergies? energies = null)
    {
        ArgumentNullException.ThrowIfNull(edges);
        if (edges.Length < Settings.Count)
        {
            throw new ArgumentException("One edge buffer is needed per setting.", nameof(edges));
        }

        if (tones is not null && (energies is null || energies.Capacity < samples.Length || tones.Settings != Settings.Count))
        {
            throw new ArgumentException("Tone correlators need one lane per setting and room for the chunk's energies.", nameof(energies));
        }

        long chunkStart = _samplesSeen;
        if (tones is not null)
        {
            (energies!.FirstReading, energies.Readings) = tones.Readings(chunkStart, samples.Length);
        }

        // Crossing times are interpolated in single precision relative to the start of what a group is given; slices
        // of at most SliceSamples keep them within a thousandth of a sample however long the caller's chunk is.
        for (int offset = 0; offset < samples.Length; offset += SliceSamples)
        {
            var slice = samples.Slice(offset, Math.Min(SliceSamples, samples.Length - offset));
            int readingOffset = tones is null ? 0 : tones.Readings(chunkStart, offset).Count;
            for (int g = 0; g < _groups.Length; g++)
            {
                _groups[g].Process(slice, _samplesSeen, edges, tones, energies, readingOffset);
            }

            _samplesSeen += slice.Length;
        }

        tones?.EndChunk();
    }

    /// <summary>The longest run of samples a lane group processes at once (float spacing at 4096 is 1/2048 sample).</summary>
    private const int SliceSamples = 4096;

    /// <summary>Per-lane coefficients and state of eight settings.</summary>
    private struct LaneGroup
    {
        private int _firstSetting;

        // Coefficients.
        private Vector256<float> _hpA;
        private Vector256<float> _b0, _b1, _b2, _a1, _a2;
        private Vector256<float> _gainNow, _gainPrev;
        private Vector256<float> _decay, _bandFixed, _bandRelative;
        // Lanes whose rising (falling) switches count as edges; unused lanes count none.
        private uint _countRising, _countFalling;

        // Per slice: the state at each counted switch, turned into edges after the sample loop.
        private Vector256<float>[] _eventCrossing, _eventEnvelope, _eventConditioned;
        private uint[] _eventUp, _eventDown;

        // Per slice: each counted lane's edge array, reserved for the slice's switches (so the edges go in without a call each).
        private Edge[][] _laneEdges;

        // State.
        private float _previousSample;
        private Vector256<float> _hpY, _z1, _z2, _previousFiltered, _previousConditioned, _envelope, _state, _lastCrossing;

        public static LaneGroup Create(IReadOnlyList<DetectorSetting> settings, int first, int sampleRate)
        {
            int lanes = Math.Min(LanesPerGroup, settings.Count - first);
            Span<float> hpA = stackalloc float[LanesPerGroup];
            Span<float> b0 = stackalloc float[LanesPerGroup];
            Span<float> b1 = stackalloc float[LanesPerGroup];
            Span<float> b2 = stackalloc float[LanesPerGroup];
            Span<float> a1 = stackalloc float[LanesPerGroup];
            Span<float> a2 = stackalloc float[LanesPerGroup];
            Span<float> gainNow = stackalloc float[LanesPerGroup];
            Span<float> gainPrev = stackalloc float[LanesPerGroup];
            Span<float> bandFixed = stackalloc float[LanesPerGroup];
            Span<float> bandRelative = stackalloc float[LanesPerGroup];
            uint rising = 0, falling = 0;

            // Unused lanes repeat the first setting and are never read.
            float decay = 0;
            for (int lane = 0; lane < LanesPerGroup; lane++)
            {
                var c = ReadChainCoefficients.For(settings[first + Math.Min(lane, lanes - 1)], sampleRate);
                hpA[lane] = c.HighPassA;
                (b0[lane], b1[lane], b2[lane], a1[lane], a2[lane]) = (c.LowPass.B0, c.LowPass.B1, c.LowPass.B2, c.LowPass.A1, c.LowPass.A2);
                gainNow[lane] = c.GainNow;
                gainPrev[lane] = c.GainPrevious;
                bandFixed[lane] = c.BandFixed;
                bandRelative[lane] = c.BandRelative;
                decay = c.Decay;
                if (lane < lanes)
                {
                    rising |= c.CountRising ? 1u << lane : 0;
                    falling |= c.CountFalling ? 1u << lane : 0;
                }
            }

            return new LaneGroup
            {
                _firstSetting = first,
                _hpA = Vector256.Create(hpA),
                _b0 = Vector256.Create(b0),
                _b1 = Vector256.Create(b1),
                _b2 = Vector256.Create(b2),
                _a1 = Vector256.Create(a1),
                _a2 = Vector256.Create(a2),
                _gainNow = Vector256.Create(gainNow),
                _gainPrev = Vector256.Create(gainPrev),
                _decay = Vector256.Create(decay),
                _bandFixed = Vector256.Create(bandFixed),
                _bandRelative = Vector256.Create(bandRelative),
                _countRising = rising,
                _countFalling = falling,
                _state = Vector256.Create(-1f),
                _lastCrossing = Vector256<float>.Zero,
                _eventCrossing = new Vector256<float>[SliceSamples],
                _eventEnvelope = new Vector256<float>[SliceSamples],
                _eventConditioned = new Vector256<float>[SliceSamples],
                _eventUp = new uint[SliceSamples],
                _eventDown = new uint[SliceSamples],
                _laneEdges = new Edge[LanesPerGroup][],
            };
        }

        public void Process(ReadOnlySpan<float> samples, long chunkStart, EdgeBuffer[] edges, ToneBank? tones, ToneEnergies? energies, int readingOffset)
        {
            // State into locals so the JIT keeps it in registers for the loop.
            float previousSample = _previousSample;
            var hpY = _hpY;
            var z1 = _z1;
            var z2 = _z2;
            var previousConditioned = _previousConditioned;
            var previousFiltered = _previousFiltered;
            var envelope = _envelope;
            var state = _state;
            var lastCrossing = _lastCrossing;
            var hpA = _hpA;
            var b0 = _b0;
            var b1 = _b1;
            var b2 = _b2;
            var a1 = _a1;
            var a2 = _a2;
            var gainNow = _gainNow;
            var gainPrev = _gainPrev;
            var decay = _decay;
            var bandFixed = _bandFixed;
            var bandRelative = _bandRelative;
            var zero = Vector256<float>.Zero;
            var one = Vector256<float>.One;
            Span<float> crossingLanes = stackalloc float[LanesPerGroup];
            Span<float> envelopeLanes = stackalloc float[LanesPerGroup];

            var eventCrossing = _eventCrossing;
            var eventEnvelope = _eventEnvelope;
            var eventUp = _eventUp;
            var eventDown = _eventDown;
            var eventConditioned = _eventConditioned;
            uint countRising = _countRising;
            uint countFalling = _countFalling;
            int events = 0;
            if (samples.Length > eventUp.Length)
            {
                throw new ArgumentException($"A lane group takes at most {eventUp.Length} samples at a time.", nameof(samples));
            }

            bool keepConditioned = tones is not null;

            // The index of the previous sample, kept as a vector so the loop converts no integer per sample.
            var sampleBefore = Vector256.Create(-1f);

            // Counters here cannot overflow (both stay below the slice length); unchecked keeps the loop free of overflow tests.
            unchecked
            {
                for (int n = 0; n < samples.Length; n++)
                {
                    float x = samples[n];

                    // DC block, low-pass, derivative and polarity, envelope and band: the read chain's operator (ReadChainStep),
                    // eight settings at once.
                    var c = ReadChainStep.Condition(
                        Vector256.Create(x - previousSample), ref hpY, ref z1, ref z2, ref previousFiltered, hpA, b0, b1, b2, a1, a2, gainNow, gainPrev);
                    previousSample = x;
                    envelope = ReadChainStep.Envelope(c, envelope, decay);
                    var band = ReadChainStep.Band(envelope, bandFixed, bandRelative);

                    // Remember where the signal last crossed zero, interpolated between samples.
                    var crossed = Vector256.Xor(Vector256.LessThan(previousConditioned, zero), Vector256.LessThan(c, zero));
                    var crossingTime = sampleBefore + previousConditioned / (previousConditioned - c);
                    sampleBefore += one;
                    lastCrossing = Vector256.ConditionalSelect(crossed, crossingTime, lastCrossing);
                    previousConditioned = c;

                    // Kept for the tone correlators, which run over the slice after this loop when the bank has them (the
                    // branch goes the same way the whole slice).
                    if (keepConditioned)
                    {
                        eventConditioned[n] = c;
                    }

                    // Schmitt trigger: low goes high above +band, high goes low below −band.
                    state = ReadChainStep.Trigger(c, band, state, out var goUp, out var goDown);

                    // Some lane switches on most samples, so a branch here would be a coin toss and a call would make the
                    // JIT spill every state vector: each sample writes an event, and only a counted switch keeps it.
                    uint upBits = goUp.ExtractMostSignificantBits();
                    uint downBits = goDown.ExtractMostSignificantBits();
                    eventCrossing[events] = lastCrossing;
                    eventEnvelope[events] = envelope;
                    eventUp[events] = upBits;
                    eventDown[events] = downBits;
                    events += ((upBits & countRising) | (downBits & countFalling)) != 0 ? 1 : 0;
                }
            }

            if (tones is not null)
            {
                // The tone correlators of these eight settings read the conditioned signal just kept, still in its lanes.
                tones.Process(_firstSetting, eventConditioned.AsSpan(0, samples.Length), chunkStart, energies!, readingOffset);
            }

            // The slice's counted switches become edges, outside the sample loop: each counted lane's buffer has room
            // for all of them reserved first, and its count is kept here until the last.
            var laneEdges = _laneEdges;
            Span<int> laneCounts = stackalloc int[LanesPerGroup];
            uint counting = countRising | countFalling;
            for (uint lanes = counting; lanes != 0; lanes &= lanes - 1)
            {
                int lane = BitOperations.TrailingZeroCount(lanes);
                var buffer = edges[_firstSetting + lane];
                laneEdges[lane] = buffer.Reserve(events);
                laneCounts[lane] = buffer.Count;
            }

            for (int e = 0; e < events; e++)
            {
                eventCrossing[e].CopyTo(crossingLanes);
                eventEnvelope[e].CopyTo(envelopeLanes);
                uint up = eventUp[e];
                uint counted = (up & countRising) | (eventDown[e] & countFalling);
                while (counted != 0)
                {
                    int lane = BitOperations.TrailingZeroCount(counted);
                    counted &= counted - 1;
                    laneEdges[lane][laneCounts[lane]++] = new Edge(
                        chunkStart + (double)crossingLanes[lane],
                        (up & (1u << lane)) != 0,
                        envelopeLanes[lane]);
                }
            }

            for (uint lanes = counting; lanes != 0; lanes &= lanes - 1)
            {
                int lane = BitOperations.TrailingZeroCount(lanes);
                edges[_firstSetting + lane].Added(laneCounts[lane]);
            }

            Array.Clear(laneEdges);

            // Crossing times are kept relative to the chunk start; move them to the next chunk's frame.
            lastCrossing -= Vector256.Create((float)samples.Length);

            _previousSample = previousSample;
            _hpY = hpY;
            _z1 = z1;
            _z2 = z2;
            _previousConditioned = previousConditioned;
            _previousFiltered = previousFiltered;
            _envelope = envelope;
            _state = state;
            _lastCrossing = lastCrossing;
        }
    }
}
