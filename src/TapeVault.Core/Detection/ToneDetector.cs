using System.Runtime.CompilerServices;

namespace TapeVault.Core.Detection;

/// <summary>
/// The tone detector of an FSK setting: two sliding quadrature correlators, one bit long, measure the energy at the
/// mark and space tones (<see cref="ToneBank"/>, every setting's in one vector; <see cref="ToneCorrelator"/>, the
/// scalar form); their normalised difference D = (Em − Es)/(Em + Es) is the soft decision (the non-coherent
/// binary FSK detector of the textbooks, e.g. Proakis, Digital Communications). It also says whether there is a
/// carrier at all.
/// <para>
/// Em and Es are each divided by that tone's own level, learnt from the windows that hold one tone alone, so that a
/// capture with high-frequency loss (the mark tone weaker than the space tone) still has D cross zero half a window
/// after each change of tone, where the bit timing expects it. Which windows may teach a level is the caller's
/// call (it knows whether the recording is under way): see <see cref="Next"/>.
/// </para>
/// </summary>
public struct ToneDetector
{
    /// <summary>|raw D| above this: the correlator window holds (almost) only one tone, whose level it then shows.</summary>
    private const double PureTone = 0.9;

    /// <summary>A hair inside <see cref="PureTone"/>: a difference of energies below this share of their total cannot make a raw D past it.</summary>
    private const double PureToneBound = 0.8999;

    /// <summary>The largest energy ratio between the tones that is rebalanced: 16, i.e. 12 dB.</summary>
    private const double MaximumToneImbalance = 16;

    /// <summary>
    /// Tone amplitude (full scale 1) below which a window holds no carrier, whatever the recent level: 1e-4, about
    /// −80 dBFS, the same as the detector bank's hysteresis floor against digital silence. A converter's dither or idle
    /// noise (±1 LSB of 16 bits is 3e-5) would otherwise become carrier once the running level has fallen to it, and
    /// ten minutes of an idle input were read as one long block of noise.
    /// </summary>
    private const double SilenceAmplitude = 1e-4;

    private readonly double _silenceEnergy;
    private readonly double _referenceGain;
    private readonly double _levelGain;
    private readonly double _settledSamples;
    private double _carrierReference;
    private double _markLevel;
    private double _spaceLevel;
    private double _markLevelSamples;
    private double _spaceLevelSamples;

    // The mark level over the space level, bounded (see Next); kept whenever a level changes, valid while both are
    // known, so that a window costs no division for it.
    private double _balance;

    public ToneDetector(double baud, double sampleRate)
    {
        Window = ToneCorrelator.WindowFor(baud, sampleRate);

        // A tone of amplitude A gives a correlator sum of about A·W/2 over a window of W samples.
        _silenceEnergy = Math.Pow(0.5 * SilenceAmplitude * Window, 2);

        // The carrier reference follows a quarter of a second; the tone levels about two bits' worth of windows that
        // hold one tone alone.
        _referenceGain = 1.0 / (0.25 * sampleRate);
        _levelGain = 1.0 / (2.0 * Window);
        _settledSamples = 2.0 * Window;
    }

    /// <summary>The correlator window, in samples: one bit at nominal speed.</summary>
    public int Window { get; }

    /// <summary>Whether the last window held a carrier (its energy is neither silence nor a dropout's).</summary>
    public bool Carrier { get; private set; }

    /// <summary>
    /// Takes the energies at the mark and space tones of the window that ends with one sample (from the setting's lane
    /// of the <see cref="ToneBank"/>, or a <see cref="ToneCorrelator"/>) and returns D for that window (0 without
    /// carrier). A window that holds mark alone teaches the mark level when <paramref name="learnMark"/>, one that
    /// holds space alone the space level when <paramref name="learnSpace"/>: noise before a lead-in can look like either
    /// tone, so only windows of the recording may teach.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public float Next(double mark, double space, bool learnMark, bool learnSpace)
    {
        double total = mark + space;

        // Below 2 % of the usual carrier energy there is no signal to decide on: a dropout, or silence.
        bool carrier = total > 0.02 * _carrierReference && total > _silenceEnergy;
        Carrier = carrier;
        if (!carrier)
        {
            return 0;
        }

        _carrierReference += (total - _carrierReference) * _referenceGain;
        if (_carrierReference < total * 0.05)
        {
            _carrierReference = total * 0.05;
        }

        // Each tone is measured against its own level, learnt where the window holds that tone alone (there the
        // raw D is near ±1, whatever the balance). High-frequency loss (azimuth, worn heads, a deck's low-pass)
        // makes the mark tone weaker than the space tone; unweighted, D would then cross zero early at every fall to
        // space and late at every rise to mark, and the bit timing, which hangs on those crossings, would slip.
        // A level starts as the plain mean of what has been seen (the first windows that pass the test are the least
        // pure ones, at the edge of a lone bit) and becomes a running average once it has enough behind it.
        //
        // raw D = (mark − space)/total is past ±PureTone only where the difference is past ±PureTone·total, less
        // rounding: the division is made only there (PureToneBound is a hair inside PureTone, far more than the
        // rounding of one division), and so only for windows that may teach a level.
        double difference = mark - space;
        if (learnMark && difference > PureToneBound * total)
        {
            double raw = difference / total;
            if (raw > PureTone)
            {
                _markLevelSamples++;
                _markLevel += (mark - _markLevel) * LevelStep(_markLevelSamples);
                KeepBalance();
            }
        }
        else if (learnSpace && difference < -PureToneBound * total)
        {
            double raw = difference / total;
            if (raw < -PureTone)
            {
                _spaceLevelSamples++;
                _spaceLevel += (space - _spaceLevel) * LevelStep(_spaceLevelSamples);
                KeepBalance();
            }
        }

        if (_markLevel <= 0 || _spaceLevel <= 0)
        {
            // Until both tones have been heard alone, assume they are balanced.
            return (float)(difference / total);
        }

        double m = mark / _balance;
        double s = space;
        return (float)((m - s) / (m + s));
    }

    /// <summary>
    /// The gain of a level after <paramref name="samples"/> windows taught it: the plain mean (1/samples) until that
    /// falls below the running average's gain. Past twice the window, 1/samples is below 1/(2·window) whatever the
    /// rounding, so the division is left out there.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private readonly double LevelStep(double samples) => samples > _settledSamples ? _levelGain : Math.Max(_levelGain, 1.0 / samples);

    /// <summary>
    /// Rebalancing is bounded: past 12 dB between the tones (more than any deck's high-frequency loss, common
    /// practice) the weaker tone is mostly gone, and lifting it further would lift noise into confident decisions.
    /// </summary>
    private void KeepBalance()
    {
        if (_markLevel > 0 && _spaceLevel > 0)
        {
            _balance = Math.Clamp(_markLevel / _spaceLevel, 1.0 / MaximumToneImbalance, MaximumToneImbalance);
        }
    }

    /// <summary>A new recording learns its own tone balance: the space level starts again from the next pure window.</summary>
    public void ForgetSpaceLevel()
    {
        _spaceLevel = 0;
        _spaceLevelSamples = 0;
    }
}
