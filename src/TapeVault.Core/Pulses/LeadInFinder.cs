namespace TapeVault.Core.Pulses;

/// <summary>
/// Finds a lead-in by its regularity rather than by classifying its pulses: a long run of near-equal pulses, each
/// close to the run's running mean, whose mean lies where the lead-in class would read at a playback speed within
/// <see cref="MaximumSpeedError"/> of nominal. Classification windows are narrower than that
/// (a boundary between classes 25 % apart lies 12 % from each), so judging each pulse against them before the speed
/// is known loses lead-ins on tapes a few per cent off speed; the run's mean is the speed calibration itself.
/// <para>
/// Per-setting state in a handful of fields; nothing is allocated per pulse.
/// </para>
/// </summary>
public struct LeadInFinder
{
    /// <summary>How far off nominal a tape may play and still have its lead-in found (±12 %).</summary>
    public const double MaximumSpeedError = 0.12;

    // The running mean follows the last few dozen pulses, so the speed it gives is the speed where the lead-in ends,
    // next to the block, while one jittery pulse moves it by under 0.1 %.
    private const int MeanWindow = 64;

    private readonly double _nominal;
    private readonly int _minimum;
    private readonly double _lowestMean;
    private readonly double _highestMean;
    private readonly double _tolerance;
    private readonly double _breakSeconds;
    private double _mean;
    private int _count;

    // A run broken by damage, held while the break lasts: its count and mean, and the time the break may still take.
    private int _heldCount;
    private double _heldMean;
    private double _breakLeft;

    // Where the current run was taken up again after a break (0: it had none).
    private int _bridged;

    /// <param name="nominalSeconds">The lead-in pulse's nominal duration.</param>
    /// <param name="minimumCount">Pulses the run must hold before it counts as a lead-in.</param>
    /// <param name="lowestMeanSeconds">The shortest run mean accepted (at most the nominal over 1 + <see cref="MaximumSpeedError"/>).</param>
    /// <param name="highestMeanSeconds">The longest run mean accepted.</param>
    /// <param name="tolerance">How far (a fraction of the run's mean) each pulse of the run may lie from its running mean.</param>
    /// <param name="breakSeconds">
    /// The longest break (pulses that do not fit, or a loss of signal: <see cref="Interrupt"/>) after which a run is
    /// taken up again with its count whole, when pulses that fit its mean come back (0: none; every break ends the run).
    /// </param>
    public LeadInFinder(double nominalSeconds, int minimumCount, double lowestMeanSeconds, double highestMeanSeconds, double tolerance, double breakSeconds = 0)
    {
        if (!(nominalSeconds > 0) || !(lowestMeanSeconds > 0) || !(lowestMeanSeconds <= nominalSeconds) || !(highestMeanSeconds >= nominalSeconds))
        {
            throw new ArgumentException($"A lead-in needs 0 < lowest ≤ nominal ≤ highest, not {lowestMeanSeconds}, {nominalSeconds}, {highestMeanSeconds}.", nameof(nominalSeconds));
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(minimumCount, 2);
        if (!(tolerance > 0 && tolerance < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(tolerance), tolerance, "A tolerance is a fraction between 0 and 1.");
        }

        ArgumentOutOfRangeException.ThrowIfNegative(breakSeconds);
        _tolerance = tolerance;
        _breakSeconds = breakSeconds;
        _nominal = nominalSeconds;
        _minimum = minimumCount;
        _lowestMean = lowestMeanSeconds;
        _highestMean = highestMeanSeconds;
    }

    /// <summary>
    /// The finder for a lead-in of class <paramref name="index"/>: its mean may lie anywhere a speed within ±12 % puts
    /// it, but never past the class's own decision boundaries, so a run of a neighbouring class played at nominal
    /// speed is never taken for the lead-in. Each pulse must lie within half the way from the class's nominal to its
    /// nearer boundary (in ratio) of the run's mean: the window a lead-in pulse always had, centred on what the tape
    /// plays rather than on the nominal, so it no longer depends on the speed.
    /// </summary>
    public static LeadInFinder ForClass(PulseClassifier classifier, int index, int minimumCount, double breakSeconds = 0)
    {
        ArgumentNullException.ThrowIfNull(classifier);
        double nominal = classifier.NominalSeconds(index);
        var (low, high) = classifier.ClassRange(index);
        double halfWay = 0.5 * Math.Min(Math.Log(nominal / low), Math.Log(high / nominal));
        return new LeadInFinder(
            nominal,
            minimumCount,
            Math.Max(nominal / (1 + MaximumSpeedError), low),
            Math.Min(nominal / (1 - MaximumSpeedError), high),
            Math.Exp(halfWay) - 1,
            breakSeconds);
    }

    /// <summary>Pulses in the current run.</summary>
    public readonly int Count => _count;

    /// <summary>The run's running mean duration, in seconds as measured.</summary>
    public readonly double MeanSeconds => _mean;

    /// <summary>
    /// Whether the current run is a lead-in: long enough, and its mean where the lead-in class reads within the speed
    /// range. A run taken up again after a break needs half the minimum after it too: a pulse or two that fit (a run
    /// of equal bits in a block's data, after a sync that could not be read) are not the lead-in going on.
    /// </summary>
    public readonly bool Found => _count >= _minimum && _count - _bridged >= (_bridged > 0 ? _minimum / 2 : 0) && _mean >= _lowestMean && _mean <= _highestMean;

    /// <summary>The playback speed the run's mean gives (1.03: 3 % fast, so pulses read 3 % short).</summary>
    public readonly double Speed => _nominal / _mean;

    /// <summary>
    /// Adds one pulse as measured. Returns whether it joined the current run; a pulse that did not starts a new run.
    /// </summary>
    public bool Add(double seconds)
    {
        if (_heldCount > 0)
        {
            if (Fits(seconds, _heldMean))
            {
                // The run held over a break goes on: what the break hid was damage, not the end of the lead-in.
                _bridged = _heldCount;
                _count = _heldCount + 1;
                _mean = _heldMean + ((seconds - _heldMean) / Math.Min(_count, MeanWindow));
                _heldCount = 0;
                return true;
            }

            // Every pulse that does not take the held run up again is part of the break, whatever run it makes.
            _breakLeft -= seconds;
            if (_breakLeft < 0)
            {
                _heldCount = 0;
            }
        }

        if (_count > 0 && Fits(seconds, _mean))
        {
            _count++;
            _mean += (seconds - _mean) / Math.Min(_count, MeanWindow);
            return true;
        }

        Hold(seconds);
        _count = 1;
        _mean = seconds;
        _bridged = 0;
        return false;
    }

    /// <summary>
    /// The signal was lost while the run went on (a dropout): the run is held for the break the finder allows, as if
    /// pulses that do not fit had come, and taken up again by the first pulse that fits it.
    /// </summary>
    public void Interrupt()
    {
        Hold(0);
        _count = 0;
        _mean = 0;
        _bridged = 0;
    }

    /// <summary>
    /// The run goes on after a break whose pulses were not measured (its caller knows the break was short): nothing is
    /// added for the break, and the run needs half the minimum after it (see <see cref="Found"/>).
    /// </summary>
    public void Bridge() => _bridged = _count;

    /// <summary>Forgets the run, and any run held over a break: after a block starts, or where the lead-in cannot go on.</summary>
    public void Reset()
    {
        _count = 0;
        _mean = 0;
        _heldCount = 0;
        _bridged = 0;
    }

    private readonly bool Fits(double seconds, double mean) => Math.Abs(seconds - mean) <= _tolerance * mean;

    /// <summary>The current run breaks, <paramref name="spent"/> seconds of the break gone: it is held if breaks are allowed and it is longer than one held already.</summary>
    private void Hold(double spent)
    {
        if (_breakSeconds > 0 && _count >= 2 && _count > _heldCount)
        {
            _heldCount = _count;
            _heldMean = _mean;
            _breakLeft = _breakSeconds - spent;
        }
    }
}
