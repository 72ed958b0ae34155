using System.Net;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// Lists come in the same order whichever database holds the archive. SQLite compares text byte by byte (its BINARY
/// collation, sqlite.org "Datatype In SQLite", section 7); a PostgreSQL database sorts by its locale, where an English
/// one puts "a shelf" before "B shelf" and ignores punctuation at first. The archive asks for byte order on both; .NET's
/// ordinal comparison of these ASCII names is that order.
/// </summary>
public sealed class ListOrderTests
{
    [Fact]
    public async Task Collections_and_their_tapes_list_in_byte_order_of_their_names_on_either_database()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        string[] names = ["a shelf", "B shelf", "Bench tapes", "b-side shelf"];
        int collectionId = 0;
        foreach (var name in names)
        {
            collectionId = (await curator.PostAsync<CollectionDetail>("/api/collections", new NewCollection(name, null), HttpStatusCode.Created)).Id;
        }

        string[] accessions = ["TEST-0010", "test-0003", "TEST 0002", "TEST0001", "Test-0004"];
        foreach (var accession in accessions)
        {
            await curator.PostAsync<ItemDetail>($"/api/collections/{collectionId}/items", new NewItem(accession, "Tape", null, null, "A"), HttpStatusCode.Created);
        }

        var listed = await curator.GetAsync<List<CollectionSummary>>("/api/collections");
        Assert.Equal(names.Order(StringComparer.Ordinal), listed.Select(c => c.Name));
        var collection = await curator.GetAsync<CollectionDetail>($"/api/collections/{collectionId}");
        Assert.Equal(accessions.Order(StringComparer.Ordinal), collection.Items.Select(i => i.AccessionNumber));
    }
}
