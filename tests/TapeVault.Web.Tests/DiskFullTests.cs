using System.Net;
using System.Net.Http.Json;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Archive.Storage;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// A full disk met on the real code path: the store's temporary files are opened on Linux's /dev/full, which answers
/// every write with ENOSPC ("No space left on device", errno 28; the null(4)/full(4) manual page), so the kernel,
/// not the test, makes the fault. Uploads get 507 with one sentence; jobs end failed with the same reason.
/// </summary>
public sealed class DiskFullTests
{
    private const string FullDevice = "/dev/full";

    [Fact]
    public void WritingToDevFull_IsRecognisedAsADiskFull_AndAnotherIoErrorIsNot()
    {
        Assert.True(File.Exists(FullDevice), "this test needs Linux's /dev/full");
        var full = Assert.ThrowsAny<IOException>(() =>
        {
            using var stream = new FileStream(FullDevice, FileMode.Open, FileAccess.Write);
            stream.Write(new byte[4096]);
            stream.Flush();
        });
        Assert.True(StorageFaults.IsDiskFull(full), $"HResult {full.HResult}: {full.Message}");
        Assert.True(StorageFaults.IsDiskFull(new InvalidOperationException("wrapped", full)));

        var missing = Assert.ThrowsAny<IOException>(() => File.OpenRead("/nonexistent-folder/x"));
        Assert.False(StorageFaults.IsDiskFull(missing));
    }

    [Fact]
    public async Task UploadOnAFullDisk_Gets507WithTheSentence_AndLeavesNothingBehind()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("FULL-1");
        app.Store.OpenTemporary = OnFullDevice;

        using var response = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 50_000), "full.wav");

        Assert.Equal(HttpStatusCode.InsufficientStorage, response.StatusCode);
        Assert.Equal("application/problem+json", response.Content.Headers.ContentType?.MediaType);
        string title = await ApiClient.ProblemTitleAsync(response);
        Assert.StartsWith("The archive's disk is full: the upload could not be written and nothing of it was kept;", title, StringComparison.Ordinal);
        Assert.DoesNotContain(folder.Root, title, StringComparison.Ordinal);

        await using var scope = app.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        Assert.Equal(0, await db.Captures.CountAsync());
        Assert.Equal(0, await db.Objects.CountAsync());
        Assert.Empty(app.Store.EnumerateHashes());
        Assert.Empty(Directory.EnumerateFiles(folder.TempFolder, "*", SearchOption.AllDirectories));
    }

    [Fact]
    public async Task MergeAndBagJobsOnAFullDisk_EndFailedWithTheSentence_AndStoreNothing()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("FULL-2");
        var capture = SynthCaptures.Orrin(folder.Root, "full", files: 1, bytesPerFile: 40, seed: 5);
        using var upload = await curator.UploadRawAsync(itemId, capture.Bytes, "full.wav", extraQuery: $"&decodeProfile={SynthCaptures.Profile}");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var uploaded = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.Equal("done", (await curator.WaitForJobAsync(uploaded.DecodeJob!.Id, TimeSpan.FromSeconds(60))).State);
        int objectsBefore = app.Store.EnumerateHashes().Count();

        app.Store.OpenTemporary = OnFullDevice;
        foreach (var (path, kind) in new[] { ($"/api/items/{itemId}/merge", "merge"), ($"/api/items/{itemId}/bag", "bag") })
        {
            var job = await curator.PostAsync<JobView>(path, new { }, HttpStatusCode.Accepted);
            var ended = await curator.WaitForJobAsync(job.Id, TimeSpan.FromSeconds(60));
            Assert.Equal("failed", ended.State);
            Assert.Equal($"The archive's disk is full: what the {kind} job made could not be written and nothing of it was kept; free space on the disk that holds the archive's database and store, then try again.", ended.Error);
        }

        await using var scope = app.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        Assert.Equal(0, await db.Images.CountAsync());
        Assert.Equal(0, await db.Exports.CountAsync());
        Assert.Equal(objectsBefore, app.Store.EnumerateHashes().Count());
        Assert.Empty(Directory.EnumerateFiles(folder.TempFolder, "*", SearchOption.AllDirectories));
    }

    /// <summary>Creates the temporary file as the store would (so its clean-up is tested too) but writes to /dev/full.</summary>
    private static Stream OnFullDevice(string path)
    {
        File.WriteAllBytes(path, []);
        return new FileStream(FullDevice, FileMode.Open, FileAccess.Write, FileShare.ReadWrite, 4096, FileOptions.Asynchronous);
    }
}
