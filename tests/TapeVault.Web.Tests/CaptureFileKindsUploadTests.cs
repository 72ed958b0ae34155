using System.Buffers.Binary;
using System.Diagnostics;
using System.Net;
using System.Net.Http.Json;
using System.Text;
using TapeVault.Web.Api;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>
/// Uploads of Broadcast WAV and FLAC captures through the API: the file's own metadata is shown and offered, only a
/// curator takes it, and a FLAC original is stored and served as FLAC. Debian's flac (RFC 9639) makes the FLAC file.
/// </summary>
public sealed class CaptureFileKindsUploadTests
{
    [Fact]
    public async Task A_BroadcastWavUpload_ShowsWhatTheFileSays_AndOnlyACuratorTakesIt()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        using var viewer = await app.SignedInAsync(ArchiveAppFactory.ViewerName);
        var (_, itemId) = await curator.NewItemAsync("BWF-WEB-1");

        // EBU Tech 3285's bext: Description at 0 (256 bytes), Originator at 256 (32), OriginationDate at 320 (10),
        // Version at 346, CodingHistory from 602.
        var bext = new byte[602 + 36];
        Encoding.ASCII.GetBytes("Second pass").CopyTo(bext, 0);
        Encoding.ASCII.GetBytes("M. Okoro").CopyTo(bext, 256);
        Encoding.ASCII.GetBytes("2026-09-14").CopyTo(bext, 320);
        BinaryPrimitives.WriteUInt16LittleEndian(bext.AsSpan(346), 1);
        Encoding.ASCII.GetBytes("A=ANALOGUE,M=mono,T=Deck C;\r\n").CopyTo(bext, 602);
        byte[] wav = WithChunkBeforeData(WavBytes.Pcm16(frames: 4000), "bext", bext);

        using var upload = await curator.UploadRawAsync(itemId, wav, "side-a.bwf");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var result = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!;
        Assert.Contains("deck 'Deck C', operator 'M. Okoro', date 2026-09-14", result.Message, StringComparison.Ordinal);
        Assert.Equal(string.Empty, result.Capture.Deck);

        var shown = await viewer.GetAsync<CaptureSummary>($"/api/captures/{result.Capture.Id}");
        Assert.Equal("Deck C", shown.Embedded!.Suggestion.Deck);
        Assert.Equal("A=ANALOGUE,M=mono,T=Deck C;", shown.Embedded.Bext!.CodingHistory);

        using (var page = await viewer.Http.GetAsync(new Uri($"/captures/{result.Capture.Id}", UriKind.Relative)))
        {
            string html = await page.Content.ReadAsStringAsync();
            Assert.Contains("What the file says about itself", html, StringComparison.Ordinal);
            Assert.Contains("Deck C", html, StringComparison.Ordinal);
            Assert.DoesNotContain("Use these details", html, StringComparison.Ordinal);
        }

        using (var refused = await viewer.Http.PostAsync(new Uri($"/api/captures/{result.Capture.Id}/details-from-file", UriKind.Relative), null))
        {
            Assert.Equal(HttpStatusCode.Forbidden, refused.StatusCode);
        }

        using var taken = await curator.Http.PostAsync(new Uri($"/api/captures/{result.Capture.Id}/details-from-file", UriKind.Relative), null);
        await ApiClient.EnsureAsync(taken, HttpStatusCode.OK);
        var after = (await taken.Content.ReadFromJsonAsync<CaptureSummary>(ApiClient.Json))!;
        Assert.Equal(("Deck C", "M. Okoro", new DateOnly(2026, 9, 14), "Second pass"), (after.Deck, after.Operator, after.CapturedOn, after.Notes));
    }

    [Fact]
    public async Task A_FlacUpload_IsStoredAsItCame_AndServedAsFlac()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("FLAC-WEB-1");
        string wav = Path.Combine(folder.Root, "pass.wav");
        await File.WriteAllBytesAsync(wav, WavBytes.Pcm16(frames: 8000, seed: 5));
        string flac = Path.Combine(folder.Root, "pass.flac");
        using (var process = Process.Start("/usr/bin/flac", ["--silent", "--force", "-8", "-o", flac, wav]))
        {
            await process.WaitForExitAsync();
            Assert.Equal(0, process.ExitCode);
        }

        byte[] bytes = await File.ReadAllBytesAsync(flac);
        using var upload = await curator.UploadMultipartAsync(itemId, bytes, "pass.flac", "audio/flac");
        await ApiClient.EnsureAsync(upload, HttpStatusCode.Created);
        var capture = (await upload.Content.ReadFromJsonAsync<UploadResult>(ApiClient.Json))!.Capture;
        Assert.Equal("flac", capture.Container);
        Assert.Equal((22_050, 8000 / 22_050.0), (capture.SampleRate, capture.DurationSeconds));

        using var download = await curator.Http.GetAsync(new Uri($"/api/captures/{capture.Id}/original", UriKind.Relative));
        await ApiClient.EnsureAsync(download, HttpStatusCode.OK);
        Assert.Equal("audio/flac", download.Content.Headers.ContentType?.MediaType);
        Assert.Equal(bytes, await download.Content.ReadAsByteArrayAsync());
    }

    private static byte[] WithChunkBeforeData(byte[] wav, string id, byte[] body)
    {
        int at = 12;
        while (Encoding.ASCII.GetString(wav, at, 4) != "data")
        {
            at += 8 + BinaryPrimitives.ReadInt32LittleEndian(wav.AsSpan(at + 4));
        }

        byte[] header = [.. Encoding.ASCII.GetBytes(id), 0, 0, 0, 0];
        BinaryPrimitives.WriteInt32LittleEndian(header.AsSpan(4), body.Length);
        byte[] result = [.. wav[..at], .. header, .. body, .. wav[at..]];
        BinaryPrimitives.WriteUInt32LittleEndian(result.AsSpan(4), (uint)(result.Length - 8));
        return result;
    }
}
