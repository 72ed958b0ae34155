using TapeVault.Core.Dsp;

namespace TapeVault.Core.Synthesis;

/// <summary>
/// Renders flux reversals into the samples a capture would hold. Each reversal reads back as a Lorentzian pulse
/// V0 / (1 + (2t/PW50)²) (Mee and Daniel, Magnetic Recording Technology); a deck's line output integrates that back
/// into a band-limited copy of the magnetisation. Speed, wow and flutter map capture time to tape time; azimuth error
/// averages across the track (a boxcar whose response is sin x / x); then come the deck's bandwidth, dropouts, hum
/// and noise, and last the converter: its drive into hard clipping and its resolution. Print-through enters as faint
/// copies of the reversals one wrap earlier and later, read back like the recording. Rendering streams: call
/// <see cref="Render(Span{float})"/> (or, for a stereo capture, <see cref="Render(Span{float}, Span{float})"/>) with
/// chunk after chunk.
/// </summary>
public sealed class ChannelModel
{
    private const double LorentzianReach = 25;

    private readonly ChannelDamage _damage;
    private readonly IEnumerator<(double Time, double Weight)> _reversals;
    private readonly double _pw50;
    private readonly double _halfPw50Inverse;
    private readonly double _leak;
    private readonly List<Dropout> _dropouts;
    private readonly Random _noiseRandom;
    private readonly float[] _boxcar;
    private readonly double _boxcarLength;
    private readonly double _noiseSigma;
    private readonly double _drive;
    private readonly double _quantumScale;
    private readonly Random _ditherRandom;
    private readonly Random _deadRandom;
    private readonly double _deadSigma;
    private Biquad _deckLowPass;
    private readonly List<double> _window = new(64);
    private readonly List<double> _windowWeight = new(64);
    private double _nextWeight;
    private double _nextReversal;
    private bool _reversalsDone;
    private long _sampleIndex;
    private readonly List<double> _windowArctan = new(64);

    // The erased tape before the recording reads as nothing; the first reversal steps the line output up from there.
    private double _line;
    private int _boxcarPosition;
    private double _boxcarSum;

    /// <param name="reversals">Reversal times in seconds of tape at nominal speed, ascending.</param>
    /// <param name="signalRms">RMS of the clean signal, for setting the noise from <see cref="ChannelDamage.SnrDb"/>; null to measure it from the reversals' density.</param>
    public ChannelModel(IEnumerable<double> reversals, ChannelDamage damage, double tapeSeconds, double? signalRms = null)
    {
        ArgumentNullException.ThrowIfNull(reversals);
        _damage = damage ?? throw new ArgumentNullException(nameof(damage));
        if (damage.QuantizeBits is { } bits && bits is not (8 or 16 or 24))
        {
            throw new ArgumentOutOfRangeException(nameof(damage), bits, "QuantizeBits must be 8, 16 or 24.");
        }

        _reversals = WithPrintThrough(reversals, damage).GetEnumerator();
        _drive = damage.ClipDriveDb is { } drive ? Math.Pow(10, drive / 20) : 1;
        _quantumScale = damage.QuantizeBits is { } b ? Math.Pow(2, b - 1) : 0;
        _ditherRandom = new Random(unchecked((damage.Seed * 7927) + 29));
        _deadRandom = new Random(unchecked((damage.Seed * 7933) + 31));
        _deadSigma = damage.DeadChannelNoiseDbfs is { } dead ? Math.Pow(10, dead / 20) : 0;
        _pw50 = damage.Pw50Microseconds * 1e-6;
        _halfPw50Inverse = 2 / _pw50;
        _leak = Math.Exp(-2 * Math.PI * 10.0 / damage.SampleRate);
        _deckLowPass = new Biquad(DeckLowPass(damage));
        _noiseRandom = new Random(damage.Seed);
        TotalSamples = (long)Math.Ceiling((tapeSeconds / damage.Speed + 2 * damage.MarginSeconds) * damage.SampleRate);
        _dropouts = [.. damage.Dropouts];
        var dropoutRandom = new Random(unchecked(damage.Seed * 7919 + 17));
        double totalSeconds = (double)TotalSamples / damage.SampleRate;
        int count = Poisson(dropoutRandom, damage.RandomDropoutsPerMinute * totalSeconds / 60);
        for (int i = 0; i < count; i++)
        {
            double start = dropoutRandom.NextDouble() * totalSeconds;
            double duration = 0.005 + 0.055 * dropoutRandom.NextDouble();
            double u = dropoutRandom.NextDouble();
            double depth = damage.RandomDropoutDepthDb is var (shallowest, deepest)
                ? 1 - Math.Pow(10, -(shallowest + ((deepest - shallowest) * u)) / 20)
                : 0.9 + 0.1 * u;
            _dropouts.Add(new Dropout(start, duration, depth));
        }

        _dropouts.Sort((a, b) => a.StartSeconds.CompareTo(b.StartSeconds));

        // Azimuth: the gap sees the track a time w·tanθ/v apart from one edge to the other; averaging over that time is the loss.
        _boxcarLength = AzimuthSmearSeconds(damage) * damage.SampleRate / damage.Speed;
        // The newest floor(L) samples at full weight and the one before them at the leftover fraction: weights sum to L.
        _boxcar = new float[Math.Max(1, (int)Math.Floor(_boxcarLength) + 1)];

        double rms = signalRms ?? (damage.Chain == ReadChain.LineOutput ? 0.75 : 0.4) * damage.Level;
        _noiseSigma = damage.SnrDb is { } snr ? rms * Math.Pow(10, -snr / 20) : 0;
        Advance();
    }

    public long TotalSamples { get; }

    public double NoiseSigma => _noiseSigma;

    /// <summary>Every dropout of the capture, given and drawn, in order of start (seconds of capture time).</summary>
    public IReadOnlyList<Dropout> Dropouts => _dropouts;

    /// <summary>1 for a mono capture, 2 for a stereo one.</summary>
    public int Channels => _damage.Channels == CaptureChannels.Mono ? 1 : 2;

    /// <summary>The azimuth smear as a time of tape: w·tan θ / v.</summary>
    public static double AzimuthSmearSeconds(ChannelDamage damage)
    {
        ArgumentNullException.ThrowIfNull(damage);
        return damage.TrackWidthMm * 0.1 * Math.Tan(damage.AzimuthDegrees * Math.PI / 180) / damage.TapeSpeedCmPerSecond;
    }

    /// <summary>The closed-form azimuth loss in dB at a recorded frequency: 20·log10|sin x / x|, x = π·w·tan θ / λ (Mee and Daniel).</summary>
    public static double AzimuthLossDb(ChannelDamage damage, double frequencyHz)
    {
        ArgumentNullException.ThrowIfNull(damage);
        double wavelengthCm = damage.TapeSpeedCmPerSecond / frequencyHz;
        double x = Math.PI * damage.TrackWidthMm * 0.1 * Math.Tan(damage.AzimuthDegrees * Math.PI / 180) / wavelengthCm;
        return x == 0 ? 0 : 20 * Math.Log10(Math.Abs(Math.Sin(x) / x));
    }

    /// <summary>The deck's band limit: a second-order Butterworth low-pass at <see cref="ChannelDamage.DeckLowPassHz"/>, or none.</summary>
    public static BiquadCoefficients DeckLowPass(ChannelDamage damage)
    {
        ArgumentNullException.ThrowIfNull(damage);
        return damage.DeckLowPassHz is { } lp ? BiquadCoefficients.ButterworthLowPass(lp, damage.SampleRate) : BiquadCoefficients.PassThrough;
    }

    /// <summary>The deck's band limit's loss in dB at a frequency of the capture (at most 0 below the cut-off's region).</summary>
    public static double DeckLowPassLossDb(ChannelDamage damage, double frequencyHz) =>
        DeckLowPass(damage).GainDb(frequencyHz, damage.SampleRate);

    /// <summary>Tape time (nominal seconds) at capture time t: ∫ speed·(1 + wow + flutter) dt.</summary>
    public double TapeTime(double t)
    {
        var d = _damage;

        // No wow or flutter adds exactly nothing, so their cosines are skipped.
        double wow = d.WowPercent == 0 ? 0 : d.WowPercent / 100 / (2 * Math.PI * d.WowHz) * (1 - Math.Cos(2 * Math.PI * d.WowHz * t));
        double flutter = d.FlutterPercent == 0 ? 0 : d.FlutterPercent / 100 / (2 * Math.PI * d.FlutterHz) * (1 - Math.Cos(2 * Math.PI * d.FlutterHz * t));
        return d.Speed * (t - d.MarginSeconds + wow + flutter);
    }

    /// <summary>
    /// Fills both channels of a stereo capture with the next samples; returns how many (0 at the end). A dead
    /// channel holds silence or the noise of a live input with nothing on it, through the same converter.
    /// </summary>
    public int Render(Span<float> left, Span<float> right)
    {
        if (left.Length != right.Length)
        {
            throw new ArgumentException("The two channels need buffers of one length.", nameof(right));
        }

        var signal = _damage.Channels == CaptureChannels.LeftDead ? right : left;
        var other = _damage.Channels == CaptureChannels.LeftDead ? left : right;
        int count = Render(signal);
        if (_damage.Channels is CaptureChannels.Mono or CaptureChannels.Stereo)
        {
            signal[..count].CopyTo(other);
            return count;
        }

        for (int i = 0; i < count; i++)
        {
            other[i] = (float)Convert(_deadSigma > 0 ? _deadSigma * Gaussian(_deadRandom) : 0);
        }

        return count;
    }

    /// <summary>Fills <paramref name="output"/> with the next samples of the signal; returns how many (0 at the end).</summary>
    public int Render(Span<float> output)
    {
        int count = (int)Math.Min(output.Length, TotalSamples - _sampleIndex);
        var d = _damage;
        double reach = LorentzianReach * _pw50;
        bool lineOutput = d.Chain == ReadChain.LineOutput;
        for (int i = 0; i < count; i++)
        {
            double t = (double)(_sampleIndex + i) / d.SampleRate;
            double tape = TapeTime(t);
            while (!_reversalsDone && _nextReversal < tape + reach)
            {
                _window.Add(_nextReversal);
                _windowWeight.Add(_nextWeight);
                _windowArctan.Add(Math.Atan((tape - _nextReversal) * _halfPw50Inverse));
                Advance();
            }

            while (_window.Count > 0 && _window[0] < tape - reach)
            {
                _window.RemoveAt(0);
                _windowArctan.RemoveAt(0);
                _windowWeight.RemoveAt(0);
            }

            // Head voltage: alternating Lorentzian pulses, one per reversal. The deck's equalisation integrates it
            // (leakily, as real playback amplifiers roll off below a few tens of hertz); the integral of a Lorentzian
            // over one sample step is exact in closed form, (PW50/2)·Δarctan(2t/PW50), so the line output stays right
            // even when a sample step is as long as the pulse.
            // Each chain needs only its own sum (the arctangents are most of the work).
            double head = 0;
            double step = 0;
            for (int k = 0; k < _window.Count; k++)
            {
                double x = (tape - _window[k]) * _halfPw50Inverse;
                double weight = _windowWeight[k];
                if (lineOutput)
                {
                    double arctan = Math.Atan(x);
                    step += weight * (arctan - _windowArctan[k]);
                    _windowArctan[k] = arctan;
                }
                else
                {
                    head += weight / (1 + x * x);
                }
            }

            _line = _line * _leak + step * (2 / Math.PI);
            double value = lineOutput ? _line : head;
            output[i] = (float)AzimuthAverage(value);
        }

        _deckLowPass.Process(output[..count]);
        for (int i = 0; i < count; i++)
        {
            double t = (double)(_sampleIndex + i) / d.SampleRate;
            double value = output[i] * DropoutGain(t) * (d.Invert ? -1 : 1) * d.Level;
            if (d.HumLevel > 0)
            {
                value += d.HumLevel * (Math.Sin(2 * Math.PI * d.HumHz * t) + Math.Sin(6 * Math.PI * d.HumHz * t) / 3);
            }

            if (_noiseSigma > 0)
            {
                value += _noiseSigma * Gaussian(_noiseRandom);
            }

            output[i] = (float)Convert(value);
        }

        _sampleIndex += count;
        return count;
    }

    /// <summary>The converter: drive and hard clipping at full scale where asked for, then rounding to its resolution, dithered where asked for.</summary>
    private double Convert(double value)
    {
        if (_damage.ClipDriveDb is not null)
        {
            value = Math.Clamp(value * _drive, -1, 1);
        }

        if (_quantumScale > 0)
        {
            double dither = _damage.Dither ? _ditherRandom.NextDouble() - _ditherRandom.NextDouble() : 0;
            value = Math.Clamp(Math.Round((value * _quantumScale) + dither), -_quantumScale, _quantumScale - 1) / _quantumScale;
        }

        return value;
    }

    /// <summary>
    /// The reversals with their signs (alternating, the first one up), and where print-through is asked for, the
    /// echoes' reversals one wrap earlier and later at the echo level, all in time order.
    /// </summary>
    private static IEnumerable<(double Time, double Weight)> WithPrintThrough(IEnumerable<double> reversals, ChannelDamage damage)
    {
        if (damage.PrintThroughDb is not { } echoDb)
        {
            return Signed(reversals, 0, 1);
        }

        double echo = Math.Pow(10, echoDb / 20);
        return Merged([Signed(reversals, -damage.PrintThroughSeconds, echo), Signed(reversals, 0, 1), Signed(reversals, damage.PrintThroughSeconds, echo)]);
    }

    private static IEnumerable<(double Time, double Weight)> Signed(IEnumerable<double> reversals, double shift, double weight)
    {
        double sign = 1;
        foreach (double r in reversals)
        {
            yield return (r + shift, sign * weight);
            sign = -sign;
        }
    }

    private static IEnumerable<(double Time, double Weight)> Merged(IEnumerable<(double Time, double Weight)>[] sources)
    {
        var heads = sources.Select(s => s.GetEnumerator()).ToArray();
        try
        {
            var live = heads.Select(h => h.MoveNext()).ToArray();
            while (true)
            {
                int next = -1;
                for (int k = 0; k < heads.Length; k++)
                {
                    if (live[k] && (next < 0 || heads[k].Current.Time < heads[next].Current.Time))
                    {
                        next = k;
                    }
                }

                if (next < 0)
                {
                    yield break;
                }

                yield return heads[next].Current;
                live[next] = heads[next].MoveNext();
            }
        }
        finally
        {
            foreach (var head in heads)
            {
                head.Dispose();
            }
        }
    }

    private double AzimuthAverage(double value)
    {
        if (_boxcar.Length == 1)
        {
            return value;
        }

        // A moving average of fractional length L: floor(L) whole samples plus the next older one weighted by the
        // fraction left over, so that the weights sum to L and a steady level passes unchanged.
        _boxcarSum += value - _boxcar[_boxcarPosition];
        _boxcar[_boxcarPosition] = (float)value;
        _boxcarPosition = (_boxcarPosition + 1) % _boxcar.Length;
        int whole = _boxcar.Length - 1;
        double fraction = _boxcarLength - whole;
        double oldest = _boxcar[_boxcarPosition];
        return (_boxcarSum - oldest + fraction * oldest) / _boxcarLength;
    }

    private double DropoutGain(double t)
    {
        double gain = 1;
        foreach (var dropout in _dropouts)
        {
            if (dropout.StartSeconds > t + 0.01)
            {
                break;
            }

            double end = dropout.StartSeconds + dropout.DurationSeconds;
            if (t < dropout.StartSeconds - 0.002 || t > end + 0.002)
            {
                continue;
            }

            // 2 ms raised-cosine edges: oxide loss fades in and out rather than switching.
            double edge = Math.Min(t - (dropout.StartSeconds - 0.002), end + 0.002 - t) / 0.002;
            double shape = edge >= 1 ? 1 : 0.5 - 0.5 * Math.Cos(Math.PI * Math.Max(0, edge));
            gain = Math.Min(gain, 1 - dropout.Depth * shape);
        }

        return gain;
    }

    private void Advance()
    {
        // Reversals alternate in sign; the first one steps up.
        if (_reversals.MoveNext())
        {
            (_nextReversal, _nextWeight) = _reversals.Current;
        }
        else
        {
            _reversalsDone = true;
        }
    }

    private static double Gaussian(Random random)
    {
        // Box–Muller; one value per call keeps the sequence simple and seed-stable.
        double u1 = 1.0 - random.NextDouble();
        double u2 = random.NextDouble();
        return Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2);
    }

    private static int Poisson(Random random, double mean)
    {
        int count = 0;
        double limit = Math.Exp(-mean);
        double product = random.NextDouble();
        while (product > limit && count < 10_000)
        {
            count++;
            product *= random.NextDouble();
        }

        return count;
    }
}
