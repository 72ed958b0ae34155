using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using Microsoft.EntityFrameworkCore;
using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>One archive for the class, with a small upload limit so that "too large" needs only a small file.</summary>
public sealed class BadInputArchive : IAsyncLifetime
{
    public const long MaxUploadBytes = 64 * 1024;

    public ArchiveFolder Folder { get; } = new();

    public ArchiveAppFactory App { get; private set; } = null!;

    public ApiClient Curator { get; private set; } = null!;

    public int ItemId { get; private set; }

    public async Task InitializeAsync()
    {
        App = new ArchiveAppFactory(Folder, new Dictionary<string, string?> { ["TapeVault:Archive:MaxUploadBytes"] = ArchiveAppFactory.Invariant(MaxUploadBytes) });
        await App.AddCuratorAndViewerAsync();
        Curator = await App.SignedInAsync(ArchiveAppFactory.CuratorName);
        ItemId = (await Curator.NewItemAsync("BAD-1")).ItemId;
    }

    public async Task DisposeAsync()
    {
        Curator.Dispose();
        await App.DisposeAsync();
        Folder.Dispose();
    }
}

public sealed partial class BadInputTests(BadInputArchive archive) : IClassFixture<BadInputArchive>
{
    private static readonly byte[] Valid = WavBytes.Pcm16(frames: 2000);

    public static TheoryData<string> Cases => [.. BadUploads.Keys];

    /// <summary>Each bad upload: its bytes, file name, content type, whether sent as multipart, and a word the reason must name.</summary>
    private static readonly Dictionary<string, (byte[] Bytes, string FileName, string ContentType, bool Multipart, string Reason)> BadUploads = new()
    {
        ["not a wav"] = (Encoding.ASCII.GetBytes("These are the minutes of the club meeting, not a recording."), "minutes.wav", "audio/wav", false, "not a WAV file"),
        // Cut in the middle of a sample frame, well inside the data chunk; the header still gives the full length.
        ["truncated mid-data"] = (Valid[..(WavBytes.HeaderBytes + 1001)], "cut.wav", "audio/wav", false, "claims more audio than the file holds"),
        ["truncated inside the header"] = (Valid[..30], "cut-header.wav", "audio/wav", true, "format chunk"),
        // A whole file whose data chunk claims ten times the samples that follow.
        ["header claims more data"] = (WavBytes.Pcm16(frames: 2000, declaredDataBytes: 40_000), "liar.wav", "audio/wav", false, "claims more audio than the file holds"),
        ["zero length"] = ([], "empty.wav", "audio/wav", false, "empty"),
        ["zero channels"] = (WavBytes.Pcm16(frames: 2000, channels: 0), "nochannels.wav", "audio/wav", false, "0 audio channels"),
        // Format code 2 is ADPCM in the WAVE format registry (from memory); TapeVault reads PCM and IEEE float only.
        ["unsupported encoding"] = (WavBytes.Pcm16(frames: 2000, formatCode: 2), "adpcm.wav", "audio/wav", false, "unsupported encoding"),
        ["oversized, declared length"] = (WavBytes.Pcm16(frames: 40_000), "big.wav", "audio/wav", false, "larger than the limit"),
        ["oversized, multipart"] = (WavBytes.Pcm16(frames: 40_000), "big.wav", "audio/wav", true, "larger than the limit"),
        ["slash in name"] = (Valid, "tapes/side-a.wav", "audio/wav", false, "path separator"),
        ["backslash in name"] = (Valid, "tapes\\side-a.wav", "audio/wav", true, "path separator"),
        ["dot-dot in name"] = (Valid, "..side-a.wav", "audio/wav", true, "'..'"),
        // UAX #9 / UTS #39: a right-to-left override makes "\u202E3pm.wav" show as "vaw.mp3"; a zero-width space hides.
        ["right-to-left override in name"] = (Valid, "\u202E3pm.wav", "audio/wav", false, "U+202E RIGHT-TO-LEFT OVERRIDE"),
        ["zero-width space in name"] = (Valid, "side\u200B-a.wav", "audio/wav", true, "U+200B ZERO WIDTH SPACE"),
        ["wrong content type"] = (Valid, "side-a.wav", "text/plain", false, "content type 'text/plain'"),
        ["wrong extension"] = (Valid, "side-a.mp3", "audio/wav", false, "'.mp3'"),
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public async Task BadUpload_Gets400Or413WithOneSentence_AndLeavesNothingBehind(string name)
    {
        var (bytes, fileName, contentType, multipart, reason) = BadUploads[name];
        using var response = multipart
            ? await archive.Curator.UploadMultipartAsync(archive.ItemId, bytes, fileName, contentType)
            : await archive.Curator.UploadRawAsync(archive.ItemId, bytes, fileName, contentType);
        await AssertRefusedAsync(response, reason);
    }

    [Fact]
    public async Task OversizedUpload_WithoutDeclaredLength_IsCutOffWhileStreaming_AndLeavesNothingBehind()
    {
        using var content = new UnknownLengthContent(WavBytes.Pcm16(frames: 40_000));
        content.Headers.ContentType = new("audio/wav");
        using var response = await archive.Curator.Http.PostAsync(new Uri($"/api/items/{archive.ItemId}/captures?fileName=stream.wav", UriKind.Relative), content);
        await AssertRefusedAsync(response, "larger than the limit");
    }

    [Fact]
    public async Task ValidUpload_OfTheSameKind_IsAccepted_SoTheRefusalsAreAboutTheDamage()
    {
        // In a second item, so the refusals above still find the first one empty.
        var other = await archive.Curator.NewItemAsync("BAD-CONTROL");
        using var response = await archive.Curator.UploadRawAsync(other.ItemId, Valid, "side-a.wav");
        await ApiClient.EnsureAsync(response, HttpStatusCode.Created);
    }

    private async Task AssertRefusedAsync(HttpResponseMessage response, string reason)
    {
        // Too large is 413 Content Too Large (RFC 9110 §15.5.14); every other refusal of the input is 400.
        await ApiClient.EnsureAsync(response, reason == "larger than the limit" ? HttpStatusCode.RequestEntityTooLarge : HttpStatusCode.BadRequest);
        string title = await ApiClient.ProblemTitleAsync(response);
        Assert.Contains(reason, title, StringComparison.Ordinal);

        // One sentence: ends with a full stop and has no second sentence after one.
        Assert.EndsWith(".", title, StringComparison.Ordinal);
        Assert.DoesNotMatch(SecondSentence(), title[..^1]);

        await using var scope = archive.App.Scope();
        var db = scope.ServiceProvider.GetRequiredService<ArchiveDbContext>();
        Assert.Equal(0, await db.Captures.CountAsync(c => c.ItemId == archive.ItemId));
        var known = await db.Objects.Select(o => o.Sha256).ToListAsync();
        Assert.Equal(known.Order(StringComparer.Ordinal), archive.App.Store.EnumerateHashes().Order(StringComparer.Ordinal));
        var captured = await db.Captures.Select(c => c.Sha256).ToListAsync();
        Assert.All(known, k => Assert.Contains(k, captured));
        Assert.Empty(Directory.EnumerateFiles(archive.Folder.TempFolder, "*", SearchOption.AllDirectories));
    }

    [GeneratedRegex(@"[.!?]\s+[A-Z]")]
    private static partial Regex SecondSentence();

    /// <summary>A body sent without a Content-Length, so only the store's own byte count can find it too large.</summary>
    private sealed class UnknownLengthContent(byte[] bytes) : HttpContent
    {
        protected override Task SerializeToStreamAsync(Stream stream, TransportContext? context) => stream.WriteAsync(bytes).AsTask();

        protected override bool TryComputeLength(out long length)
        {
            length = 0;
            return false;
        }
    }
}
