using System.Net;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Export;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// The archive's organisation: a curator sets it on the settings page; bags then name it in bag-info.txt (RFC 8493
/// §2.2.2's reserved elements). (That the first start says where to set it is in <see cref="StartupTests"/>.)
/// </summary>
public sealed class OrganisationSettingsTests
{
    [Fact]
    public async Task ACuratorSetsTheOrganisationOnTheSettingsPage_AndBagsNameIt()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Archive:Organisation:Name"] = "From the settings file" });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("ORG-1");

        var refused = await PostSettingsAsync(curator, "Riverside Sound Archive", "not-an-address");
        Assert.Equal(HttpStatusCode.BadRequest, refused.Status);
        Assert.Contains("e-mail address", refused.Body, StringComparison.Ordinal);

        var saved = await PostSettingsAsync(curator, "Riverside Sound Archive", "desk@riverside.example");
        Assert.True(saved.Status == HttpStatusCode.OK, saved.Body);
        Assert.Contains("Saved.", saved.Body, StringComparison.Ordinal);

        var page = await curator.Http.GetStringAsync("/settings");
        Assert.Contains("value=\"Riverside Sound Archive\"", page, StringComparison.Ordinal);

        string bag = Path.Combine(folder.Root, "bag");
        await using (var scope = app.Scope())
        {
            await using var sink = new FolderBagSink(bag);
            await scope.ServiceProvider.GetRequiredService<BagExport>().WriteAsync(BagScope.Item(itemId), sink);
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            Assert.Equal(1, await db.Events.CountAsync(e => e.EventType == "settings" && e.ObjectType == "organisation"));
        }

        // RFC 8493 §2.2.2: "Label: value" lines; the saved name wins over the settings file's, the empty parts are left out.
        var info = File.ReadAllLines(Path.Combine(bag, "bag-info.txt")).Select(l => l.Split(": ", 2)).ToDictionary(p => p[0], p => p[1]);
        Assert.Equal("Riverside Sound Archive", info["Source-Organization"]);
        Assert.Equal("Mill Lane 3, Riverside", info["Organization-Address"]);
        Assert.Equal("desk@riverside.example", info["Contact-Email"]);
        Assert.False(info.ContainsKey("Contact-Phone"));
    }

    [Fact]
    public async Task AViewerSeesTheOrganisation_ButHasNoFormToChangeIt()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?> { ["TapeVault:Archive:Organisation:Name"] = "Riverside Sound Archive" });
        await app.AddCuratorAndViewerAsync();
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);

        var page = await viewer.Http.GetStringAsync("/settings");

        Assert.Contains("Riverside Sound Archive", page, StringComparison.Ordinal);
        Assert.DoesNotContain("<form method=\"post\" class=\"card\">", page, StringComparison.Ordinal);
    }

    private static async Task<(HttpStatusCode Status, string Body)> PostSettingsAsync(ApiClient client, string name, string email)
    {
        using var form = new FormUrlEncodedContent(new Dictionary<string, string>
        {
            ["Name"] = name,
            ["Address"] = "Mill Lane 3\nRiverside",
            ["ContactName"] = string.Empty,
            ["ContactPhone"] = string.Empty,
            ["ContactEmail"] = email,
        });
        using var response = await client.Http.PostAsync("/settings", form);
        return (response.StatusCode, await response.Content.ReadAsStringAsync());
    }
}
