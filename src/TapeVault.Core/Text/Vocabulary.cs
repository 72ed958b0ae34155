using System.Globalization;
using TapeVault.Core.Blocks;
using TapeVault.Core.Image;

namespace TapeVault.Core.Text;

/// <summary>One status as every surface shows it: the name stored and sent (JSON, database, image), a symbol so
/// that no status is told by colour alone, the word people read, and what it means in one sentence.</summary>
public sealed record StatusTerm(string Name, string Symbol, string Word, string Meaning);

/// <summary>
/// The one table of status names, symbols and sentences that the web app, the command line, the JSON and the
/// catalogue all use. A reading (one setting's block candidate) is clean, failed or unchecked; a position of a tape
/// image is clean, voted, repaired or missing; "none" is a setting that read nothing at a position.
/// </summary>
public static class Vocabulary
{
    /// <summary>What confidence means, in the sentence every surface shows beside it.</summary>
    public const string ConfidenceSentence =
        "Confidence is TapeVault's estimate of the probability that the bytes are right: of blocks shown at 0.90, about nine in ten are.";

    public static readonly StatusTerm Clean = new("clean", "✓", "clean", "The format's own check holds over bytes that were read after a lead-in or sync.");
    public static readonly StatusTerm Failed = new("failed", "✗", "failed", "The check does not hold, the block was cut short, or its holding check proves nothing on its own (another capture that reads the same bytes proves it).");
    public static readonly StatusTerm Unchecked = new("unchecked", "○", "unchecked", "The format carries no check over these bytes; only the decisions' margins speak for them.");
    public static readonly StatusTerm Voted = new("voted", "≈", "voted", "No reading was clean; a vote across readings gave bytes the check accepts.");
    public static readonly StatusTerm Repaired = new("repaired", "⚒", "repaired", "A vote left the check failing; flipping the least certain bits made it hold.");
    public static readonly StatusTerm Missing = new("missing", "–", "missing", "Nothing trustworthy was read here; the position is never filled in.");
    public static readonly StatusTerm None = new("none", "·", "not read", "This setting read nothing at this position.");

    /// <summary>Every term, readings first, then image positions, then "none".</summary>
    public static IReadOnlyList<StatusTerm> All { get; } = [Clean, Failed, Unchecked, Voted, Repaired, Missing, None];

    public static StatusTerm Of(BlockStatus status) => status switch
    {
        BlockStatus.Clean => Clean,
        BlockStatus.Failed => Failed,
        BlockStatus.Unchecked => Unchecked,
        _ => throw new ArgumentOutOfRangeException(nameof(status), status, "No term for this reading status."),
    };

    public static StatusTerm Of(RecoveryStatus status) => status switch
    {
        RecoveryStatus.Clean => Clean,
        RecoveryStatus.Voted => Voted,
        RecoveryStatus.Repaired => Repaired,
        RecoveryStatus.Missing => Missing,
        _ => throw new ArgumentOutOfRangeException(nameof(status), status, "No term for this position status."),
    };

    /// <summary>The term stored under <paramref name="name"/>; an unknown name reads as itself with a question mark.</summary>
    public static StatusTerm Of(string name)
    {
        foreach (var term in All)
        {
            if (term.Name == name)
            {
                return term;
            }
        }

        return new StatusTerm(name, "?", name, "A status this version does not know.");
    }

    /// <summary>Playback speed as a signed percentage from nominal, the one way every surface shows it: 1.0312 reads "+3.12 %".</summary>
    public static string SpeedPercent(double speed) =>
        ((speed - 1) * 100).ToString("+0.00;-0.00;0.00", CultureInfo.InvariantCulture) + " %";
}
