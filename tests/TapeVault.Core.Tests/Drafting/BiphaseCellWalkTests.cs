using TapeVault.Core.Drafting;
using TapeVault.Core.Edges;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// The biphase drafter's walk over a block's transitions on a cell clock. The transitions are written here from the
/// definition of biphase (Manchester) coding, common practice: a transition in the middle of every cell whose
/// direction is the bit, and one more at the boundary between two equal bits.
/// </summary>
public sealed class BiphaseCellWalkTests
{
    private const double Cell = 100;

    private static readonly int[] Bits = [1, 1, 0, 1, 0, 0, 0, 1, 1, 0, 1, 1, 1, 0, 0, 1, 0, 1, 0, 1, 1, 0, 0, 0, 1, 0, 1, 1, 0, 1, 0, 0];

    [Fact]
    public void Clean_transitions_read_every_bit()
    {
        var edges = Transitions(Bits, moved: _ => 0);
        Assert.Equal(Bits, BiphaseDrafter.CellWalk(edges, 0, edges.Count - 1, Cell));
    }

    /// <summary>
    /// Every mid-cell transition after a boundary one read a quarter cell late: the half before it and the whole after
    /// it (where the next bit differs) both read three quarters of a cell, which an interval's class cannot tell.
    /// </summary>
    [Fact]
    public void Mid_cell_transitions_a_quarter_cell_late_read_every_bit()
    {
        var edges = Transitions(Bits, moved: e => e.Mid && e.AfterBoundary ? Cell / 4 : 0);
        Assert.Equal(Bits, BiphaseDrafter.CellWalk(edges, 0, edges.Count - 1, Cell));
    }

    /// <summary>Two transitions lost (a pulse swallowed): the cell between is bridged with a guess, the bits after it stay in place.</summary>
    [Fact]
    public void A_lost_pair_of_transitions_keeps_the_bit_count()
    {
        var edges = Transitions(Bits, moved: _ => 0);
        // Cell 5's mid-cell transition and the boundary after it (bits 4, 5 and 6 are all 0): the walk meets cell 6's
        // mid-cell transition two cells after cell 4's.
        int lost = edges.FindIndex(e => Math.Abs(e.Sample - (5 * Cell)) < 1);
        edges.RemoveRange(lost, 2);
        var read = BiphaseDrafter.CellWalk(edges, 0, edges.Count - 1, Cell);
        Assert.Equal(Bits.Length, read.Count);
        Assert.Equal(Bits.Take(5), read.Take(5));
        Assert.Equal(Bits.Skip(6), read.Skip(6));
    }

    private readonly record struct Place(double Sample, bool Mid, bool AfterBoundary, bool Rising);

    /// <summary>The transitions of <paramref name="bits"/>, the first mid-cell one at sample 0, a 1 rising.</summary>
    private static List<Edge> Transitions(int[] bits, Func<Place, double> moved)
    {
        var places = new List<Place>();
        for (int i = 0; i < bits.Length; i++)
        {
            bool afterBoundary = false;
            if (i > 0 && bits[i] == bits[i - 1])
            {
                places.Add(new Place((i * Cell) - (Cell / 2), false, false, bits[i] == 0));
                afterBoundary = true;
            }

            places.Add(new Place(i * Cell, true, afterBoundary, bits[i] == 1));
        }

        return [.. places.Select(p => new Edge(p.Sample + moved(p), p.Rising, 1f))];
    }
}
