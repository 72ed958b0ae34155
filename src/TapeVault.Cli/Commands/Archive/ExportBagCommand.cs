using System.CommandLine;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Jobs;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault export bag (--item ACCESSION | --collection ID|NAME) --out PATH [--zip]: a BagIt bag (RFC 8493).</summary>
public sealed class ExportBagCommand : CliCommand
{
    private readonly Option<string> item = new("--item") { HelpName = "ACCESSION", Description = "the item to export, by accession number" };
    private readonly Option<string> collection = new("--collection") { HelpName = "ID|NAME", Description = "the collection to export, by id or by exact name (any case)" };
    private readonly Option<string> output = CommonOptions.Out("PATH", "the new bag folder (or .zip file with --zip) (required)");
    private readonly Option<bool> zip = new("--zip") { Description = "write the bag as one zip file; default: a folder" };
    private readonly ArchiveLocation archive = new();

    public ExportBagCommand()
        : base("bag", "Export an item or a collection as a BagIt bag (RFC 8493).")
    {
        output.Required = true;
        Options.Add(item);
        Options.Add(collection);
        Options.Add(output);
        Options.Add(zip);
        archive.AddTo(this);
    }

    public override string Usage => "export bag (--item ACCESSION | --collection ID|NAME) --out PATH [--zip] [--database FILE] [--store DIR]";

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        string? accession = run.Value(item);
        var word = run.Value(collection) is { } c ? new ArchiveWork.CollectionWord(c, "--collection") : null;
        string outPath = run.Value(this.output)!;
        bool zip = run.Value(this.zip);
        if ((accession is null) == (word is null))
        {
            throw new UsageException("Give either --item ACCESSION or --collection ID|NAME.");
        }

        var target = Files.OutputPath(outPath);
        if (zip ? File.Exists(target) || Directory.Exists(target) : Directory.Exists(target) && Directory.EnumerateFileSystemEntries(target).Any() || File.Exists(target))
        {
            throw new UsageException($"{target} already exists; give a new path for the bag.");
        }

        using var session = archive.Open(run, CliSettings.Load());
        var db = session.Get<ArchiveDbContext>();
        BagScope scope;
        if (accession is not null)
        {
            int itemId = db.Items.AsNoTracking().Where(i => i.AccessionNumber == accession).Select(i => i.Id).FirstOrDefault();
            scope = itemId != 0 ? BagScope.Item(itemId) : throw new UsageException($"There is no item with accession number '{accession}'.");
        }
        else
        {
            scope = BagScope.OfCollection(word!.Resolve(db));
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
                    result = ArchiveWork.Run(async () =>
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
                result = ArchiveWork.Run(async () =>
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
        if (!ArchiveWork.Run(() => OrganisationSettings.CurrentAsync(db, session.Options)).IsSet)
        {
            output.WriteLine($"The bag names no Source-Organization: the archive's organisation is not set. To name it: {Organisation.WhereToSet}.");
        }

        output.WriteLine(zip ? "Unzip it and check it with: sha256sum -c manifest-sha256.txt" : $"Check it with: cd {target} && sha256sum -c manifest-sha256.txt && sha256sum -c tagmanifest-sha256.txt");
        return 0;
    }
}
