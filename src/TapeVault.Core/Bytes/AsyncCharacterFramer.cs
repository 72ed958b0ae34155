using System.Runtime.CompilerServices;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>What one sample did to the character being read.</summary>
public enum CharacterStep
{
    /// <summary>Still reading; or no character under way.</summary>
    Reading,

    /// <summary>The start bit was mark at its centre: a glitch in the mark tone, not a character.</summary>
    FalseStart,

    /// <summary>The last bit was decided: <see cref="AsyncCharacterFramer.Value"/> and its decisions are ready.</summary>
    Complete,
}

/// <summary>
/// An asynchronous serial character on a soft decision D (positive = mark, 1 = certain): from the start bit's fall to
/// space, each bit is decided one bit period apart at its centre, where a one-bit correlator window covers exactly
/// that bit. A change of tone inside the character marks a bit boundary and pulls the timing onto it. The character
/// is the start bit, the data bits in the profile's order, the parity bit if any, and the first stop bit; further
/// stop bits are mark before the next start bit and are not decided.
/// <para>
/// The start and stop bits have known values. Their logged decision distance is signed toward that value, so a stop
/// bit read as space is a decision on the wrong side of its boundary (error odds one half), not a confident one: a
/// byte whose frame is broken cannot be reported as near-certain.
/// </para>
/// </summary>
public struct AsyncCharacterFramer
{
    private const double PhaseLoopGain = 0.5;

    private readonly ByteFraming _framing;
    private readonly double _decisionLead;
    private readonly float[] _levels;
    private int _bitIndex;
    private double _nextBitTime;

    /// <param name="framing">The character's frame.</param>
    /// <param name="decisionLead">
    /// How far before a bit's centre, in the decoder's steps, a step may decide it (0 when D is read every sample: the
    /// first step at or after the centre). Where D is read only every few samples (<see cref="Detection.ToneBank.Stride"/>),
    /// the first reading at or after the centre lies up to a whole stride after it; a lead of half a reading less half a
    /// sample centres the readings that decide on the centre as closely as reading every sample does (on average half a
    /// sample late).
    /// </param>
    public AsyncCharacterFramer(ByteFraming framing, double decisionLead = 0)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(decisionLead);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(decisionLead, 0.5);
        _framing = framing ?? throw new ArgumentNullException(nameof(framing));
        _decisionLead = decisionLead;
        FrameBits = 1 + framing.DataBits + (framing.Parity == Parity.None ? 0 : 1) + 1;
        _levels = new float[FrameBits];
    }

    /// <summary>The bits decided per character: start, data, parity, first stop.</summary>
    public int FrameBits { get; }

    public bool InCharacter { get; private set; }

    /// <summary>Where the start bit's D crossed zero (half a window after the mark-to-space boundary), as the timing has corrected it.</summary>
    public double Start { get; private set; }

    /// <summary>The bits decided so far (0 = the start bit).</summary>
    public int BitsDecided => _bitIndex;

    /// <summary>The step from which <see cref="Step"/> decides the next bit (its centre less the decision lead); before it, a step with no change of tone does nothing.</summary>
    public readonly double NextBitTime => _nextBitTime;

    /// <summary>The completed character's value.</summary>
    public int Value { get; private set; }

    /// <summary>Whether the completed character's stop bit was mark and its parity held.</summary>
    public bool FramingOk { get; private set; }

    /// <summary>The D of each decided bit of the completed character.</summary>
    public readonly ReadOnlySpan<float> Levels => _levels;

    public void Begin(double crossing, double bitSamples)
    {
        InCharacter = true;
        _bitIndex = 0;
        Start = crossing;
        _nextBitTime = crossing + 0.5 * bitSamples - _decisionLead;
    }

    /// <summary>The signal was lost: the character in progress is void.</summary>
    public void Abandon() => InCharacter = false;

    /// <summary>One sample of D (and the one before it) at sample <paramref name="n"/> while a character is under way.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public CharacterStep Step(float d, float previousD, double n, double bitSamples)
    {
        // Only a change of tone after the start bit moves the timing: most samples cost this one test.
        if ((d < 0) != (previousD < 0) && _bitIndex != 0)
        {
            TrackPhase(d, previousD, n, bitSamples);
        }

        return n >= _nextBitTime ? DecideBit(d, bitSamples) : CharacterStep.Reading;
    }

    /// <summary>
    /// The decision distance of bit <paramref name="bit"/> of <paramref name="frameBits"/> with soft value
    /// <paramref name="d"/>: data and parity bits may be either value, the distance is |D|; the start bit must be space
    /// and the stop bit mark, so the distance is signed toward that value and a wrong one lands on 0 (odds one half).
    /// </summary>
    public static float Distance(int bit, int frameBits, float d) => bit == 0 ? -d : bit == frameBits - 1 ? d : Math.Abs(d);

    /// <summary>The smallest decision distance of a character's bits (below 0: a start or stop bit on the wrong side).</summary>
    public static float LeastDistance(ReadOnlySpan<float> levels)
    {
        float least = float.MaxValue;
        for (int b = 0; b < levels.Length; b++)
        {
            least = Math.Min(least, Distance(b, levels.Length, levels[b]));
        }

        return least;
    }

    private void TrackPhase(float d, float previousD, double n, double bitSamples)
    {
        // A change of tone inside the character marks a bit boundary: its D crossing should fall a whole number of bits after the start's.
        double crossing = n - 1 + previousD / (previousD - d);
        double bits = (crossing - Start) / bitSamples;
        double error = (bits - Math.Round(bits)) * bitSamples;
        if (Math.Abs(error) < 0.3 * bitSamples)
        {
            Start += PhaseLoopGain * error;
            _nextBitTime += PhaseLoopGain * error;
        }
    }

    private CharacterStep DecideBit(float d, double bitSamples)
    {
        _levels[_bitIndex] = d;
        if (_bitIndex == 0 && d >= 0)
        {
            InCharacter = false;
            return CharacterStep.FalseStart;
        }

        _bitIndex++;
        _nextBitTime = Start + (_bitIndex + 0.5) * bitSamples - _decisionLead;
        if (_bitIndex < FrameBits)
        {
            return CharacterStep.Reading;
        }

        InCharacter = false;
        int value = 0;
        int ones = 0;
        for (int b = 0; b < _framing.DataBits; b++)
        {
            if (_levels[1 + b] >= 0)
            {
                ones++;
                value |= 1 << _framing.DataBitShift(b);
            }
        }

        // A stop bit needs mark tone: D = 0 (no carrier at all) is not a mark.
        bool framingOk = _levels[FrameBits - 1] > 0;
        if (_framing.Parity != Parity.None)
        {
            framingOk &= _framing.ParityHolds(ones + (_levels[1 + _framing.DataBits] >= 0 ? 1 : 0));
        }

        Value = value;
        FramingOk = framingOk;
        return CharacterStep.Complete;
    }
}
