using Xunit;

namespace TapeVault.Archive.Tests;

/// <summary>One archive for every test that only reads it (bags, catalogues), built once: synthesis and decoding take seconds.</summary>
public sealed class SharedArchive : IAsyncLifetime
{
    /// <summary>Curator text with markup in it, to show that the catalogue prints it as text.</summary>
    public const string HostileNote = "Shell cracked. <script>alert('x')</script> See [the notes](javascript:alert(1)) and **mould** warning.";

    private ArchiveFixture? archive;

    public ArchiveFixture Archive => archive ?? throw new InvalidOperationException("Not initialised.");

    public async Task InitializeAsync() => archive = await ArchiveFixture.CreateAsync(HostileNote);

    public async Task DisposeAsync()
    {
        if (archive is not null)
        {
            await archive.DisposeAsync();
        }
    }
}

[CollectionDefinition(Name)]
public sealed class SharedArchiveGroup : ICollectionFixture<SharedArchive>
{
    public const string Name = "shared archive";
}
