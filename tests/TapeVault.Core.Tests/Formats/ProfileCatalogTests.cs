using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>A temporary profiles folder for one test class, deleted with everything in it afterwards.</summary>
public sealed class ProfileFolder : IDisposable
{
    public string Root { get; } = Directory.CreateTempSubdirectory("tapevault-profiles-").FullName;

    /// <summary>A fresh empty folder inside the root, one per test.</summary>
    public string NewFolder()
    {
        string path = Path.Combine(Root, Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(path);
        return path;
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Root, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless.
        }
    }
}

/// <summary>Users add profiles by dropping JSON files into a folder; ids stay unique across built-ins and files.</summary>
public sealed class ProfileCatalogTests(ProfileFolder folders) : IClassFixture<ProfileFolder>
{
    [Fact]
    public void A_user_profile_folder_adds_its_profiles_to_the_built_ins()
    {
        string folder = folders.NewFolder();
        File.WriteAllText(Path.Combine(folder, "pulse.json"), ProfileJson.PulseWidthText);
        File.WriteAllText(Path.Combine(folder, "tones.json"), ProfileJson.FskText);
        File.WriteAllText(Path.Combine(folder, "notes.txt"), "not a profile");

        var catalog = ProfileCatalog.WithUserFolder(folder);

        Assert.Equal(
            ["biphase-1200", "kcs-1200", "kcs-300", "one-cycle-bits", "orrin-80", "test-pulse", "test-tones"],
            catalog.All.Select(p => p.Id));
        Assert.Equal(FormatFamily.Fsk, catalog.Get("test-tones").Family);
        Assert.Equal(5, ProfileCatalog.BuiltIn.All.Count());
    }

    [Fact]
    public void A_user_profile_that_reuses_a_built_in_id_is_refused()
    {
        string folder = folders.NewFolder();
        File.WriteAllText(Path.Combine(folder, "mine.json"), ProfileJson.PulseWidthText.Replace("\"test-pulse\"", "\"kcs-300\"", StringComparison.Ordinal));

        var error = Assert.Throws<ProfileException>(() => ProfileCatalog.WithUserFolder(folder));

        Assert.Contains("mine.json", error.Message, StringComparison.Ordinal);
        Assert.Contains("id 'kcs-300' is already taken", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Two_user_profiles_with_one_id_are_refused()
    {
        string folder = folders.NewFolder();
        File.WriteAllText(Path.Combine(folder, "a.json"), ProfileJson.PulseWidthText);
        File.WriteAllText(Path.Combine(folder, "b.json"), ProfileJson.PulseWidthText.Replace("\"Test pulse-width format\"", "\"Another\"", StringComparison.Ordinal));

        var error = Assert.Throws<ProfileException>(() => ProfileCatalog.WithUserFolder(folder));

        Assert.Contains("b.json", error.Message, StringComparison.Ordinal);
        Assert.Contains("id 'test-pulse' is already taken", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_broken_user_profile_stops_the_catalogue_with_the_file_and_field_named()
    {
        string folder = folders.NewFolder();
        File.WriteAllText(Path.Combine(folder, "broken.json"), ProfileJson.PulseWidthText.Replace("\"sum8\"", "\"sum9\"", StringComparison.Ordinal));

        var error = Assert.Throws<ProfileException>(() => ProfileCatalog.WithUserFolder(folder));

        Assert.Contains("layout.checksum.algorithm names an unknown checksum 'sum9'", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void An_invalid_json_file_is_named_by_its_file_name()
    {
        string folder = folders.NewFolder();
        File.WriteAllText(Path.Combine(folder, "half.json"), "{ \"id\": \"half\",");

        var error = Assert.Throws<ProfileException>(() => ProfileCatalog.WithUserFolder(folder));

        Assert.Contains("Profile half.json: invalid JSON", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void No_folder_or_a_missing_folder_leaves_the_built_ins()
    {
        Assert.Equal(5, ProfileCatalog.WithUserFolder(null).All.Count());
        Assert.Equal(5, ProfileCatalog.WithUserFolder(Path.Combine(folders.Root, "absent")).All.Count());
    }

    [Fact]
    public void A_profile_file_that_does_not_exist_or_is_too_large_is_refused_before_reading()
    {
        string folder = folders.NewFolder();
        string missing = Path.Combine(folder, "missing.json");
        string large = Path.Combine(folder, "large.json");
        File.WriteAllText(large, new string(' ', ProfileLoader.MaximumFileBytes + 1));

        Assert.Contains("does not exist", Assert.Throws<ProfileException>(() => ProfileLoader.Load(missing)).Message, StringComparison.Ordinal);
        Assert.Contains("profiles are at most", Assert.Throws<ProfileException>(() => ProfileLoader.Load(large)).Message, StringComparison.Ordinal);
    }
}
