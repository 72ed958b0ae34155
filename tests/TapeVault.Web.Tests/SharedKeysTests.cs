using System.Net;
using Microsoft.AspNetCore.Mvc.Testing.Handlers;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// Several web nodes behind one address: a session begun on one node is honoured by another only when both keep their
/// data-protection keys in the same folder (TapeVault:Web:KeysFolder).
/// </summary>
public sealed class SharedKeysTests
{
    [Fact]
    public async Task ASessionBegunOnOneWebNode_IsHonouredByAnotherWithTheSameKeysFolder_AndRefusedByOneWithItsOwn()
    {
        using var folder = new ArchiveFolder();
        string shared = folder.File("shared-keys");
        string own = folder.File("own-keys");

        // Three nodes on one archive, serving pages only (on SQLite one process at most may run the jobs).
        await using var first = Node(folder, shared);
        await using var second = Node(folder, shared);
        await using var third = Node(folder, own);
        await first.AddUserAsync(ArchiveAppFactory.CuratorName, Archive.Accounts.Roles.Curator);

        // One browser: the same cookies go to whichever node the address leads to.
        var cookies = new CookieContainer();
        using var onFirst = new ApiClient(first.CreateDefaultClient(new CookieContainerHandler(cookies)));
        await onFirst.SignInAsync(ArchiveAppFactory.CuratorName, ArchiveAppFactory.Password);
        Assert.Contains(cookies.GetAllCookies(), c => c.Name == "tapevault.session");

        using var onSecond = second.CreateDefaultClient(new CookieContainerHandler(cookies));
        using (var response = await onSecond.GetAsync("/api/collections"))
        {
            Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        }

        using var onThird = third.CreateDefaultClient(new CookieContainerHandler(cookies));
        using (var response = await onThird.GetAsync("/api/collections"))
        {
            Assert.Equal(HttpStatusCode.Unauthorized, response.StatusCode);
        }

        // The keys are files in the folder named, and only there.
        Assert.NotEmpty(Directory.EnumerateFiles(shared, "key-*.xml"));
        Assert.NotEmpty(Directory.EnumerateFiles(own, "key-*.xml"));
        Assert.False(Directory.Exists(Path.Combine(Path.GetDirectoryName(folder.DatabasePath)!, "keys")));
    }

    private static ArchiveAppFactory Node(ArchiveFolder folder, string keys) => new(folder, new Dictionary<string, string?>
    {
        ["TapeVault:Web:Role"] = "Pages",
        ["TapeVault:Web:KeysFolder"] = keys,
    });
}
