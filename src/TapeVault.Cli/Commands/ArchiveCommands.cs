using System.Globalization;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Jobs;

namespace TapeVault.Cli.Commands;

/// <summary>
/// Commands on the web app's archive: <c>verify</c> (the event chain, every stored object and every capture's records;
/// exit 1 on any broken link, mismatch, missing file, contradiction or unrecorded file, or a kept head that no longer holds),
/// <c>export bag</c> (RFC 8493) and <c>publish</c> (the static catalogue).
/// </summary>
public static class ArchiveCommands
{
    public const int Damaged = 1;

    public static string VerifyUsage => $"verify [--collection ID] [--expect-head \"event N sha256:HASH\"] {ArchiveSession.OptionsUsage}";

    public static string ExportUsage => $"export bag (--item ACCESSION | --collection ID) --out PATH [--zip] {ArchiveSession.OptionsUsage}";

    public static string PublishUsage => $"publish COLLECTION-ID OUTDIR {ArchiveSession.OptionsUsage}";


    public static int Verify(CommandLine args, TextWriter output, TextWriter error, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(error);
        int? collection = args.Value("collection") is { } c ? ParseId(c, "--collection") : null;
        var kept = args.Value("expect-head") is { } h
            ? EventChain.ParseHead(h) ?? throw new UsageException($"--expect-head takes a head as bags and verify write it, \"event N sha256:HASH\", not '{h}'.")
            : null;
        ArchiveSession.DeclareOptions(args);
        args.RejectUnknown();
        if (args.Positional.Count > 0)
        {
            throw new UsageException($"verify takes no file names: tapevault {VerifyUsage}.");
        }

        using var session = ArchiveSession.Open(args, settings);
        FixityReport report;
        using (var bar = new ProgressBar("verifying"))
        {
            report = Run(() => session.Get<FixityAudit>().RunAsync(collection, ArchiveSession.Agent, new InlineProgress<FixityProgress>(p => bar.Report((double)p.Done / Math.Max(1, p.Total)))));
        }

        foreach (var p in report.Problems)
        {
            output.WriteLine($"{p.Problem.ToUpperInvariant(),-9} {p.Kind} {p.File} · item {p.Item ?? "—"} · collection {p.Collection ?? "—"} · {p.Detail}");
        }

        output.WriteLine(report.Chain.FirstBreak is { } broken
            ? $"Event chain BROKEN at event {broken.EventId}: {broken.Reason}"
            : $"Event chain intact: {report.Chain.Events} event(s) up to {report.Chain.Head?.ToString() ?? "none"}.");
        string? keptProblem = kept is null ? null : Run(() => EventChain.CheckKeptHeadAsync(session.Get<ArchiveDbContext>(), kept));
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

    public static int Export(CommandLine args, TextWriter output, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        if (args.Positional is not ["bag"])
        {
            throw new UsageException($"Say what to export: tapevault {ExportUsage}.");
        }

        string? accession = args.Value("item");
        int? collection = args.Value("collection") is { } c ? ParseId(c, "--collection") : null;
        string outPath = args.Required("out");
        bool zip = args.Flag("zip");
        ArchiveSession.DeclareOptions(args);
        args.RejectUnknown();
        if ((accession is null) == (collection is null))
        {
            throw new UsageException("Give either --item ACCESSION or --collection ID.");
        }

        var target = Files.OutputPath(outPath);
        if (zip ? File.Exists(target) || Directory.Exists(target) : Directory.Exists(target) && Directory.EnumerateFileSystemEntries(target).Any() || File.Exists(target))
        {
            throw new UsageException($"{target} already exists; give a new path for the bag.");
        }

        using var session = ArchiveSession.Open(args, settings);
        var db = session.Get<ArchiveDbContext>();
        BagScope scope;
        if (accession is not null)
        {
            int itemId = db.Items.AsNoTracking().Where(i => i.AccessionNumber == accession).Select(i => i.Id).FirstOrDefault();
            scope = itemId != 0 ? BagScope.Item(itemId) : throw new UsageException($"There is no item with accession number '{accession}'.");
        }
        else
        {
            scope = BagScope.OfCollection(collection!.Value);
        }

        var bags = session.Get<BagExport>();
        BagResult result;
        if (zip)
        {
            var temp = target + ".part";
            try
            {
                using (var file = new FileStream(temp, FileMode.CreateNew, FileAccess.Write))
                {
                    result = Run(async () =>
                    {
                        await using var sink = new ZipBagSink(file, Path.GetFileNameWithoutExtension(target));
                        return await bags.WriteAsync(scope, sink).ConfigureAwait(false);
                    });
                }

                File.Move(temp, target);
            }
            finally
            {
                File.Delete(temp);
            }
        }
        else
        {
            var temp = Path.Combine(Path.GetDirectoryName(target)!, $".{Path.GetFileName(target)}.part-{Guid.NewGuid():N}");
            try
            {
                result = Run(async () =>
                {
                    await using var sink = new FolderBagSink(temp);
                    return await bags.WriteAsync(scope, sink).ConfigureAwait(false);
                });
                if (Directory.Exists(target))
                {
                    Directory.Delete(target);
                }

                Directory.Move(temp, target);
            }
            finally
            {
                if (Directory.Exists(temp))
                {
                    Directory.Delete(temp, recursive: true);
                }
            }
        }

        // Recorded only now that the bag is in place under its final name (a crash before this records nothing).
        bags.RecordExported(result, ArchiveSession.Agent, $"written by the command line as '{Path.GetFileName(target)}'");
        db.SaveChanges();
        output.WriteLine($"Bag written to {target}: {result.PayloadFiles} payload file(s), {result.PayloadBytes} bytes, for {string.Join(", ", result.ExternalIdentifiers)}.");
        output.WriteLine(zip ? "Unzip it and check it with: sha256sum -c manifest-sha256.txt" : $"Check it with: cd {target} && sha256sum -c manifest-sha256.txt && sha256sum -c tagmanifest-sha256.txt");
        return 0;
    }

    public static int Publish(CommandLine args, TextWriter output, CliSettings settings)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(output);
        ArchiveSession.DeclareOptions(args);
        args.RejectUnknown();
        if (args.Positional.Count != 2)
        {
            throw new UsageException($"Give a collection and a folder: tapevault {PublishUsage}.");
        }

        int collection = ParseId(args.Positional[0], "COLLECTION-ID");
        var target = Files.OutputPath(args.Positional[1]);
        if (File.Exists(target) || (Directory.Exists(target) && Directory.EnumerateFileSystemEntries(target).Any()))
        {
            throw new UsageException($"{target} already exists and is not empty; publish into a new folder.");
        }

        using var session = ArchiveSession.Open(args, settings);
        var temp = Path.Combine(Path.GetDirectoryName(target)!, $".{Path.GetFileName(target)}.part-{Guid.NewGuid():N}");
        try
        {
            var publisher = session.Get<CataloguePublisher>();
            var files = Run(() => publisher.WriteAsync(collection, temp));
            if (Directory.Exists(target))
            {
                Directory.Delete(target);
            }

            Directory.Move(temp, target);

            // The event names the folder the catalogue ended in, never the temporary one it was written to.
            Run(async () =>
            {
                await publisher.RecordPublishedAsync(collection, $"Catalogue published by the command line to the folder '{Path.GetFileName(target)}' ({files.Count} files).", ArchiveSession.Agent).ConfigureAwait(false);
                return 0;
            });
            output.WriteLine($"Catalogue written to {target}: {files.Count} files. Open {Path.Combine(target, "index.html")} in a browser; check it with: cd {target} && sha256sum -c SHA256SUMS");
        }
        finally
        {
            if (Directory.Exists(temp))
            {
                Directory.Delete(temp, recursive: true);
            }
        }

        return 0;
    }

    private static int ParseId(string text, string what) =>
        int.TryParse(text, NumberStyles.None, CultureInfo.InvariantCulture, out int id) && id > 0
            ? id
            : throw new UsageException($"{what} must be a positive number, not '{text}'.");

    /// <summary>Runs archive work; its refusals become usage errors (one line, exit 2).</summary>
    private static T Run<T>(Func<Task<T>> work)
    {
        try
        {
            return work().GetAwaiter().GetResult();
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveNotFoundException or ArchiveConflictException)
        {
            throw new UsageException(e.Message);
        }
    }
}
