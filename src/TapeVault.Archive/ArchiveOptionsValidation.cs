using System.ComponentModel.DataAnnotations;
using Microsoft.Extensions.Options;

namespace TapeVault.Archive;

/// <summary>
/// Checks the "TapeVault:Archive" settings when the host starts (the web app refuses to start, the command line stops
/// with one line), so that a wrong setting is named at once instead of failing the first upload or job.
/// </summary>
public sealed class ArchiveOptionsValidation : IValidateOptions<ArchiveOptions>
{
    public ValidateOptionsResult Validate(string? name, ArchiveOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var failures = new List<string>();
        var results = new List<ValidationResult>();
        if (!Validator.TryValidateObject(options, new ValidationContext(options), results, validateAllProperties: true))
        {
            failures.AddRange(results.Select(r => $"{ArchiveOptions.Section}:{string.Join(",", r.MemberNames)}: {r.ErrorMessage}"));
        }

        if (!Enum.IsDefined(options.Provider))
        {
            failures.Add($"{ArchiveOptions.Section}:Provider: \"{options.Provider}\" is not a database provider; use Sqlite or PostgreSql.");
        }
        else if (options.Provider == DatabaseProvider.PostgreSql)
        {
            if (string.IsNullOrWhiteSpace(options.ConnectionString))
            {
                failures.Add($"{ArchiveOptions.Section}:ConnectionString: the PostgreSql provider needs a connection string (Host=…;Database=…;Username=…).");
            }
            else
            {
                try
                {
                    _ = new Npgsql.NpgsqlConnectionStringBuilder(options.ConnectionString);
                }
                catch (ArgumentException problem)
                {
                    failures.Add($"{ArchiveOptions.Section}:ConnectionString: {problem.Message}");
                }
            }
        }

        foreach (var extension in options.AcceptedExtensions)
        {
            if (extension.Length < 2 || extension[0] != '.' || extension.IndexOfAny(Path.GetInvalidFileNameChars()) >= 0)
            {
                failures.Add($"{ArchiveOptions.Section}:AllowedExtensions: \"{extension}\" is not a file name extension such as \".wav\".");
            }
        }

        foreach (var type in options.AcceptedContentTypes)
        {
            if (type.IndexOf('/', StringComparison.Ordinal) is <= 0 || type.EndsWith('/'))
            {
                failures.Add($"{ArchiveOptions.Section}:AllowedContentTypes: \"{type}\" is not a content type such as \"audio/wav\".");
            }
        }

        return failures.Count == 0 ? ValidateOptionsResult.Success : ValidateOptionsResult.Fail(failures);
    }
}

/// <summary>
/// Hands the options the host built (read from its settings) to the options system, after the validators have passed
/// them; the archive's services and <see cref="IOptions{ArchiveOptions}"/> so share one instance.
/// </summary>
internal sealed class GivenOptionsFactory<T>(T given, IEnumerable<IValidateOptions<T>> validators) : IOptionsFactory<T>
    where T : class
{
    public T Create(string name)
    {
        var failures = new List<string>();
        foreach (var validator in validators)
        {
            var result = validator.Validate(name, given);
            if (result.Failed)
            {
                failures.AddRange(result.Failures ?? [result.FailureMessage]);
            }
        }

        return failures.Count == 0 ? given : throw new OptionsValidationException(name, typeof(T), failures);
    }
}
