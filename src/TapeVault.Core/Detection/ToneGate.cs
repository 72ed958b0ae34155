using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;

namespace TapeVault.Core.Detection;

/// <summary>
/// The part of a tone detector that hangs on the tone energies alone, never on what the decoder is doing: whether a
/// window holds a carrier at all (against a running carrier reference and a silence floor), and whether it holds one
/// tone alone (|raw D| past <see cref="PureTone"/>, raw D = (Em − Es)/(Em + Es)), the windows that may teach that
/// tone's level. Written once as an operator with a scalar form (one setting: <see cref="Next(double, double)"/>, the
/// reference) and a vector form (four settings in the lanes of a <see cref="Vector256{T}"/>: the
/// <see cref="ToneBank"/>'s pass), in the manner of System.Numerics.Tensors' operators, the same operations in the
/// same order, so every lane's answer is bit for bit its setting's scalar one. What the decoder's state decides (which
/// windows teach, the tone levels, the soft decision D) stays in <see cref="ToneDetector"/>.
/// </summary>
public struct ToneGate
{
    /// <summary>|raw D| above this: the correlator window holds (almost) only one tone, whose level it then shows.</summary>
    internal const double PureTone = 0.9;

    /// <summary>A hair inside <see cref="PureTone"/>: a difference of energies below this share of their total cannot make a raw D past it.</summary>
    internal const double PureToneBound = 0.8999;

    /// <summary>
    /// A difference of energies past this share of their total makes raw D past <see cref="PureTone"/> however the
    /// product and the quotient round (each is within half a unit in the last place, about 1e-16, of the exact value;
    /// 1e-9 leaves a margin of millions of times), and one inside <see cref="SurelyNotPure"/> makes it not: only a window
    /// between the two (raw D within 1e-9 of ±PureTone: rare) needs the division that tells.
    /// </summary>
    private const double SurelyPure = PureTone + 1e-9;

    /// <summary>See <see cref="SurelyPure"/>.</summary>
    private const double SurelyNotPure = PureTone - 1e-9;

    /// <summary>Below this share of the usual carrier energy there is no signal to decide on: a dropout, or silence.</summary>
    private const double CarrierShare = 0.02;

    /// <summary>The carrier reference never falls below this share of the window's energy, so it recovers at once after a loud stretch.</summary>
    private const double ReferenceFloor = 0.05;

    /// <summary>
    /// Tone amplitude (full scale 1) below which a window holds no carrier, whatever the recent level: 1e-4, about
    /// −80 dBFS, the same as the detector bank's hysteresis floor against digital silence. A converter's dither or idle
    /// noise (±1 LSB of 16 bits is 3e-5) would otherwise become carrier once the running level has fallen to it, and
    /// ten minutes of an idle input were read as one long block of noise.
    /// </summary>
    private const double SilenceAmplitude = 1e-4;

    /// <summary>Bit of a window's answer (<see cref="Next(double, double)"/>): the window holds a carrier.</summary>
    public const int Carrier = 1;

    /// <summary>Bit of a window's answer: the window holds the mark tone alone.</summary>
    public const int PureMark = 2;

    /// <summary>Bit of a window's answer: the window holds the space tone alone.</summary>
    public const int PureSpace = 4;

    private readonly double _silenceEnergy;
    private readonly double _referenceGain;
    private double _reference;

    public ToneGate(int window, double sampleRate)
    {
        // A tone of amplitude A gives a correlator sum of about A·W/2 over a window of W samples.
        _silenceEnergy = Math.Pow(0.5 * SilenceAmplitude * window, 2);

        // The carrier reference follows a quarter of a second.
        _referenceGain = 1.0 / (0.25 * sampleRate);
    }

    /// <summary>The silence floor and the reference's gain, broadcast to every lane for the vector form.</summary>
    internal readonly (Vector256<double> Silence, Vector256<double> Gain) Lanes =>
        (Vector256.Create(_silenceEnergy), Vector256.Create(_referenceGain));

    /// <summary>
    /// The scalar form: takes the energies at the mark and space tones of one window and gives its
    /// <see cref="Carrier"/>, <see cref="PureMark"/> and <see cref="PureSpace"/> bits (the last two only with carrier).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public int Next(double mark, double space)
    {
        double total = mark + space;
        bool carrier = total > CarrierShare * _reference && total > _silenceEnergy;
        if (!carrier)
        {
            return 0;
        }

        _reference += (total - _reference) * _referenceGain;
        if (_reference < total * ReferenceFloor)
        {
            _reference = total * ReferenceFloor;
        }

        // Whether raw D is past ±PureTone, told from the difference against the total where that is sure, and by the
        // division only in the narrow band where it is not (SurelyPure): the same answer as raw D's, without the
        // division in nearly every window. There raw D is past ±PureTone only where the difference is past
        // ±PureToneBound·total: both are asked, as the vector form asks them, so the two agree to the bit however the
        // rounding of the division falls.
        double difference = mark - space;
        bool pureMark = difference > SurelyPure * total;
        bool pureSpace = difference < -SurelyPure * total;
        if (!pureMark && !pureSpace && (difference > SurelyNotPure * total || difference < -SurelyNotPure * total))
        {
            double raw = difference / total;
            pureMark = difference > PureToneBound * total && raw > PureTone;
            pureSpace = difference < -PureToneBound * total && raw < -PureTone;
        }

        return Carrier | (pureMark ? PureMark : 0) | (pureSpace ? PureSpace : 0);
    }

    /// <summary>
    /// The vector form: four settings' windows at once, lane by lane the scalar form's operations (the reference moves
    /// only in lanes with carrier). Gives the three answers as lane masks.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<double> Next(
        Vector256<double> mark, Vector256<double> space, ref Vector256<double> reference, Vector256<double> silence, Vector256<double> gain,
        out Vector256<double> pureMark, out Vector256<double> pureSpace)
    {
        var total = mark + space;
        var carrier = Vector256.GreaterThan(total, Vector256.Create(CarrierShare) * reference) & Vector256.GreaterThan(total, silence);
        var moved = reference + ((total - reference) * gain);
        var floor = total * Vector256.Create(ReferenceFloor);
        moved = Vector256.ConditionalSelect(Vector256.LessThan(moved, floor), floor, moved);
        reference = Vector256.ConditionalSelect(carrier, moved, reference);

        var difference = mark - space;
        var markSure = Vector256.GreaterThan(difference, Vector256.Create(SurelyPure) * total);
        var spaceSure = Vector256.LessThan(difference, Vector256.Create(-SurelyPure) * total);
        var unsure = Vector256.AndNot(Vector256.GreaterThan(difference, Vector256.Create(SurelyNotPure) * total), markSure)
            | Vector256.AndNot(Vector256.LessThan(difference, Vector256.Create(-SurelyNotPure) * total), spaceSure);
        if (unsure != Vector256<double>.Zero)
        {
            // Rare: some lane's raw D lies within a hair of ±PureTone, and only the division tells.
            var raw = difference / total;
            markSure = Vector256.GreaterThan(difference, Vector256.Create(PureToneBound) * total)
                & Vector256.GreaterThan(raw, Vector256.Create(PureTone));
            spaceSure = Vector256.LessThan(difference, Vector256.Create(-PureToneBound) * total)
                & Vector256.LessThan(raw, Vector256.Create(-PureTone));
        }

        pureMark = carrier & markSure;
        pureSpace = carrier & spaceSure;
        return carrier;
    }
}
