using TapeVault.Core.Formats;

namespace TapeVault.Core.Bytes;

/// <summary>
/// Looks for the first character of an FSK leader (<see cref="CharacterLeadIn"/>) where nothing says yet where
/// characters start. Every fall of the soft decision D to space could be a start bit, and within a run of leader
/// characters several are (a character's own data bits fall to space too); framing from only one of them at a time
/// can lock onto a wrong one for good (each wrongly framed character ends where the next wrong fall begins, the same
/// bit later in every frame). So each fall starts a framer of its own, a few at once, and the first that reads the
/// leader character, well framed, has found where characters start: the loader refuses a leader character that any
/// other framing of a run of it would also read.
/// <para>
/// The framers are made once; nothing is allocated per sample.
/// </para>
/// </summary>
public struct LeaderHunt
{
    /// <summary>Framers under way at once: more than the falls to space one frame of up to 14 bits can hold.</summary>
    private const int Framers = 8;

    private readonly AsyncCharacterFramer[] _framers;
    private readonly int _character;

    public LeaderHunt(ByteFraming framing, CharacterLeadIn leadIn)
    {
        ArgumentNullException.ThrowIfNull(framing);
        ArgumentNullException.ThrowIfNull(leadIn);
        _character = leadIn.Character;
        _framers = new AsyncCharacterFramer[Framers];
        for (int i = 0; i < Framers; i++)
        {
            _framers[i] = new AsyncCharacterFramer(framing);
        }
    }

    /// <summary>Where the start bit of the leader character found by the last <see cref="Step"/> crossed zero.</summary>
    public double FoundStart { get; private set; }

    /// <summary>A fall of D to space at <paramref name="crossing"/>: a framer starts there, if one is free.</summary>
    public readonly void Fall(double crossing, double bitSamples)
    {
        for (int i = 0; i < _framers.Length; i++)
        {
            if (!_framers[i].InCharacter)
            {
                _framers[i].Begin(crossing, bitSamples);
                return;
            }
        }
    }

    /// <summary>
    /// One sample of D: every framer under way takes it. True when one of them has just read the leader character,
    /// well framed (its start is then <see cref="FoundStart"/>, and every framer is stopped).
    /// </summary>
    public bool Step(float d, float previousD, double n, double bitSamples)
    {
        for (int i = 0; i < _framers.Length; i++)
        {
            ref var framer = ref _framers[i];
            if (!framer.InCharacter)
            {
                continue;
            }

            if (framer.Step(d, previousD, n, bitSamples) == CharacterStep.Complete && framer.FramingOk && framer.Value == _character)
            {
                FoundStart = framer.Start;
                Stop();
                return true;
            }
        }

        return false;
    }

    /// <summary>Stops every framer: the leader was found, or the signal lost.</summary>
    public readonly void Stop()
    {
        for (int i = 0; i < _framers.Length; i++)
        {
            _framers[i].Abandon();
        }
    }
}
