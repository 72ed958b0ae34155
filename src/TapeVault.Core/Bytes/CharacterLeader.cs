using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;

namespace TapeVault.Core.Bytes;

/// <summary>What a character read on a leader's grid was.</summary>
public enum LeaderCharacter
{
    /// <summary>Another of the leader's characters: the run (and the speed it gives) grows.</summary>
    Leader,

    /// <summary>The first character of a sync after a long enough leader: the block begins with it.</summary>
    SyncStart,

    /// <summary>Neither (a damaged character): the grid holds, but not for long.</summary>
    Other,
}

/// <summary>
/// A lead-in of repeated asynchronous characters (<see cref="CharacterLeadIn"/>): a <see cref="LeaderHunt"/> finds its
/// first character wherever characters may start; the characters after it are framed back to back on that grid; the
/// time from one leader character to the next gives the playback speed (<see cref="LeadInFinder"/>, the lead-in's
/// regularity rather than a nominal window); and once enough of them have come, the first character that is not the
/// leader's, well framed, and the first of a sync the layout expects begins the block.
/// </summary>
public struct CharacterLeader
{
    /// <summary>Characters in a row, neither the leader's nor a sync's first, after which a leader counts as lost.</summary>
    private const int Misses = 2;

    /// <summary>How far, in bits, one leader character's start may lie from where the run of them so far puts it.</summary>
    private const double JitterBits = 0.4;

    private readonly int _character;
    private readonly byte[] _syncFirstBytes;
    private readonly double _sampleRate;
    private readonly double _breakSeconds;
    private LeaderHunt _hunt;
    private LeadInFinder _run;
    private double _lastStart;
    private int _misses;

    /// <param name="syncFirstBytes">The first byte of each sync the layout expects after the leader.</param>
    public CharacterLeader(ByteFraming framing, CharacterLeadIn leader, double baud, double sampleRate, byte[] syncFirstBytes)
    {
        ArgumentNullException.ThrowIfNull(framing);
        ArgumentNullException.ThrowIfNull(leader);
        _character = leader.Character;
        _syncFirstBytes = syncFirstBytes ?? throw new ArgumentNullException(nameof(syncFirstBytes));
        _sampleRate = sampleRate;
        _hunt = new LeaderHunt(framing, leader);

        // The leader's characters follow one another a frame apart: a run of near-equal intervals, whose mean is the
        // frame as the tape plays, within the speeds any lead-in may be found at.
        double frame = framing.BitsPerByte / baud;

        // A dropout in the leader breaks it; the leader heard on both sides of a break shorter than the minimum leader
        // is one leader (a block of its own in the break would need that much leader before it), so its run goes on.
        _breakSeconds = leader.MinimumCount * frame;
        _run = new LeadInFinder(
            frame,
            Math.Max(2, leader.MinimumCount - 1),
            frame / (1 + LeadInFinder.MaximumSpeedError),
            frame / (1 - LeadInFinder.MaximumSpeedError),
            JitterBits / framing.BitsPerByte);
    }

    /// <summary>Whether characters are being framed on a leader's grid.</summary>
    public bool InLeader { get; private set; }

    /// <summary>Whether the leader so far is long and regular enough to give the speed and let a sync begin a block.</summary>
    public readonly bool RunFound => _run.Found;

    /// <summary>The playback speed the leader's run gives (once <see cref="RunFound"/>).</summary>
    public readonly double Speed => _run.Speed;

    /// <summary>A fall of D to space at <paramref name="crossing"/> while no leader is found: any fall may be a leader character's start bit.</summary>
    public readonly void Fall(double crossing, double bitSamples) => _hunt.Fall(crossing, bitSamples);

    /// <summary>One sample of D while no leader is found; true when the hunt has just read a leader character (its grid is then held).</summary>
    public bool Hunt(float d, float previousD, double n, double bitSamples)
    {
        if (!_hunt.Step(d, previousD, n, bitSamples))
        {
            return false;
        }

        // The run so far goes on where the leader is found again soon after it broke off (the frames between are not
        // one interval of it, so none is added, and half the minimum must follow); else this is a new leader.
        if (_run.Count == 0 || (_hunt.FoundStart - _lastStart) / _sampleRate > _breakSeconds)
        {
            _run.Reset();
        }
        else
        {
            _run.Bridge();
        }

        InLeader = true;
        _lastStart = _hunt.FoundStart;
        _misses = 0;
        return true;
    }

    /// <summary>A character framed on the leader's grid, its start bit at <paramref name="start"/>.</summary>
    public LeaderCharacter Character(int value, bool framingOk, double start)
    {
        if (framingOk && value == _character)
        {
            _run.Add((start - _lastStart) / _sampleRate);
            _lastStart = start;
            _misses = 0;
            return LeaderCharacter.Leader;
        }

        if (framingOk && _run.Found && Array.IndexOf(_syncFirstBytes, (byte)value) >= 0)
        {
            InLeader = false;
            return LeaderCharacter.SyncStart;
        }

        // A damaged character keeps the grid (the next start bit still follows its stop bits), but not for long.
        _lastStart = start;
        if (++_misses >= Misses)
        {
            InLeader = false;
        }

        return LeaderCharacter.Other;
    }

    /// <summary>A frame passed without a character: a leader's characters follow one another back to back, so it ends.</summary>
    public void Break() => InLeader = false;

    /// <summary>The signal was lost: the leader ends and the hunt stops.</summary>
    public void Lose()
    {
        InLeader = false;
        _hunt.Stop();
    }

    /// <summary>A block began after the leader: the next block needs a leader of its own.</summary>
    public void BlockBegan() => _run.Reset();
}
