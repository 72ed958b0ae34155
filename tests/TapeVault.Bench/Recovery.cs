using System.Diagnostics;
using TapeVault.Core.Formats;
using TapeVault.Core.Image;

namespace TapeVault.Bench;

/// <summary>
/// The merge's recovery: for each built-in profile and damage level, tapes of three damaged passes each; what each
/// pass recovers alone (its decode's clean blocks, or for a stream the bytes of its best readings), what the merge
/// recovers, what only the merge got, and wrong blocks marked clean (which must be none).
/// </summary>
public static class Recovery
{
    /// <summary>Tapes <paramref name="first"/> onwards; a format with headers has fewer units per tape, so it gets twice as many tapes.</summary>
    public static List<ScoredTape> Corpus(string work, int first, int count, string? only = null) => [.. Decoded(work, first, count, only).Select(t => RecoveryCorpus.Score(t))];

    public static List<RecoveryCorpus.DecodedTape> Decoded(string work, int first, int count, string? only = null)
    {
        var tapes = new List<RecoveryCorpus.DecodedTape>();
        foreach (var profile in ProfileCatalog.BuiltIn.All.Where(p => only is null || p.Id == only))
        {
            int n = profile.Layout.IsStream ? count : 2 * count;
            foreach (var level in RecoveryCorpus.Levels)
            {
                for (int seed = first; seed < first + n; seed++)
                {
                    tapes.Add(RecoveryCorpus.Decode(work, profile, level, seed));
                }
            }
        }

        return tapes;
    }

    public static void Run(string work, int first, int seeds, string? only = null)
    {
        var stopwatch = Stopwatch.StartNew();
        Console.WriteLine($"Tapes of seeds {first} onwards.");
        var tapes = Corpus(work, first, seeds, only);
        Print(tapes, seeds);
        Console.WriteLine($"{stopwatch.Elapsed.TotalSeconds:0} s.");
        Console.WriteLine();
    }

    public static void Print(List<ScoredTape> tapes, int seeds)
    {
        Console.WriteLine($"Multi-pass recovery ({seeds} tapes per stream row, {2 * seeds} per block row, {RecoveryCorpus.PassesPerTape} passes per tape; units: blocks, or bytes for a stream)");
        Console.WriteLine($"{"profile",-13} {"damage",-15} {"units",6} {"pass 1",7} {"pass 2",7} {"pass 3",7} {"best pass",9} {"merged",7} {"only merge",10} {"voted",5} {"repaired",8} {"missing",7} {"wrong clean",11}");
        foreach (var row in tapes.GroupBy(t => (t.ProfileId, t.Level)))
        {
            int units = row.Sum(t => t.Units);
            var pass = new double[RecoveryCorpus.PassesPerTape];
            for (int p = 0; p < pass.Length; p++)
            {
                pass[p] = (double)row.Sum(t => t.RightPerPass[p].Count) / units;
            }

            double bestPass = (double)row.Sum(t => t.RightPerPass.Max(s => s.Count)) / units;
            double merged = (double)row.Sum(t => t.RightMerged.Count) / units;
            int onlyMerge = row.Sum(t => t.RightMerged.Count(u => !t.RightPerPass.Any(s => s.Contains(u))));
            int voted = row.Sum(t => t.MergedBlocks.Count(b => b.Status == RecoveryStatus.Voted));
            int repaired = row.Sum(t => t.MergedBlocks.Count(b => b.Status == RecoveryStatus.Repaired));
            Console.WriteLine($"{row.Key.ProfileId,-13} {row.Key.Level,-15} {units,6} {pass[0],7:P1} {pass[1],7:P1} {pass[2],7:P1} {bestPass,9:P1} {merged,7:P1} {onlyMerge,10} {voted,5} {repaired,8} {row.Sum(t => t.Missing),7} {row.Sum(t => t.WrongClean),11}");
        }
    }
}
