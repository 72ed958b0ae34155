namespace TapeVault.Core.Pulses;

/// <summary>
/// Playback speed relative to nominal. The lead-in (a long run of one class, found by <see cref="LeadInFinder"/>)
/// calibrates it from the run's mean; inside a block a slow first-order loop follows drift and wow, fed only by
/// confident decisions so that a bad pulse cannot drag it.
/// </summary>
public struct SpeedTracker
{
    // Time constant of about 30 pulses: fast enough for wow of a few hertz, slow next to any bit.
    private const double LoopGain = 1.0 / 30;

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

    /// <summary>Follows the speed from a pulse classified with a margin well clear of its boundary.</summary>
    public void Track(double measuredSeconds, double nominalSeconds)
    {
        double observed = nominalSeconds / measuredSeconds;
        Speed += LoopGain * (observed - Speed);
    }
}
