using TapeVault.Core.Detection;
using TapeVault.Core.Edges;

namespace TapeVault.Core.Symbols;

/// <summary>
/// The decode chain of one detector setting after the bank: edges (and, for tone formats, the tone energies) in,
/// block candidates out, handed to the block stage through <see cref="Blocks.IBlockSink"/> (the setting's
/// <see cref="Blocks.BlockAssembler"/>) and nothing else of it.
/// </summary>
public interface ISymbolDecoder
{
    /// <summary>True when the decoder reads the tone correlators' energies as well as the edges; edge decoders need not say.</summary>
    bool ReadsTones => false;

    void OnEdges(ReadOnlySpan<Edge> edges);

    /// <summary>
    /// The setting's tone energies over a chunk, whose first reading (<see cref="ToneBank.Stride"/>) is
    /// <paramref name="chunkStart"/>; only tone decoders read them.
    /// </summary>
    void OnTones(ToneLane tones, long chunkStart)
    {
    }

    /// <summary>The capture ended at <paramref name="endSample"/>: close any block in progress.</summary>
    void Finish(double endSample);
}
