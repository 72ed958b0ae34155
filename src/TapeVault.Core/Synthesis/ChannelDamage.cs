namespace TapeVault.Core.Synthesis;

/// <summary>Where the capture was taken from: the deck's line output (equalised, looks like the magnetisation) or a head amplifier (looks like its derivative).</summary>
public enum ReadChain
{
    LineOutput,
    HeadAmplifier,
}

/// <summary>How the capture's channels hold the signal.</summary>
public enum CaptureChannels
{
    /// <summary>One channel.</summary>
    Mono,

    /// <summary>Two channels, both carrying the signal (a mono deck into a stereo converter).</summary>
    Stereo,

    /// <summary>Two channels; the left one carries nothing (a broken lead), the right one the signal.</summary>
    LeftDead,

    /// <summary>Two channels; the right one carries nothing, the left one the signal.</summary>
    RightDead,
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

    /// <summary>Random dropouts: mean count per minute, each 5–60 ms deep to 90–100 % (or as <see cref="RandomDropoutDepthDb"/> says).</summary>
    public double RandomDropoutsPerMinute { get; init; }

    /// <summary>
    /// How far a random dropout drops the signal, in dB below it, drawn evenly between the two values (20 and 40:
    /// partial dropouts of −20 to −40 dB); null for the default depth of 90–100 %.
    /// </summary>
    public (double Shallowest, double Deepest)? RandomDropoutDepthDb { get; init; }

    /// <summary>
    /// Print-through: in storage each layer of a wound tape copies its magnetisation faintly onto the layers beside
    /// it, so the recording reads back with a pre-echo and a post-echo one wrap earlier and later. Their level in dB
    /// relative to the recording (−40 to −50 dB is usual, common practice); null for none.
    /// </summary>
    public double? PrintThroughDb { get; init; }

    /// <summary>
    /// One wrap of the reel in seconds of tape at nominal speed: the echoes' distance. For a compact cassette the
    /// wound radius runs from about 11 to 25 mm, so a wrap holds 1.5–3.3 s of tape at 4.76 cm/s; 1.7 s is typical
    /// near the start of a side (common practice, from the cassette's dimensions).
    /// </summary>
    public double PrintThroughSeconds { get; init; } = 1.7;

    /// <summary>
    /// Gain in dB in front of the converter, which then clips hard at full scale (±1): with a loud level, a drive
    /// above 0 dB flattens the peaks. Null for no clipping stage (the WAV writer still limits to full scale).
    /// </summary>
    public double? ClipDriveDb { get; init; }

    /// <summary>
    /// The converter's resolution: samples rounded to 8, 16 or 24 bits (full scale 2^(bits−1) steps, as the WAV
    /// writer's), with TPDF dither (two independent uniform values of ±½ step summed) when <see cref="Dither"/> is
    /// set; null for none (the WAV writer's encoding then rounds). The synthesiser writes a capture of that depth.
    /// </summary>
    public int? QuantizeBits { get; init; }

    public bool Dither { get; init; }

    /// <summary>Mono, or stereo with the signal in both channels or with one channel dead.</summary>
    public CaptureChannels Channels { get; init; } = CaptureChannels.Mono;

    /// <summary>The dead channel's noise (a live input with nothing on it), RMS in dB relative to full scale; null for digital silence.</summary>
    public double? DeadChannelNoiseDbfs { get; init; }

    public int Seed { get; init; } = 1;

    /// <summary>Silence before the recording starts and after it ends, in seconds.</summary>
    public double MarginSeconds { get; init; } = 0.2;
}
