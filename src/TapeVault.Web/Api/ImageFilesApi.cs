using System.IO.Compression;
using System.Text;
using TapeVault.Archive;
using TapeVault.Archive.Accounts;

namespace TapeVault.Web.Api;

/// <summary>
/// The files recovered from a tape image, one by one or all in a zip. They are derived from the image, so the same
/// readers who may download the image may download them. Only complete files are given out: a file with a block
/// missing is listed with its gaps, never handed over as if whole.
/// </summary>
public static class ImageFilesApi
{
    /// <summary>The note inside the zip that lists the files left out and why.</summary>
    public const string IncompleteNoteName = "INCOMPLETE.txt";

    public static void MapImageFilesApi(this IEndpointRouteBuilder app)
    {
        var read = app.MapGroup("/api/images/{id:int}/files").AddEndpointFilter(ArchiveApi.Errors).RequireAuthorization(Roles.ReaderPolicy).WithTags("archive");
        read.MapDownload("/{index:int}", DownloadFileAsync)
            .WithDescription("One complete file named by the image's headers (index as in the image's file list); 409 when a block of it is missing.");
        read.MapDownload("/zip", DownloadZipAsync)
            .WithDescription("Every complete file named by the image's headers as one zip; files with a block missing are named in INCOMPLETE.txt inside it.");
    }

    public static string ZipName(RecoveredFiles files)
    {
        ArgumentNullException.ThrowIfNull(files);
        return $"{SafeAccession(files.AccessionNumber)}-v{files.Version}-files.zip";
    }

    private static async Task<IResult> DownloadFileAsync(int id, int index, ArchiveQueries queries, HttpContext http, CancellationToken cancellation)
    {
        var files = await queries.RecoveredFilesAsync(id, cancellation).ConfigureAwait(false);
        if (index < 0 || index >= files.Files.Count)
        {
            throw new ArchiveNotFoundException($"Tape image {id} names no file {index}.");
        }

        var file = files.Files[index];
        if (!file.Extracted.Complete)
        {
            throw new ArchiveConflictException($"The file {file.SafeName} is incomplete ({file.Extracted.DescribeGaps()}); only complete files are given out.");
        }

        return Downloads.File(http, file.Extracted.Bytes.ToArray(), "application/octet-stream", file.SafeName, files.CreatedUtc);
    }

    private static async Task<IResult> DownloadZipAsync(int id, ArchiveQueries queries, HttpContext http, CancellationToken cancellation)
    {
        var files = await queries.RecoveredFilesAsync(id, cancellation).ConfigureAwait(false);
        return Downloads.File(http, Zip(files), "application/zip", ZipName(files), files.CreatedUtc);
    }

    /// <summary>The complete files, stamped with the image's time so the same image always gives the same zip.</summary>
    public static byte[] Zip(RecoveredFiles files)
    {
        ArgumentNullException.ThrowIfNull(files);
        using var buffer = new MemoryStream();
        using (var zip = new ZipArchive(buffer, ZipArchiveMode.Create, leaveOpen: true))
        {
            var stamp = files.CreatedUtc.UtcDateTime < new DateTime(1980, 1, 2, 0, 0, 0, DateTimeKind.Utc) ? new DateTimeOffset(1980, 1, 2, 0, 0, 0, TimeSpan.Zero) : files.CreatedUtc;
            var incomplete = new StringBuilder();
            foreach (var file in files.Files)
            {
                if (!file.Extracted.Complete)
                {
                    incomplete.Append(file.SafeName).Append(": ").Append(file.Extracted.DescribeGaps()).Append('\n');
                    continue;
                }

                var entry = zip.CreateEntry(file.SafeName, CompressionLevel.Optimal);
                entry.LastWriteTime = stamp;
                using var stream = entry.Open();
                stream.Write(file.Extracted.Bytes.AsSpan());
            }

            if (incomplete.Length > 0)
            {
                string noteName = files.Files.Any(f => string.Equals(f.SafeName, IncompleteNoteName, StringComparison.OrdinalIgnoreCase)) ? "~" + IncompleteNoteName : IncompleteNoteName;
                var note = zip.CreateEntry(noteName, CompressionLevel.Optimal);
                note.LastWriteTime = stamp;
                using var writer = new StreamWriter(note.Open(), new UTF8Encoding(false));
                writer.Write($"Files of {files.AccessionNumber} image version {files.Version} left out because a block of each is missing:\n");
                writer.Write(incomplete.ToString());
            }
        }

        return buffer.ToArray();
    }

    private static string SafeAccession(string accession) =>
        new([.. accession.Select(ch => char.IsAsciiLetterOrDigit(ch) || ch is '-' or '_' or '.' ? ch : '_')]);
}
