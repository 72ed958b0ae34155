using Microsoft.Extensions.DependencyInjection;
using TapeVault.Archive.Ingest;
using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>An upload that does not start like a WAV file is refused at its first bytes, not after the whole body.</summary>
[Collection(SharedArchiveGroup.Name)]
public sealed class EarlyRefusalTests(SharedArchive shared)
{
    [Fact]
    public async Task A_body_that_is_not_a_wav_is_refused_after_its_first_twelve_bytes()
    {
        // A bottomless body of 'x': staging it whole would never end.
        using var body = new EndlessBytes((byte)'x');
        using var scope = shared.Archive.Services.CreateScope();
        var ingest = scope.ServiceProvider.GetRequiredService<CaptureIngest>();
        string tmp = shared.Archive.Store.TempFolder;
        int before = Directory.Exists(tmp) ? Directory.GetFiles(tmp).Length : 0;

        var e = await Assert.ThrowsAsync<ArchiveInputException>(() => ingest.IngestAsync(body, new IngestRequest { ItemId = shared.Archive.ItemId, FileName = "not-audio.wav", Agent = "test" }));

        Assert.Equal("The file is not a WAV file (no RIFF header) and not a FLAC file (no fLaC marker).", e.Message);
        Assert.True(body.BytesRead <= 12, $"{body.BytesRead} bytes were read");
        Assert.Equal(before, Directory.Exists(tmp) ? Directory.GetFiles(tmp).Length : 0);
    }

    private sealed class EndlessBytes(byte value) : Stream
    {
        public long BytesRead { get; private set; }

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => throw new NotSupportedException();

        public override long Position { get => BytesRead; set => throw new NotSupportedException(); }

        public override int Read(byte[] buffer, int offset, int count)
        {
            buffer.AsSpan(offset, count).Fill(value);
            BytesRead += count;
            return count;
        }

        public override void Flush()
        {
        }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}
