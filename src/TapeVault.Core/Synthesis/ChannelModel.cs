using TapeVault.Core.Dsp;

namespace TapeVault.Core.Synthesis;

/// <summary>
/// Renders flux reversals into the samples a capture would hold. Each reversal reads back as a Lorentzian pulse
/// V0 / (1 + (2t/PW50)²) (Mee and Daniel, Magnetic Recording Technology); a deck's line output integrates that back
/// into a band-limited copy of the magnetisation. Speed, wow and flutter map capture time to tape time; azimuth error
/// averages across the track (a boxcar whose response is sin x / x); then come the deck's bandwidth, dropouts, hum
/// and noise. Rendering streams: call <see cref="Render"/> with chunk after chunk.
/// </summary>
public sealed class ChannelModel
{
    private const double LorentzianReach = 25;

    private readonly ChannelDamage _damage;
    private readonly IEnumerator<double> _reversals;
    private readonly double _pw50;
    private readonly double _halfPw50Inverse;
    private readonly double _leak;
    private readonly List<Dropout> _dropouts;
    private readonly Random _noiseRandom;
    private readonly float[] _boxcar;
    private readonly double _boxcarLength;
    private readonly double _noiseSigma;
    private Biquad _deckLowPass;
    private readonly List<double> _window = new(64);
    private readonly List<double> _windowWeight = new(64);
    private double _nextWeight = -1;
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
        _reversals = reversals.GetEnumerator();
        _pw50 = damage.Pw50Microseconds * 1e-6;
        _halfPw50Inverse = 2 / _pw50;
        _leak = Math.Exp(-2 * Math.PI * 10.0 / damage.SampleRate);
        _deckLowPass = new Biquad(damage.DeckLowPassHz is { } lp ? BiquadCoefficients.ButterworthLowPass(lp, damage.SampleRate) : BiquadCoefficients.PassThrough);
        _noiseRandom = new Random(damage.Seed);
        TotalSamples = (long)Math.Ceiling((tapeSeconds / damage.Speed + 2 * damage.MarginSeconds) * damage.SampleRate);
        _dropouts = [.. damage.Dropouts];
        var dropoutRandom = new Random(unchecked(damage.Seed * 7919 + 17));
        double totalSeconds = (double)TotalSamples / damage.SampleRate;
        int count = Poisson(dropoutRandom, damage.RandomDropoutsPerMinute * totalSeconds / 60);
        for (int i = 0; i < count; i++)
        {
            _dropouts.Add(new Dropout(dropoutRandom.NextDouble() * totalSeconds, 0.005 + 0.055 * dropoutRandom.NextDouble(), 0.9 + 0.1 * dropoutRandom.NextDouble()));
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

    /// <summary>Tape time (nominal seconds) at capture time t: ∫ speed·(1 + wow + flutter) dt.</summary>
    public double TapeTime(double t)
    {
        var d = _damage;
        double wow = d.WowPercent / 100 / (2 * Math.PI * d.WowHz) * (1 - Math.Cos(2 * Math.PI * d.WowHz * t));
        double flutter = d.FlutterPercent / 100 / (2 * Math.PI * d.FlutterHz) * (1 - Math.Cos(2 * Math.PI * d.FlutterHz * t));
        return d.Speed * (t - d.MarginSeconds + wow + flutter);
    }

    /// <summary>Fills <paramref name="output"/> with the next samples; returns how many (0 at the end).</summary>
    public int Render(Span<float> output)
    {
        int count = (int)Math.Min(output.Length, TotalSamples - _sampleIndex);
        var d = _damage;
        double reach = LorentzianReach * _pw50;
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
            double head = 0;
            double step = 0;
            for (int k = 0; k < _window.Count; k++)
            {
                double x = (tape - _window[k]) * _halfPw50Inverse;
                double weight = _windowWeight[k];
                head += weight / (1 + x * x);
                double arctan = Math.Atan(x);
                step += weight * (arctan - _windowArctan[k]);
                _windowArctan[k] = arctan;
            }

            _line = _line * _leak + step * (2 / Math.PI);
            double value = d.Chain == ReadChain.LineOutput ? _line : head;
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
                value += _noiseSigma * Gaussian();
            }

            output[i] = (float)value;
        }

        _sampleIndex += count;
        return count;
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
        // Reversals alternate in sign; the first one (weight +1 after the initial −1) steps up.
        _nextWeight = -_nextWeight;
        if (_reversals.MoveNext())
        {
            _nextReversal = _reversals.Current;
        }
        else
        {
            _reversalsDone = true;
        }
    }

    private double Gaussian()
    {
        // Box–Muller; one value per call keeps the sequence simple and seed-stable.
        double u1 = 1.0 - _noiseRandom.NextDouble();
        double u2 = _noiseRandom.NextDouble();
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
