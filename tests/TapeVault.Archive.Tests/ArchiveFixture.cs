using System.Diagnostics;
using System.Text;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Curation;
using TapeVault.Archive.Entities;
using TapeVault.Archive.Export;
using TapeVault.Archive.Ingest;
using TapeVault.Archive.Jobs;
using TapeVault.Archive.Storage;
using TapeVault.Archive.Tests.PostgreSql;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>
/// A real archive in a temporary folder (SQLite file and content store): one collection, one orrin-80 item with two
/// synthesised passes, each decoded and merged into an image, as the web app's jobs would do it. The synthesised bytes
/// are the ground truth the tests compare with (they come from the channel model, not from the decoder under test).
/// </summary>
public sealed class ArchiveFixture : IAsyncDisposable
{
    public const string Accession = "TEST-0001";

    /// <summary>The PostgreSQL database the fixture made for itself and drops at the end, if any.</summary>
    private readonly string? ownDatabase;

    private ArchiveFixture(string root, ServiceProvider services, string? ownDatabase)
    {
        Root = root;
        Services = services;
        this.ownDatabase = ownDatabase;
    }

    public string Root { get; }

    public ServiceProvider Services { get; }

    public ArchiveOptions Options => Services.GetRequiredService<ArchiveOptions>();

    public ContentStore Store => Services.GetRequiredService<ContentStore>();

    public int CollectionId { get; private set; }

    public int ItemId { get; private set; }

    public IReadOnlyList<TapeFile> Files { get; } =
    [
        new("GREET", Encoding.ASCII.GetBytes(string.Concat(Enumerable.Repeat("HELLO FROM THE TEST TAPE. ", 12)))),
        new("DATA", Enumerable.Range(0, 300).Select(i => unchecked((byte)(i * 7))).ToArray()),
    ];

    /// <summary>
    /// Builds the archive on the PostgreSQL database <paramref name="postgreSql"/> names; without one, on the test
    /// run's provider (<see cref="TestDatabase"/>): an SQLite file in the folder, or a fresh PostgreSQL database.
    /// <paramref name="clock"/>, when given, is the archive's clock in place of the system's.
    /// </summary>
    public static async Task<ArchiveFixture> CreateAsync(string conditionNotes = "Slight oxide shedding.", string? postgreSql = null, TimeProvider? clock = null)
    {
        var root = Directory.CreateTempSubdirectory("tapevault-archive-test-").FullName;
        var options = new ArchiveOptions { BaseFolder = root, DatabasePath = "archive.db", StorePath = "store" };
        string? ownDatabase = postgreSql is null && TestDatabase.IsPostgreSql ? await TestDatabase.CreateAsync() : null;
        postgreSql ??= ownDatabase;

        if (postgreSql is not null)
        {
            options.Provider = DatabaseProvider.PostgreSql;
            options.ConnectionString = postgreSql;
        }

        var collection = new ServiceCollection();
        collection.AddLogging();
        if (clock is not null)
        {
            collection.AddSingleton(clock);
        }

        options.Organisation = new Organisation { Name = "Test Archive", Address = "1 Test Street\nTestford", ContactEmail = "archive@example.org" };
        collection.AddTapeVaultArchive(options, ProfileCatalog.BuiltIn);
        var fixture = new ArchiveFixture(root, collection.BuildServiceProvider(), ownDatabase);
        await fixture.FillAsync(conditionNotes);
        return fixture;
    }

    public ArchiveDbContext NewContext() => Services.GetRequiredService<IDbContextFactory<ArchiveDbContext>>().CreateDbContext();

    /// <summary>
    /// The arguments that point the command line at this archive: its SQLite file, or its PostgreSQL database, and
    /// its store.
    /// </summary>
    public string[] CliArchiveArguments() => Options.Provider == DatabaseProvider.PostgreSql
        ? ["--connection", Options.ConnectionString, "--store", Options.FullStorePath]
        : ["--database", Options.FullDatabasePath, "--store", Options.FullStorePath];

    public async ValueTask DisposeAsync()
    {
        await Services.DisposeAsync();
        Microsoft.Data.Sqlite.SqliteConnection.ClearAllPools();
        if (ownDatabase is not null)
        {
            TestDatabase.Drop(ownDatabase);
        }

        foreach (var file in Directory.EnumerateFiles(Root, "*", SearchOption.AllDirectories))
        {
            File.SetAttributes(file, FileAttributes.Normal);
        }

        Directory.Delete(Root, recursive: true);
    }

    /// <summary>The SHA-256 GNU sha256sum gives one file (the first field of its line): the outside reference.</summary>
    public static string Sha256Sum(string path)
    {
        var start = new ProcessStartInfo("/usr/bin/sha256sum") { RedirectStandardOutput = true, RedirectStandardError = true };
        start.ArgumentList.Add(path);
        using var process = Process.Start(start)!;
        string output = process.StandardOutput.ReadToEnd();
        process.WaitForExit();
        Assert.Equal(0, process.ExitCode);
        return output.Split(' ', 2)[0];
    }

    /// <summary>Runs GNU sha256sum -c on a checksum file in <paramref name="folder"/>; returns its exit code and output.</summary>
    public static (int ExitCode, string Output) Sha256SumCheck(string folder, string sumsFile)
    {
        var start = new ProcessStartInfo("/usr/bin/sha256sum") { WorkingDirectory = folder, RedirectStandardOutput = true, RedirectStandardError = true };
        start.ArgumentList.Add("-c");
        start.ArgumentList.Add(sumsFile);
        using var process = Process.Start(start)!;
        string output = process.StandardOutput.ReadToEnd() + process.StandardError.ReadToEnd();
        process.WaitForExit();
        return (process.ExitCode, output);
    }

    private async Task FillAsync(string conditionNotes)
    {
        await using (var db = NewContext())
        {
            await ArchiveDatabase.MigrateAsync(db);
        }

        var profile = ProfileCatalog.BuiltIn.Get("orrin-80");
        using var scope = Services.CreateScope();
        var actions = scope.ServiceProvider.GetRequiredService<CuratorActions>();
        CollectionId = (await actions.CreateCollectionAsync("Test shelf", "A shelf made for the tests.", "tester")).Id;
        ItemId = (await actions.CreateItemAsync(CollectionId, Accession, "Test tape", "TEST LABEL", conditionNotes, "A", "tester")).Id;
        var ingest = scope.ServiceProvider.GetRequiredService<CaptureIngest>();
        var handlers = Services.GetServices<IJobHandler>().ToDictionary(h => h.Kind);
        var passes = new[] { new ChannelDamage { SnrDb = 26, Seed = 101 }, new ChannelDamage { SnrDb = 22, Speed = 1.02, Seed = 102 } };
        for (int p = 0; p < passes.Length; p++)
        {
            var path = Path.Combine(Root, $"pass{p + 1}.wav");
            CaptureSynthesizer.Write(path, profile, Files, passes[p]);
            IngestResult ingested;
            await using (var source = File.OpenRead(path))
            {
                ingested = await ingest.IngestAsync(source, new IngestRequest { ItemId = ItemId, FileName = $"pass{p + 1}.wav", ContentType = "audio/wav", Agent = "tester", Deck = "bench deck" });
            }

            File.Delete(path);
            var decode = new JobRecord { Kind = JobKinds.Decode, Parameters = new DecodeJobParameters(ingested.Capture.Id, profile.Id, null).ToJson(), CreatedBy = "tester" };
            await handlers[JobKinds.Decode].RunAsync(decode, (_, _) => Task.FromResult(false), CancellationToken.None);
        }

        var merge = new JobRecord { Kind = JobKinds.Merge, Parameters = new MergeJobParameters(ItemId).ToJson(), CreatedBy = "tester" };
        await handlers[JobKinds.Merge].RunAsync(merge, (_, _) => Task.FromResult(false), CancellationToken.None);
    }
}
