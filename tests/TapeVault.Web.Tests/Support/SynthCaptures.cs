using System.Text;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Web.Tests.Support;

/// <summary>A capture made with our channel model, and the bytes that were written to the tape in it.</summary>
/// <param name="Payloads">The files as written; each is at most one block long, so each is exactly one block's payload.</param>
public sealed record SynthCapture(string Path, byte[] Bytes, IReadOnlyList<byte[]> Payloads);

/// <summary>Captures synthesised with the channel model: the ground truth of a recovery test is the bytes we wrote.</summary>
public static class SynthCaptures
{
    public const string Profile = "orrin-80";

    /// <summary>
    /// <paramref name="files"/> files of <paramref name="bytesPerFile"/> bytes each (at most 128, the block size the
    /// writer uses for this profile, so each file is one block) with mild noise, at 22 050 Hz to keep decodes short.
    /// </summary>
    public static SynthCapture Orrin(string folder, string name, int files, int bytesPerFile, int seed)
    {
        if (bytesPerFile is < 1 or > BlockWriter.DefaultPayloadBytes)
        {
            throw new ArgumentOutOfRangeException(nameof(bytesPerFile), "Each file must fit one block.");
        }

        var random = new Random(seed);
        var tapeFiles = new List<TapeFile>();
        for (int f = 0; f < files; f++)
        {
            var content = new byte[bytesPerFile];
            random.NextBytes(content);
            Encoding.ASCII.GetBytes($"F{f:00}").CopyTo(content, 0);
            tapeFiles.Add(new TapeFile($"FILE{f:00}", content));
        }

        var path = System.IO.Path.Combine(folder, $"{name}.wav");
        CaptureSynthesizer.Write(path, ProfileCatalog.BuiltIn.Get(Profile), tapeFiles, new ChannelDamage { SampleRate = 22_050, SnrDb = 30, Seed = seed });
        return new SynthCapture(path, File.ReadAllBytes(path), [.. tapeFiles.Select(t => t.Content)]);
    }
}
