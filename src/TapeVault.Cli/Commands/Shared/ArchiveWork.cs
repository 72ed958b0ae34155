using System.Globalization;
using Microsoft.EntityFrameworkCore;
using TapeVault.Archive;

namespace TapeVault.Cli.Commands;

/// <summary>What the archive commands share: running archive work, and finding a collection by id or by name.</summary>
internal static class ArchiveWork
{
    /// <summary>Runs archive work; its refusals become usage errors (one line, exit 2).</summary>
    public static T Run<T>(Func<Task<T>> work)
    {
        ArgumentNullException.ThrowIfNull(work);
        try
        {
            return work().GetAwaiter().GetResult();
        }
        catch (Exception e) when (e is ArchiveInputException or ArchiveNotFoundException or ArchiveConflictException)
        {
            throw new UsageException(e.Message);
        }
    }

    /// <summary>A collection as the user named it: digits are its id; other words its exact name, in any case.</summary>
    public sealed record CollectionWord(string Text, string What)
    {
        /// <summary>The id when the word is one; a word of digits that is no positive number is refused when the word is made, before anything is opened.</summary>
        public int? Id { get; } = Text.All(char.IsAsciiDigit)
            ? int.TryParse(Text, NumberStyles.None, CultureInfo.InvariantCulture, out int id) && id > 0
                ? id
                : throw new UsageException($"{What} must be a positive number or a collection's name, not '{Text}'.")
            : null;

        /// <summary>
        /// The collection's id: the number itself, or the one collection whose name is the word (case-insensitive).
        /// No match, or several, is refused with what there is to choose from.
        /// </summary>
        public int Resolve(ArchiveDbContext db)
        {
            ArgumentNullException.ThrowIfNull(db);
            if (Id is { } id)
            {
                return id;
            }

            var all = db.Collections.AsNoTracking().OrderBy(c => c.Id).Select(c => new { c.Id, c.Name }).ToList();
            var matches = all.Where(c => string.Equals(c.Name.Trim(), Text.Trim(), StringComparison.OrdinalIgnoreCase)).ToList();
            return matches.Count switch
            {
                1 => matches[0].Id,
                0 => throw new UsageException(all.Count == 0
                    ? $"There is no collection named '{Text}'; the archive has no collections yet."
                    : $"There is no collection named '{Text}'; there are {string.Join(", ", all.Select(c => $"{c.Id} \"{c.Name}\""))}."),
                _ => throw new UsageException($"'{Text}' names {matches.Count} collections, {string.Join(", ", matches.Select(c => $"{c.Id} \"{c.Name}\""))}; give the id."),
            };
        }
    }
}
