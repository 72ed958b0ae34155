using TapeVault.Core.Edges;

namespace TapeVault.Core.Symbols;

/// <summary>
/// The decode chain of one detector setting after the bank: edges (or, for tone formats, the conditioned signal) in,
/// block candidates out, through the setting's <see cref="Blocks.BlockAssembler"/>.
/// </summary>
public interface ISymbolDecoder
{
    /// <summary>True when the decoder reads the conditioned signal as well as the edges; edge decoders need not say.</summary>
    bool NeedsConditionedSignal => false;

    void OnEdges(ReadOnlySpan<Edge> edges);

    /// <summary>The conditioned signal of the chunk whose first sample is <paramref name="chunkStart"/>; only tone decoders read it.</summary>
    void OnConditioned(ReadOnlySpan<float> signal, long chunkStart)
    {
    }

    /// <summary>The capture ended at <paramref name="endSample"/>: close any block in progress.</summary>
    void Finish(double endSample);
}
