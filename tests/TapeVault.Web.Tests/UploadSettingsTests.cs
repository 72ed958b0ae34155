using System.Net;
using TapeVault.Web.Tests.Support;
using Xunit;

namespace TapeVault.Web.Tests;

/// <summary>The settings can narrow what uploads are accepted: a configured list replaces the built-in one.</summary>
public sealed class UploadSettingsTests
{
    [Fact]
    public async Task ConfiguredListsReplaceTheDefaults_AndTheRefusalNamesEachTypeOnce()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder, new Dictionary<string, string?>
        {
            ["TapeVault:Archive:AllowedExtensions:0"] = ".wav",
            ["TapeVault:Archive:AllowedContentTypes:0"] = "audio/wav",
        });
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("NARROW-1");

        using (var wave = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "side-a.wave"))
        {
            Assert.Equal(HttpStatusCode.BadRequest, wave.StatusCode);
            Assert.Equal("Files ending in '.wave' are not accepted; captures must be .wav files.", await ApiClient.ProblemTitleAsync(wave));
        }

        using (var octets = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "side-a.wav", "application/octet-stream"))
        {
            Assert.Equal(HttpStatusCode.BadRequest, octets.StatusCode);
            Assert.Equal("The content type 'application/octet-stream' is not accepted for captures; send the capture as audio/wav.", await ApiClient.ProblemTitleAsync(octets));
        }

        using var accepted = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "side-a.wav", "audio/wav");
        Assert.Equal(HttpStatusCode.Created, accepted.StatusCode);
        Assert.Empty(Directory.EnumerateFiles(folder.TempFolder, "*", SearchOption.AllDirectories));
    }

    [Fact]
    public async Task WithoutSettings_TheBuiltInListsApply_EachNamedOnce()
    {
        using var folder = new ArchiveFolder();
        await using var app = new ArchiveAppFactory(folder);
        await app.AddCuratorAndViewerAsync();
        using var curator = await app.SignedInAsync(ArchiveAppFactory.CuratorName);
        var (_, itemId) = await curator.NewItemAsync("WIDE-1");

        using (var wave = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "side-a.wave", "application/octet-stream"))
        {
            Assert.Equal(HttpStatusCode.Created, wave.StatusCode);
        }

        using var mp3 = await curator.UploadRawAsync(itemId, WavBytes.Pcm16(frames: 2000), "side-a.mp3");
        Assert.Equal("Files ending in '.mp3' are not accepted; captures must be .wav, .wave, .bwf, .rf64 or .flac files.", await ApiClient.ProblemTitleAsync(mp3));
    }
}
