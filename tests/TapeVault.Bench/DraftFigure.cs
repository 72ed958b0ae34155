using System.Diagnostics;
using System.Globalization;
using TapeVault.Core.Audio;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// The drafter's figure: on captures of random formats of each family (<see cref="RandomFormats"/>), with damage from
/// wide ranges (<see cref="DraftTrials.Damage"/>) and, for every other capture, a SoX effect chain drawn from the seed
/// (<see cref="OutsideDamage.SoxChain"/>), the share of written blocks the draft reads back once only its guessed
/// fields are confirmed from the truth (<see cref="TapeVault.Core.Drafting.ConfirmationRule.GuessedFieldsOnly"/>),
/// beside the share the truth itself reads back. Draft/truth counts the blocks both read (so it never passes 100 %);
/// the blocks the draft read and the truth did not are counted apart. "earlier" is draft/truth by the earlier rule,
/// under which a guessed family took the truth's whole encoding section (for comparison with older figures).
/// draft [--count N] [--first-seed S] [--family F]: N captures per family (default 20), seeds S, S+1, ... (default
/// 9001), of every family of <see cref="RandomFormats.Families"/> or of F alone; --damage none writes undamaged
/// captures (to tell the drafter's faults from the read path's); --show failures prints the truth and the draft of
/// each capture the draft reads less of; --show all prints a line for every capture.
/// </summary>
public static class DraftFigure
{
    public static int Run(string work, string[] args)
    {
        int count = 20;
        int first = 9001;
        string? only = null;
        bool undamaged = false;
        bool show = false;
        bool showAll = false;
        for (int i = 0; i + 1 < args.Length; i += 2)
        {
            switch (args[i])
            {
                case "--count": count = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--first-seed": first = int.Parse(args[i + 1], CultureInfo.InvariantCulture); break;
                case "--family": only = args[i + 1]; break;
                case "--damage": undamaged = args[i + 1] == "none"; break;
                case "--show": show = args[i + 1] == "failures"; showAll = args[i + 1] == "all"; break;
                default: throw new ArgumentException($"Unknown option {args[i]}.");
            }
        }

        // A folder of its own, so that runs side by side (one family each) never delete each other's captures.
        string folder = Directory.CreateDirectory(Path.Combine(work, $"draft-{Environment.ProcessId}")).FullName;
        Console.WriteLine($"Draft figure: {count} captures per family, seeds {first}–{first + count - 1}, SoX chain on every other one.");
        Console.WriteLine($"{"family",-20} {"written",8} {"draft",8} {"truth",8} {"draft/written",14} {"draft/truth",12} {"earlier",8} {"draft only",11} {"guessed",8} {"family right",13} {"failed",7} {"s/draft",8}");
        int allWritten = 0, allDraft = 0, allTruth = 0, allBoth = 0, allEarlier = 0;
        foreach (string family in RandomFormats.Families.Where(f => only is null || f == only))
        {
            int written = 0, drafted = 0, truth = 0, both = 0, earlier = 0, guessed = 0, fields = 0, familyRight = 0, failed = 0;
            var time = Stopwatch.StartNew();
            for (int k = 0; k < count; k++)
            {
                int seed = first + k;
                var result = DraftTrials.Run(family, seed, folder, seed % 2 == 0 && !undamaged ? Sox : null, undamaged ? new ChannelDamage() : null);
                written += result.Written;
                drafted += result.RecoveredByConfirmedDraft;
                truth += result.RecoveredByTruth;
                both += result.RecoveredByBoth;
                earlier += result.RecoveredByBothEarlierRule;
                guessed += result.Guessed.Count;
                fields += result.Fields;
                familyRight += result.DraftedFamily == RandomFormats.ProfileFamily(family) ? 1 : 0;
                bool readsLess = result.Failure is not null || result.RecoveredByConfirmedDraft < 0.95 * result.RecoveredByTruth;
                if (showAll && !readsLess)
                {
                    Console.WriteLine($"  {family} seed {seed}: {result.RecoveredByConfirmedDraft}/{result.RecoveredByTruth}/{result.Written} (earlier rule {result.RecoveredByEarlierRule}) drafted {result.DraftedFamily}; guessed {string.Join(", ", result.Guessed)}");
                }

                if (readsLess)
                {
                    failed++;
                    if (show)
                    {
                        Console.WriteLine(result.TruthJson);
                        Console.WriteLine(result.DraftJson);
                    }

                    Console.WriteLine($"  {family} seed {seed}: {result.RecoveredByConfirmedDraft}/{result.RecoveredByTruth}/{result.Written} (earlier rule {result.RecoveredByEarlierRule}) drafted {result.DraftedFamily}; guessed {string.Join(", ", result.Guessed)}; {result.Failure}; {result.Damage}");
                }

                foreach (string file in Directory.EnumerateFiles(folder))
                {
                    File.Delete(file);
                }
            }

            allWritten += written;
            allDraft += drafted;
            allTruth += truth;
            allBoth += both;
            allEarlier += earlier;
            Console.WriteLine($"{family,-20} {written,8} {drafted,8} {truth,8} {Percent(drafted, written),14} {Percent(both, truth),12} {Percent(earlier, truth),8} {drafted - both,11} {(fields == 0 ? "-" : $"{guessed}/{fields}"),8} {familyRight,6}/{count,-6} {failed,7} {time.Elapsed.TotalSeconds / count,8:0.0}");
        }

        Console.WriteLine($"{"all",-20} {allWritten,8} {allDraft,8} {allTruth,8} {Percent(allDraft, allWritten),14} {Percent(allBoth, allTruth),12} {Percent(allEarlier, allTruth),8} {allDraft - allBoth,11}");
        return 0;
    }

    private static string Percent(int part, int whole) => whole == 0 ? "-" : (100.0 * part / whole).ToString("0.0", CultureInfo.InvariantCulture) + " %";

    /// <summary>The SoX chain of the figure's even seeds, drawn from the trial's random numbers.</summary>
    internal static (string Path, string Description) Sox(string path, Random rng)
    {
        int rate;
        int channels;
        using (var reader = CaptureReader.Open(path))
        {
            rate = reader.SampleRate;
            channels = reader.Channels;
        }

        var (output, effects, description) = OutsideDamage.SoxChain(rng, channels, rate);
        string damaged = Path.ChangeExtension(path, ".sox.wav");
        OutsideDamage.ApplySox(path, damaged, output, effects);
        return (damaged, description);
    }
}
