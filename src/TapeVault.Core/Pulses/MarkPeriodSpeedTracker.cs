using System.Runtime.CompilerServices;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Pulses;

/// <summary>
/// The playback speed of a tone format, measured on the mark tone: the time between two detector edges is one mark
/// period (half of one when both edges count) at nominal speed. An interval counts only when it lies inside a stretch
/// of mark tone: it and the intervals on either side of it look like mark periods, and the tone detector, looking at
/// a window centred on it, sees mark tone. The periods next to a change of tone are left out, because the detector's
/// filters shift their zero crossings (the two tones have different phase delays), and at 1200 baud, where a mark
/// bit is only two cycles, they would bias the estimate.
/// </summary>
public struct MarkPeriodSpeedTracker
{
    /// <summary>Gain of the speed estimate per accepted mark period (about a hundred periods of memory).</summary>
    private const double LoopGain = 0.01;

    /// <summary>
    /// Largest step one interval may pull the speed estimate by before the gain: an interval distorted by a nearby
    /// change of tone that slips past <see cref="PureMark"/> moves the estimate no more than a good one (a Huber-type
    /// robust update).
    /// </summary>
    private const double StepLimit = 0.02;

    /// <summary>D above this: the correlator window holds (almost) only mark tone.</summary>
    private const float PureMark = 0.9f;

    private readonly double _markPeriodSamples;
    private readonly int _window;
    private double _lastEdge;
    private double _lastLength;
    private bool _lastLooksLikeMark;
    private bool _beforeLastLooksLikeMark;
    private MarkInterval[] _pending;
    private int _pendingHead;
    private int _pendingCount;

    /// <param name="markPeriodSamples">One mark period (or half-period, when both edges count) in samples at nominal speed.</param>
    /// <param name="window">The tone detector's window, in samples.</param>
    public MarkPeriodSpeedTracker(double markPeriodSamples, int window)
    {
        _markPeriodSamples = markPeriodSamples;
        _window = window;
        _lastEdge = double.NaN;
        _pending = new MarkInterval[64];
        Speed = 1;
    }

    /// <summary>Playback speed relative to nominal.</summary>
    public double Speed { get; private set; }

    /// <summary>
    /// Sets the speed from a measurement of the whole lead-in (a leader of characters, timed from one start bit to the
    /// next); the mark periods then go on tracking from there.
    /// </summary>
    public void Calibrate(double speed)
    {
        if (speed > 0 && double.IsFinite(speed))
        {
            Speed = speed;
        }
    }

    /// <summary>
    /// Notes the edges of a chunk. An interval whose neighbours both look like mark periods too waits until the tone
    /// detector's window is centred on it (see <see cref="Check"/>), because only then can the detector vouch for it.
    /// </summary>
    public void OnEdges(ReadOnlySpan<Edge> edges)
    {
        foreach (var edge in edges)
        {
            if (!double.IsNaN(_lastEdge))
            {
                double length = edge.Sample - _lastEdge;
                bool looksLikeMark = _markPeriodSamples / length is > 0.85 and < 1.15;
                if (looksLikeMark && _lastLooksLikeMark && _beforeLastLooksLikeMark)
                {
                    if (_pendingCount == _pending.Length)
                    {
                        Array.Resize(ref _pending, _pending.Length * 2);
                    }

                    // The middle interval ends at the previous edge. The causal window [n − W, n] is centred on it
                    // when n = end + (W − length) / 2.
                    _pending[_pendingCount++] = new MarkInterval(_markPeriodSamples / _lastLength, _lastEdge + 0.5 * (_window - _lastLength));
                }

                _beforeLastLooksLikeMark = _lastLooksLikeMark;
                _lastLooksLikeMark = looksLikeMark;
                _lastLength = length;
            }

            _lastEdge = edge.Sample;
        }
    }

    /// <summary>The sample from which <see cref="Check"/> next has an interval to weigh (infinity while none waits); until then it does nothing.</summary>
    public readonly double NextCheck => _pendingHead < _pendingCount ? _pending[_pendingHead].CheckAt : double.PositiveInfinity;

    /// <summary>Feeds the estimate with the intervals whose centred window ends at sample <paramref name="n"/>, if its D calls it pure mark.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public void Check(float d, double n)
    {
        // Most samples have no interval due: the test is all they cost.
        if (_pendingHead < _pendingCount && _pending[_pendingHead].CheckAt <= n)
        {
            CheckDue(d, n);
        }
    }

    private void CheckDue(float d, double n)
    {
        while (_pendingHead < _pendingCount && _pending[_pendingHead].CheckAt <= n)
        {
            if (d > PureMark)
            {
                Speed += LoopGain * Math.Clamp(_pending[_pendingHead].Ratio - Speed, -StepLimit, StepLimit);
            }

            _pendingHead++;
        }
    }

    /// <summary>At the end of a chunk: the intervals still waiting for their window move to the front.</summary>
    public void EndChunk()
    {
        if (_pendingHead > 0)
        {
            Array.Copy(_pending, _pendingHead, _pending, 0, _pendingCount - _pendingHead);
            _pendingCount -= _pendingHead;
            _pendingHead = 0;
        }
    }

    /// <summary>An edge interval that looked like a mark period: its speed ratio, and when its window is centred on it.</summary>
    private readonly record struct MarkInterval(double Ratio, double CheckAt);
}
