namespace TapeVault.Cli;

/// <summary>Bad input from the user: one clear sentence, exit code 2.</summary>
public sealed class UsageException(string message) : Exception(message);
