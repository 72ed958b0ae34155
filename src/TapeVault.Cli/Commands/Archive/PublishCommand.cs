using System.CommandLine;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;
using TapeVault.Archive.Events;
using TapeVault.Archive.Export;
using TapeVault.Archive.Fixity;
using TapeVault.Archive.Jobs;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault publish COLLECTION --out DIR: the static catalogue (HTML pages with SHA256SUMS) into a new folder.</summary>
public sealed class PublishCommand : CliCommand
{
    private readonly Argument<string> collectionArgument = new("COLLECTION") { Description = "the collection to publish, by id or by exact name (any case)" };
    private readonly Argument<string> folder = new("OUTDIR") { Description = "the new folder for the catalogue (the same as --out)", Arity = ArgumentArity.ZeroOrOne };
    private readonly Option<string> output = CommonOptions.Out("DIR", "the new folder for the catalogue; required, here or as the word after COLLECTION");
    private readonly ArchiveLocation archive = new();

    public PublishCommand()
        : base("publish", "Publish a collection as a static catalogue (HTML pages with SHA256SUMS) into a new folder.")
    {
        Arguments.Add(collectionArgument);
        Arguments.Add(folder);
        Options.Add(output);
        archive.AddTo(this);
    }

    public override string Usage => "publish COLLECTION (OUTDIR | --out DIR) [--database FILE] [--store DIR]";

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        var word = new ArchiveWork.CollectionWord(run.Value(collectionArgument)!, "COLLECTION");
        var target = Files.OutputPath(run.OutputPath(this.output, folder));
        if (File.Exists(target) || (Directory.Exists(target) && Directory.EnumerateFileSystemEntries(target).Any()))
        {
            throw new UsageException($"{target} already exists and is not empty; publish into a new folder.");
        }

        using var session = archive.Open(run, CliSettings.Load());
        int collection = word.Resolve(session.Get<ArchiveDbContext>());
        var temp = Path.Combine(Path.GetDirectoryName(target)!, $".{Path.GetFileName(target)}.part-{Guid.NewGuid():N}");
        try
        {
            var publisher = session.Get<CataloguePublisher>();
            var files = ArchiveWork.Run(() => publisher.WriteAsync(collection, temp));
            if (Directory.Exists(target))
            {
                Directory.Delete(target);
            }

            string manifest = CataloguePublisher.ManifestSha256(temp);
            Directory.Move(temp, target);

            // The event names the folder the catalogue ended in, never the temporary one it was written to.
            ArchiveWork.Run(async () =>
            {
                await publisher.RecordPublishedAsync(collection, $"Catalogue published by the command line to the folder '{Path.GetFileName(target)}' ({files.Count} files).", manifest, ArchiveSession.Agent).ConfigureAwait(false);
                return 0;
            });
            if (!ArchiveWork.Run(() => OrganisationSettings.CurrentAsync(session.Get<ArchiveDbContext>(), session.Options)).IsSet)
            {
                output.WriteLine($"The catalogue names no publisher: the archive's organisation is not set. To name it: {Organisation.WhereToSet}.");
            }

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
}
