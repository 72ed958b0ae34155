namespace TapeVault.Core.Synthesis;

/// <summary>Where the capture was taken from: the deck's line output (equalised, looks like the magnetisation) or a head amplifier (looks like its derivative).</summary>
public enum ReadChain
{
    LineOutput,
    HeadAmplifier,
}

/// <summary>A stretch where the oxide did not reach the head: the signal falls by <paramref name="Depth"/> (1 = to nothing).</summary>
public sealed record Dropout(double StartSeconds, double DurationSeconds, double Depth);

/// <summary>
/// What the channel does to a recording between the write head and the WAV file. Deterministic from
/// <see cref="Seed"/>. Defaults are a clean capture from a healthy deck.
/// </summary>
public sealed record ChannelDamage
{
    public int SampleRate { get; init; } = 44_100;

    /// <summary>Playback speed relative to the recording (1.03: 3 % fast).</summary>
    public double Speed { get; init; } = 1.0;

    /// <summary>Peak speed deviation of slow wow, in percent, and its rate.</summary>
    public double WowPercent { get; init; }

    public double WowHz { get; init; } = 0.7;

    /// <summary>Peak speed deviation of flutter, in percent, and its rate.</summary>
    public double FlutterPercent { get; init; }

    public double FlutterHz { get; init; } = 11;

    /// <summary>Width of an isolated reversal's read-back pulse at half its height (the Lorentzian's PW50), in µs of tape at nominal speed.</summary>
    public double Pw50Microseconds { get; init; } = 40;

    public ReadChain Chain { get; init; } = ReadChain.LineOutput;

    public bool Invert { get; init; }

    /// <summary>Head azimuth error in degrees; the loss follows 20·log10|sin x / x|, x = π·w·tan θ / λ.</summary>
    public double AzimuthDegrees { get; init; }

    /// <summary>Track width in mm (a compact-cassette mono track is about 1.5 mm, common practice).</summary>
    public double TrackWidthMm { get; init; } = 1.5;

    /// <summary>Tape speed in cm/s (compact cassette: 4.76, IEC 60094).</summary>
    public double TapeSpeedCmPerSecond { get; init; } = 4.76;

    /// <summary>The deck's playback bandwidth: a second-order low-pass, in Hz; null for none.</summary>
    public double? DeckLowPassHz { get; init; } = 12_000;

    /// <summary>Peak level of the signal in full-scale units.</summary>
    public double Level { get; init; } = 0.5;

    /// <summary>Signal-to-noise ratio of added white Gaussian noise over the whole band, in dB; null for none.</summary>
    public double? SnrDb { get; init; }

    /// <summary>Mains hum level (full scale) and frequency; a third harmonic at a third of the level rides along.</summary>
    public double HumLevel { get; init; }

    public double HumHz { get; init; } = 50;

    public IReadOnlyList<Dropout> Dropouts { get; init; } = [];

    /// <summary>Random dropouts: mean count per minute, each 5–60 ms deep to 90–100 %.</summary>
    public double RandomDropoutsPerMinute { get; init; }

    public int Seed { get; init; } = 1;

    /// <summary>Silence before the recording starts and after it ends, in seconds.</summary>
    public double MarginSeconds { get; init; } = 0.2;
}
