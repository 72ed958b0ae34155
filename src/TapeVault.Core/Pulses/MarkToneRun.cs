using System.Runtime.CompilerServices;

namespace TapeVault.Core.Pulses;

/// <summary>
/// How long the line has carried mark tone, from a tone format's soft decision D (positive for mark): the run of mark
/// before a fall to space (a start bit may begin a block only after enough of it), and whether the last stretch about
/// as long as the profile's minimum lead-in was mostly clear mark (<see cref="HeardLeadIn"/>). A handful of fields,
/// advanced once a sample while no character is being read.
/// </summary>
public struct MarkToneRun
{
    private readonly double _evidenceGain;
    private double _beforeStart;
    private int _negativeRun;
    private double _evidence;

    /// <param name="leadInSamples">The profile's minimum lead-in, in samples (the evidence's time constant is half of it).</param>
    public MarkToneRun(double leadInSamples)
    {
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(leadInSamples);
        _evidenceGain = 2.0 / leadInSamples;
    }

    /// <summary>The run of mark tone so far, in samples.</summary>
    public double Samples { get; private set; }

    /// <summary>
    /// Mostly clear mark tone (D above 0.5) over about the lead-in's length: a running mean of ±1, with a time
    /// constant of half the minimum lead-in, above 0.4 (seven windows in ten clearly mark; white noise alone gives
    /// one in four, since D is then uniform on ±1). A fraction rather than an unbroken run, so that the noise of a
    /// poor capture, which breaks any run of mark now and then, does not hide a lead-in.
    /// </summary>
    public readonly bool HeardLeadIn => _evidence > 0.4;

    /// <summary>
    /// One sample of D outside a character. The run survives the slope down to zero, so it is still whole when a
    /// start bit's crossing comes, and it survives dips below zero shorter than a quarter bit: noise makes those in
    /// any lead-in heard at low SNR, and a real space lasts a whole bit.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Step(float d, double bitSamples)
    {
        _negativeRun = d < 0 ? _negativeRun + 1 : 0;
        _evidence += ((d > 0.5f ? 1 : -1) - _evidence) * _evidenceGain;
        Samples = d > 0.3f ? Samples + 1 : _negativeRun > 0.25 * bitSamples ? 0 : Samples;
    }

    /// <summary>A character's start bit began: the run before it is kept, in case it was a dip and not a start bit.</summary>
    public void StartBit() => _beforeStart = Samples;

    /// <summary>
    /// The start bit was a glitch in the mark tone: noise dips like this are common in a noisy lead-in, so the run
    /// seen before it stands, as if the dip had not happened, <paramref name="samplesSinceStart"/> longer.
    /// </summary>
    public void FalseStart(double samplesSinceStart) => Samples = _beforeStart + samplesSinceStart;

    /// <summary>The run starts again at <paramref name="samples"/> (half a stop bit after a character; 0 after a loss of signal).</summary>
    public void Restart(double samples) => Samples = samples;
}
