namespace TapeVault.Archive;

/// <summary>Input the archive refuses, with a one-sentence reason meant for the person who sent it (HTTP 400, CLI exit 2).</summary>
public class ArchiveInputException(string message) : Exception(message);

/// <summary>An upload larger than the archive accepts (HTTP 413 Content Too Large, RFC 9110 §15.5.14; CLI exit 2).</summary>
public sealed class ArchiveTooLargeException(string message) : ArchiveInputException(message);

/// <summary>An id that names nothing (HTTP 404).</summary>
public sealed class ArchiveNotFoundException(string message) : Exception(message);

/// <summary>A request that contradicts what is stored, such as a second item with the same accession number (HTTP 409).</summary>
public sealed class ArchiveConflictException(string message) : Exception(message);
