namespace TapeVault.Core.Bytes;

/// <summary>
/// A block's first asynchronous characters, held until enough of them have followed one another back to back to
/// begin a block with: each one's value, decisions (D of each bit), start, whether its start bit is confirmed and
/// whether its framing held. Made once; nothing is allocated per character.
/// </summary>
public sealed class HeldCharacters
{
    private readonly int _frameBits;
    private readonly float[] _levels;
    private readonly int[] _value;
    private readonly double[] _start;
    private readonly bool[] _confirmed;
    private readonly bool[] _framingOk;

    public HeldCharacters(int capacity, int frameBits)
    {
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(capacity);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(frameBits);
        _frameBits = frameBits;
        _levels = new float[capacity * frameBits];
        _value = new int[capacity];
        _start = new double[capacity];
        _confirmed = new bool[capacity];
        _framingOk = new bool[capacity];
    }

    public int Count { get; private set; }

    /// <summary>Whether as many characters are held as were asked for.</summary>
    public bool Full => Count == _value.Length;

    public void Clear() => Count = 0;

    public void Add(int value, ReadOnlySpan<float> levels, double start, bool confirmed, bool framingOk)
    {
        levels.CopyTo(_levels.AsSpan(Count * _frameBits, _frameBits));
        _value[Count] = value;
        _start[Count] = start;
        _confirmed[Count] = confirmed;
        _framingOk[Count] = framingOk;
        Count++;
    }

    public int Value(int c) => _value[c];

    public ReadOnlySpan<float> Levels(int c) => _levels.AsSpan(c * _frameBits, _frameBits);

    public double Start(int c) => _start[c];

    public bool Confirmed(int c) => _confirmed[c];

    public bool FramingOk(int c) => _framingOk[c];
}
