using System.IO.Compression;
using System.Text;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Export;
using Xunit;

namespace TapeVault.Archive.Tests;

[Collection(SharedArchiveGroup.Name)]
public sealed class BagExportTests(SharedArchive shared)
{
    [Fact]
    public async Task ItemBagFollowsRfc8493AndGnuSha256sumVerifiesBothManifests()
    {
        var archive = shared.Archive;
        var bag = Path.Combine(archive.Root, $"bag-{Guid.NewGuid():N}");
        using (var scope = archive.Services.CreateScope())
        {
            await using var sink = new FolderBagSink(bag);
            await scope.ServiceProvider.GetRequiredService<BagExport>().WriteAsync(BagScope.Item(archive.ItemId), sink);
        }

        AssertValidBag(bag, [ArchiveFixture.Accession]);
    }

    [Fact]
    public async Task CollectionBagAsZipUnpacksToAValidBagWithOneTopFolder()
    {
        var archive = shared.Archive;
        var zipPath = Path.Combine(archive.Root, $"bag-{Guid.NewGuid():N}.zip");
        using (var scope = archive.Services.CreateScope())
        {
            await using var file = File.Create(zipPath);
            await using var sink = new ZipBagSink(file, "shelf-bag");
            await scope.ServiceProvider.GetRequiredService<BagExport>().WriteAsync(BagScope.OfCollection(archive.CollectionId), sink);
        }

        var unpacked = Path.Combine(archive.Root, $"unpacked-{Guid.NewGuid():N}");
        ZipFile.ExtractToDirectory(zipPath, unpacked);
        Assert.Equal(["shelf-bag"], Directory.GetDirectories(unpacked).Select(Path.GetFileName));
        AssertValidBag(Path.Combine(unpacked, "shelf-bag"), [ArchiveFixture.Accession]);
    }

    [Fact]
    public async Task BagHoldsTheOriginalsUnchangedTheImageAndTheItemsRecords()
    {
        var archive = shared.Archive;
        var bag = Path.Combine(archive.Root, $"bag-{Guid.NewGuid():N}");
        using (var scope = archive.Services.CreateScope())
        {
            await using var sink = new FolderBagSink(bag);
            await scope.ServiceProvider.GetRequiredService<BagExport>().WriteAsync(BagScope.Item(archive.ItemId), sink);
        }

        await using var db = archive.NewContext();
        var item = Path.Combine(bag, "data", ArchiveFixture.Accession);
        foreach (var capture in db.Captures.Where(c => c.ItemId == archive.ItemId).ToList())
        {
            var copy = Path.Combine(item, "originals", $"capture-{capture.Id}-{capture.OriginalFileName}");
            Assert.Equal(File.ReadAllBytes(archive.Store.PathOf(capture.Sha256)), File.ReadAllBytes(copy));
        }

        Assert.Single(Directory.GetFiles(Path.Combine(item, "images"), "*.tvimg"));
        using var metadata = System.Text.Json.JsonDocument.Parse(File.ReadAllText(Path.Combine(item, "item.json")));
        Assert.Equal(ArchiveFixture.Accession, metadata.RootElement.GetProperty("item").GetProperty("accessionNumber").GetString());
        using var events = System.Text.Json.JsonDocument.Parse(File.ReadAllText(Path.Combine(item, "events.json")));
        Assert.Contains(events.RootElement.EnumerateArray(), e => e.GetProperty("eventType").GetString() == "merge");
    }

    [Fact]
    public async Task BagInfoAndItsOwnTagFileCarryTheEventChainHeadAsTheDatabaseHoldsIt()
    {
        var archive = shared.Archive;
        var bag = Path.Combine(archive.Root, $"bag-{Guid.NewGuid():N}");
        string expected;
        using (var scope = archive.Services.CreateScope())
        {
            await using (var db = archive.NewContext())
            {
                var newest = await db.Events.AsNoTracking().OrderByDescending(e => e.Id).FirstAsync();
                expected = $"event {newest.Id} sha256:{newest.Sha256}";
            }

            await using var sink = new FolderBagSink(bag);
            await scope.ServiceProvider.GetRequiredService<BagExport>().WriteAsync(BagScope.Item(archive.ItemId), sink);
        }

        var info = File.ReadAllLines(Path.Combine(bag, "bag-info.txt")).Select(l => l.Split(": ", 2)).ToDictionary(p => p[0], p => p[1]);
        Assert.Equal(expected, info["Event-Chain-Head"]);
        Assert.Equal($"{expected}\n", File.ReadAllText(Path.Combine(bag, BagExport.ChainHeadTagFile)));

        // The bag's own history ends at that head, with every event's hashes, so the copy can be checked against the archive's.
        using var events = System.Text.Json.JsonDocument.Parse(File.ReadAllText(Path.Combine(bag, "data", ArchiveFixture.Accession, "events.json")));
        Assert.All(events.RootElement.EnumerateArray(), e => Assert.Matches("^[0-9a-f]{64}$", e.GetProperty("sha256").GetString()!));
        AssertValidBag(bag, [ArchiveFixture.Accession]);
    }

    [Fact]
    public async Task AnArchiveThatHasNotNamedItsOrganisation_WritesBagsAndCataloguesNamingNone_NotTheDemoClub()
    {
        var archive = shared.Archive;
        var unnamed = new ArchiveOptions();
        var bag = Path.Combine(archive.Root, $"unnamed-bag-{Guid.NewGuid():N}");
        var site = Path.Combine(archive.Root, $"unnamed-site-{Guid.NewGuid():N}");
        using (var scope = archive.Services.CreateScope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            await using (var sink = new FolderBagSink(bag))
            {
                await new BagExport(db, archive.Store, unnamed).WriteAsync(BagScope.Item(archive.ItemId), sink);
            }

            await new CataloguePublisher(db, archive.Store, unnamed, Core.Formats.ProfileCatalog.BuiltIn).WriteAsync(archive.CollectionId, site);
        }

        // RFC 8493 §2.2.2: the reserved elements are optional; a bag without them is still a valid bag.
        string info = File.ReadAllText(Path.Combine(bag, "bag-info.txt"));
        Assert.DoesNotContain("Source-Organization", info, StringComparison.Ordinal);
        Assert.DoesNotContain("Contact-", info, StringComparison.Ordinal);
        Assert.DoesNotContain("Brackenfield", info, StringComparison.Ordinal);
        var (tagExit, tagOut) = ArchiveFixture.Sha256SumCheck(bag, "tagmanifest-sha256.txt");
        Assert.True(tagExit == 0, tagOut);

        string index = File.ReadAllText(Path.Combine(site, "index.html"));
        Assert.DoesNotContain("DCTERMS.publisher", index, StringComparison.Ordinal);
        Assert.DoesNotContain("class=\"org\"", index, StringComparison.Ordinal);
        Assert.DoesNotContain("Brackenfield", index, StringComparison.Ordinal);
    }

    [Fact]
    public async Task TheCatalogueNamesTheArchivesOrganisation_AsItsPublisher()
    {
        var archive = shared.Archive;
        var site = Path.Combine(archive.Root, $"named-site-{Guid.NewGuid():N}");
        using (var scope = archive.Services.CreateScope())
        {
            await scope.ServiceProvider.GetRequiredService<CataloguePublisher>().WriteAsync(archive.CollectionId, site);
        }

        // Dublin Core's "publisher" term (DCMI Metadata Terms), as a meta tag, and the name at the top of the page.
        string index = File.ReadAllText(Path.Combine(site, "index.html"));
        Assert.Contains("<meta name=\"DCTERMS.publisher\" content=\"Test Archive\">", index, StringComparison.Ordinal);
        Assert.Contains("<p class=\"org\">Test Archive</p>", index, StringComparison.Ordinal);
    }

    [Fact]
    public void BagIntoAFolderThatIsNotEmptyIsRefused()
    {
        var archive = shared.Archive;
        var bag = Directory.CreateDirectory(Path.Combine(archive.Root, $"busy-{Guid.NewGuid():N}")).FullName;
        File.WriteAllText(Path.Combine(bag, "other.txt"), "not a bag");
        Assert.Throws<ArchiveInputException>(() => new FolderBagSink(bag));
    }

    private static void AssertValidBag(string bag, IReadOnlyList<string> accessions)
    {
        // RFC 8493 §2.1.1: bagit.txt holds exactly these two lines.
        Assert.Equal("BagIt-Version: 1.0\nTag-File-Character-Encoding: UTF-8\n", File.ReadAllText(Path.Combine(bag, "bagit.txt"), Encoding.UTF8));

        // RFC 8493 §2.2.2: bag-info.txt is "Label: value" lines; Payload-Oxum is octets.streams of the payload.
        var info = File.ReadAllLines(Path.Combine(bag, "bag-info.txt"))
            .Select(l => l.Split(": ", 2)).Select(p => (Label: p[0], Value: p[1])).ToList();
        var payload = Directory.GetFiles(Path.Combine(bag, "data"), "*", SearchOption.AllDirectories);
        long octets = payload.Sum(f => new FileInfo(f).Length);
        Assert.Equal($"{octets}.{payload.Length}", info.Single(i => i.Label == "Payload-Oxum").Value);
        Assert.Matches(@"^\d{4}-\d{2}-\d{2}$", info.Single(i => i.Label == "Bagging-Date").Value);
        // RFC 8493 §2.2.2's reserved elements for who holds the bag, from the archive's own settings; a multi-line
        // address on one line; an element the archive did not set is left out, not written empty.
        Assert.Equal("Test Archive", info.Single(i => i.Label == "Source-Organization").Value);
        Assert.Equal("1 Test Street, Testford", info.Single(i => i.Label == "Organization-Address").Value);
        Assert.Equal("archive@example.org", info.Single(i => i.Label == "Contact-Email").Value);
        Assert.DoesNotContain(info, i => i.Label is "Contact-Name" or "Contact-Phone");
        Assert.Equal(accessions, info.Where(i => i.Label == "External-Identifier").Select(i => i.Value));

        // RFC 8493 §2.1.3: every payload file is in the manifest, and the manifest names nothing else.
        var manifest = File.ReadAllLines(Path.Combine(bag, "manifest-sha256.txt")).Select(l => l.Split("  ", 2)[1]).ToHashSet();
        var relative = payload.Select(f => Path.GetRelativePath(bag, f).Replace('\\', '/')).ToHashSet();
        Assert.Equal(relative, manifest);

        // RFC 8493 §2.2.1: the tag manifest covers the tag files, our event chain head among them (§2.2.4 allows other tag files).
        var tags = File.ReadAllLines(Path.Combine(bag, "tagmanifest-sha256.txt")).Select(l => l.Split("  ", 2)[1]).ToHashSet();
        Assert.Equal(new HashSet<string> { "bagit.txt", "bag-info.txt", "manifest-sha256.txt", BagExport.ChainHeadTagFile }, tags);

        // GNU coreutils sha256sum (outside the project) verifies both manifests as written.
        var (manifestExit, manifestOut) = ArchiveFixture.Sha256SumCheck(bag, "manifest-sha256.txt");
        Assert.True(manifestExit == 0, manifestOut);
        Assert.Equal(payload.Length, manifestOut.Split('\n').Count(l => l.EndsWith(": OK", StringComparison.Ordinal)));
        var (tagExit, tagOut) = ArchiveFixture.Sha256SumCheck(bag, "tagmanifest-sha256.txt");
        Assert.True(tagExit == 0, tagOut);
    }
}
