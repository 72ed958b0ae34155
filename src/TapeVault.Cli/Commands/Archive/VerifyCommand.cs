using System.CommandLine;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Jobs;

namespace TapeVault.Cli.Commands;

/// <summary>
/// tapevault verify: the fixity audit of the web app's archive (the event chain, every stored object and every
/// capture's records); exit 1 on any broken link, mismatch, missing file, contradiction or unrecorded file, or a kept
/// head that no longer holds.
/// </summary>
public sealed class VerifyCommand : CliCommand
{
    public const int Damaged = 1;

    private readonly Option<string> collectionOption = new("--collection") { HelpName = "ID|NAME", Description = "audit one collection only, by id or by exact name (any case); default: the whole archive" };
    private readonly Option<string> expectHead = new("--expect-head") { HelpName = "\"event N sha256:HASH\"", Description = "also check that a head kept from a bag or catalogue is still in the log; default: none" };
    private readonly ArchiveLocation archive = new();

    public VerifyCommand()
        : base("verify", "Fixity audit of the web app's archive: event chain, stored objects and records. Exit 1 on any problem.")
    {
        Options.Add(collectionOption);
        Options.Add(expectHead);
        archive.AddTo(this);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        var error = run.Error;
        var word = run.Value(collectionOption) is { } c ? new ArchiveWork.CollectionWord(c, "--collection") : null;
        var kept = run.Value(expectHead) is { } h
            ? EventChain.ParseHead(h) ?? throw new UsageException($"--expect-head takes a head as bags and verify write it, \"event N sha256:HASH\", not '{h}'.")
            : null;

        using var session = archive.Open(run, CliSettings.Load());
        int? collection = word?.Resolve(session.Get<ArchiveDbContext>());
        FixityReport report;
        using (var bar = new ProgressBar("verifying"))
        {
            report = ArchiveWork.Run(() => session.Get<FixityAudit>().RunAsync(collection, ArchiveSession.Agent, ChainWalk.Whole, new InlineProgress<FixityProgress>(p => bar.Report((double)p.Done / Math.Max(1, p.Total)))));
        }

        foreach (var p in report.Problems)
        {
            output.WriteLine($"{p.Problem.ToUpperInvariant(),-9} {p.Kind} {p.File} · item {p.Item ?? "—"} · collection {p.Collection ?? "—"} · {p.Detail}");
        }

        output.WriteLine(report.Chain.FirstBreak is { } broken
            ? $"Event chain BROKEN at event {broken.EventId}: {broken.Reason}"
            : $"Event chain intact: {report.Chain.Events} event(s) up to {report.Chain.Head?.ToString() ?? "none"}.");
        string? keptProblem = kept is null ? null : ArchiveWork.Run(() => EventChain.CheckKeptHeadAsync(session.Get<ArchiveDbContext>(), kept));
        if (kept is not null)
        {
            output.WriteLine(keptProblem is null ? $"Kept head {kept} is in the log as it was." : $"KEPT-HEAD {keptProblem}");
        }

        output.WriteLine($"Event chain head: {report.HeadAfter?.ToString() ?? "none"} (after this audit's own events; compare it with a copy kept in a bag or catalogue).");
        output.WriteLine(report.AllGood
            ? $"All {report.Checked} stored object(s) match their recorded SHA-256 and their records agree; nothing was changed."
            : $"{report.Problems.Count} problem(s) in {report.Checked} stored object(s), their records and the event log; nothing was changed or repaired.");
        if (!report.AllGood || keptProblem is not null)
        {
            error.WriteLine($"tapevault: fixity audit found {report.Problems.Count + (keptProblem is null ? 0 : 1)} problem(s).");
            return Damaged;
        }

        return 0;
    }
}
