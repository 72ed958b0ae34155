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
/// each capture the draft reads less of; --show all prints a line for every capture. Every seed's line and every
/// summary row give the blocks the truth profile itself reads beside those written, and flag the captures the truth
/// reads none or little of (<see cref="DraftTally"/>), so that the read path's loss ("lost: read") is told apart from
/// the draft's ("lost: draft"); "draft/truth where truth reads" leaves those captures out.
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
        Console.WriteLine("Each seed: the truth's blocks the confirmed draft reads, then the written blocks the truth profile itself reads;");
        Console.WriteLine($"[truth reads none] or [truth reads little] (under {DraftTally.LittleShare:0%} of the written) marks a capture lost to the read path, not to the draft.");
        Console.WriteLine($"{"family",-20} {"written",8} {"truth",8} {"truth/written",14} {"draft",8} {"draft/written",14} {"draft/truth",12} {"lost: read",11} {"lost: draft",12} {"truth little",13} {"draft/truth where truth reads",30} {"earlier",8} {"draft only",11} {"guessed",8} {"family right",13} {"failed",7} {"s/draft",8}");
        var all = new DraftTally();
        int allEarlier = 0;
        foreach (string family in RandomFormats.Families.Where(f => only is null || f == only))
        {
            var tally = new DraftTally();
            int earlier = 0, guessed = 0, fields = 0, familyRight = 0, failed = 0;
            var time = Stopwatch.StartNew();
            for (int k = 0; k < count; k++)
            {
                int seed = first + k;
                var result = DraftTrials.Run(family, seed, folder, seed % 2 == 0 && !undamaged ? Sox : null, undamaged ? new ChannelDamage() : null);
                tally = tally.Add(result.Written, result.RecoveredByTruth, result.RecoveredByConfirmedDraft, result.RecoveredByBoth);
                earlier += result.RecoveredByBothEarlierRule;
                guessed += result.Guessed.Count;
                fields += result.Fields;
                familyRight += result.DraftedFamily == RandomFormats.ProfileFamily(family) ? 1 : 0;
                bool readsLess = result.Failure is not null || result.RecoveredByBoth < 0.95 * result.RecoveredByTruth;
                failed += readsLess ? 1 : 0;
                if (readsLess && show)
                {
                    Console.WriteLine(result.TruthJson);
                    Console.WriteLine(result.DraftJson);
                }

                if (showAll || readsLess)
                {
                    Console.WriteLine($"  {family} seed {seed}: {SeedLine(result)}");
                }

                foreach (string file in Directory.EnumerateFiles(folder))
                {
                    File.Delete(file);
                }
            }

            all = all.Plus(tally);
            allEarlier += earlier;
            Console.WriteLine($"{family,-20} {Columns(tally)} {Percent(earlier, tally.Truth),8} {tally.Draft - tally.Both,11} {(fields == 0 ? "-" : $"{guessed}/{fields}"),8} {familyRight,6}/{count,-6} {failed,7} {time.Elapsed.TotalSeconds / count,8:0.0}");
        }

        Console.WriteLine($"{"all",-20} {Columns(all)} {Percent(allEarlier, all.Truth),8} {all.Draft - all.Both,11}");
        Console.WriteLine($"Of the {all.Written} blocks written, the read path (the truth profile) loses {all.LostByReadPath} and the draft {all.LostByDraft} more of those the truth reads; "
            + $"{all.TruthNoneTrials} of {all.Trials} captures the truth reads none of, {all.TruthLittleTrials - all.TruthNoneTrials} more under {DraftTally.LittleShare:0%}.");
        return 0;
    }

    /// <summary>One seed: the draft against the truth, the truth against what was written, and a flag where the truth reads little.</summary>
    private static string SeedLine(DraftTrialResult result)
    {
        string flag = DraftTally.Classify(result.Written, result.RecoveredByTruth) switch
        {
            TruthReading.None => " [truth reads none]",
            TruthReading.Little => " [truth reads little]",
            _ => string.Empty,
        };
        string alone = result.RecoveredByConfirmedDraft > result.RecoveredByBoth ? $" (and {result.RecoveredByConfirmedDraft - result.RecoveredByBoth} the truth does not)" : string.Empty;
        return $"draft {result.RecoveredByBoth} of the truth's {result.RecoveredByTruth}{alone}; truth {result.RecoveredByTruth} of {result.Written} written{flag} "
            + $"(earlier rule {result.RecoveredByBothEarlierRule}); drafted {result.DraftedFamily}; guessed {string.Join(", ", result.Guessed)}"
            + (result.Failure is null ? string.Empty : $"; {result.Failure}") + $"; {result.Damage}";
    }

    private static string Columns(DraftTally t) =>
        $"{t.Written,8} {t.Truth,8} {Percent(t.Truth, t.Written),14} {t.Draft,8} {Percent(t.Draft, t.Written),14} {Percent(t.Both, t.Truth),12} {t.LostByReadPath,11} {t.LostByDraft,12} "
        + $"{$"{t.TruthLittleTrials} ({t.TruthNoneTrials} none)",13} {$"{Percent(t.BothWhereTruthReads, t.TruthWhereTruthReads)} of {t.TruthWhereTruthReads}",30}";

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
