using System.CommandLine;
using System.Globalization;
using TapeVault.Core.Image;

namespace TapeVault.Cli.Commands;

/// <summary>tapevault image verify FILE: exit 0 for a whole image, 1 with one line on standard error for a damaged one.</summary>
public sealed class ImageVerifyCommand : CliCommand
{
    public const int Damaged = 1;

    private readonly Argument<string> file = new("FILE") { Description = "the tape image (.tvimg) to check" };

    public ImageVerifyCommand()
        : base("verify", "Check a tape image: every hash in it, and what it holds.")
    {
        Arguments.Add(file);
    }

    protected override int Run(Invocation run)
    {
        ArgumentNullException.ThrowIfNull(run);
        var output = run.Output;
        var error = run.Error;
        string path = ImageFileArgument.Existing(run.Value(file)!);
        ImageVerification verification;
        using (var stream = File.OpenRead(path))
        {
            verification = TapeImageContainer.Verify(stream);
        }

        if (!verification.Ok)
        {
            error.WriteLine($"tapevault: {path}: {verification.FailureReason}");
            return Damaged;
        }

        var image = verification.Image!;
        output.WriteLine($"Image    {path}: container version {verification.FormatVersion}, {verification.Length} bytes, all hashes good");
        output.WriteLine($"SHA-256  {verification.FileSha256}");
        output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"Profile  {image.ProfileId}; made {image.CreatedUtc:yyyy-MM-dd HH:mm:ss} UTC by {image.CodeVersion} from {image.Captures.Length} capture(s)"));
        output.WriteLine($"Blocks   {verification.Blocks}: {verification.Clean} clean, {verification.Voted} voted, {verification.Repaired} repaired, {verification.Missing} missing");
        var files = ImageFiles.Extract(image);
        output.WriteLine($"Files    {files.Length}: {files.Count(f => f.Complete)} complete, {files.Count(f => !f.Complete)} incomplete");
        return 0;
    }
}
