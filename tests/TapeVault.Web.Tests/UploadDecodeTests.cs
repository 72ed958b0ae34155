using System.Net;
using System.Net.Http.Json;
using System.Security.Cryptography;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Core.Tests.OutsideChecks;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

public sealed class UploadDecodeTests
{
    [Theory]
    [InlineData("raw")]
    [InlineData("multipart")]
    public async Task Upload_ThenDecodeJob_StoresTheRunAndBlocks_WithTheSynthesisedPayloads(string how)
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync($"UP-{how}");

        // Ground truth is our own channel model's input: the bytes we synthesised onto the tape.
        var capture = SynthCaptures.Orrin(folder.Root, $"upload-{how}", files: 2, bytesPerFile: 100, seed: how.Length);
        using var response = how == "raw"
            ? await curator.UploadRawAsync(itemId, capture.Bytes, "pass1.wav")
            : await curator.UploadMultipartAsync(itemId, capture.Bytes, "pass1.wav");
        await ApiClient.EnsureAsync(response, HttpStatusCode.Created);
        var uploaded = (await response.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.False(uploaded.Duplicate);
        Assert.False(uploaded.LinkedExistingObject);

        // FIPS 180-4 SHA-256, as System.Security.Cryptography computes it, of the bytes sent.
        string captureSha = Convert.ToHexStringLower(SHA256.HashData(capture.Bytes));
        Assert.Equal(captureSha, uploaded.Capture.Sha256);
        Assert.Equal(capture.Bytes.Length, uploaded.Capture.Size);
        Assert.Equal(22_050, uploaded.Capture.SampleRate);
        Assert.Equal(1, uploaded.Capture.Channels);

        // The stored object is the upload, byte for byte: by .NET's SHA-256 and by GNU coreutils' sha256sum.
        string stored = app.Store.PathOf(captureSha);
        Assert.Equal(captureSha, Convert.ToHexStringLower(SHA256.HashData(await File.ReadAllBytesAsync(stored))));
        Assert.Equal(captureSha, OutsideTool.Sha256Sum(stored));
        Assert.Empty(Directory.EnumerateFiles(folder.TempFolder));

        var queued = await curator.PostAsync<JobView>($"/api/captures/{uploaded.Capture.Id}/decode", new DecodeRequest(SynthCaptures.Profile, null, null), HttpStatusCode.Accepted);
        var job = await curator.WaitForJobAsync(queued.Id, TimeSpan.FromSeconds(30));
        Assert.True(job.State == "done", $"The job ended {job.State}: {job.Error}");
        Assert.NotNull(job.ResultId);

        var run = await curator.GetAsync<RunDetail>($"/api/runs/{job.ResultId}");
        Assert.Equal(uploaded.Capture.Id, run.Run.CaptureId);
        Assert.Equal(SynthCaptures.Profile, run.Run.ProfileId);

        // Each file we wrote is one block; its payload's SHA-256 (FIPS 180-4, System.Security.Cryptography) is what the API reports.
        var expected = capture.Payloads.Select(p => Convert.ToHexStringLower(SHA256.HashData(p))).ToList();
        var clean = run.Positions.Where(p => p.Best.Status == "clean").Select(p => p.Best.PayloadSha256).ToList();
        Assert.Equal(expected.Count, run.Run.CleanPositions);
        Assert.Equal(expected, clean);
        Assert.All(run.Positions, p => Assert.Equal(100, p.Best.PayloadLength));

        await using (var scope = app.Scope())
        {
            var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
            var payloads = await db.Candidates.Where(c => c.RunId == run.Run.Id && c.Status == TapeVault.Core.Blocks.BlockStatus.Clean).Select(c => c.Payload).ToListAsync();
            Assert.All(payloads, p => Assert.Contains(capture.Payloads, truth => truth.AsSpan().SequenceEqual(p)));
            Assert.Equal(1, await db.Runs.CountAsync(r => r.CaptureId == uploaded.Capture.Id));
        }

        var events = await curator.GetAsync<List<EventView>>($"/api/items/{itemId}/events");
        Assert.Contains(events, e => e.EventType == "ingest" && e.Outcome == "success" && e.ObjectId == uploaded.Capture.Id.ToString(System.Globalization.CultureInfo.InvariantCulture) && e.Detail.Contains(captureSha, StringComparison.Ordinal));
        Assert.Contains(events, e => e.EventType == "decode" && e.Outcome == "success" && e.ObjectId == run.Run.Id.ToString(System.Globalization.CultureInfo.InvariantCulture));
    }
}
