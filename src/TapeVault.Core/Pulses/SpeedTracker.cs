namespace TapeVault.Core.Pulses;

/// <summary>
/// Playback speed relative to nominal. The lead-in (a long run of one class) calibrates it: as a plain mean of its
/// pulses, or from the mean of the run <see cref="LeadInFinder"/> found; inside a block a slow first-order loop
/// follows drift and wow, fed only by confident decisions so that a bad pulse cannot drag it.
/// </summary>
public struct SpeedTracker
{
    // Time constant of about 30 pulses: fast enough for wow of a few hertz, slow next to any bit.
    private const double LoopGain = 1.0 / 30;
    private double _calibrationSum;
    private int _calibrationCount;

    public SpeedTracker()
    {
        Speed = 1;
    }

    public double Speed { get; private set; }

    /// <summary>Sets the speed a lead-in measured (see <see cref="LeadInFinder"/>); tracking goes on from there.</summary>
    public void Calibrate(double speed)
    {
        if (!(speed > 0) || !double.IsFinite(speed))
        {
            throw new ArgumentOutOfRangeException(nameof(speed), speed, "A playback speed must be a positive number.");
        }

        Speed = speed;
    }

    public void ResetCalibration()
    {
        _calibrationSum = 0;
        _calibrationCount = 0;
    }

    /// <summary>
    /// Adds one lead-in pulse: <paramref name="measuredSeconds"/> of a class whose nominal is <paramref name="nominalSeconds"/>.
    /// The speed in use changes only once <paramref name="commit"/> says the run is long enough to be a lead-in, so a
    /// short run of look-alike pulses in noise cannot mislead the classification of the real lead-in.
    /// </summary>
    public void Calibrate(double measuredSeconds, double nominalSeconds, bool commit)
    {
        _calibrationSum += measuredSeconds / nominalSeconds;
        _calibrationCount++;
        if (commit)
        {
            Speed = _calibrationCount / _calibrationSum;
        }
    }

    /// <summary>Follows the speed from a pulse classified with a margin well clear of its boundary.</summary>
    public void Track(double measuredSeconds, double nominalSeconds)
    {
        double observed = nominalSeconds / measuredSeconds;
        Speed += LoopGain * (observed - Speed);
    }
}
