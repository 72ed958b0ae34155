using TapeVault.Core.Formats;
using Xunit;

namespace TapeVault.Core.Tests.Formats;

/// <summary>The built-in profiles load, and the standard ones say what their standard says.</summary>
public sealed class BuiltInProfileTests
{
    private static readonly string BuiltInFolder = Path.Combine(RepositoryRoot(), "src", "TapeVault.Core", "Formats", "BuiltIn");

    [Fact]
    public void Every_built_in_profile_loads()
    {
        var ids = ProfileCatalog.BuiltIn.All.Select(p => p.Id).ToList();

        Assert.Equal(["biphase-1200", "biphase-1500", "fsk-sync-1200", "kcs-1200", "kcs-300", "one-cycle-bits", "orrin-80", "three-class-pairs"], ids);
    }

    [Fact]
    public void Every_built_in_file_on_disk_is_embedded_and_parses_to_the_same_profile()
    {
        var files = Directory.GetFiles(BuiltInFolder, "*.json");
        Assert.Equal(ProfileCatalog.BuiltIn.All.Count(), files.Length);
        foreach (string file in files)
        {
            var fromDisk = ProfileLoader.Load(file);
            var embedded = ProfileCatalog.BuiltIn.Get(fromDisk.Id);

            // Records with lists compare by reference, so compare what the lists hold.
            Assert.Equal(embedded.Family, fromDisk.Family);
            Assert.Equal(embedded.Framing, fromDisk.Framing);
            Assert.Equal(embedded.Layout.Header, fromDisk.Layout.Header);
            Assert.Equal(embedded.Layout.Checksum, fromDisk.Layout.Checksum);
            Assert.Equal(embedded.Recording, fromDisk.Recording);
            Assert.Equal(Path.GetFileNameWithoutExtension(file), fromDisk.Id);
        }
    }

    [Fact]
    public void Every_built_in_profile_carries_the_section_of_its_family_only()
    {
        foreach (var profile in ProfileCatalog.BuiltIn.All)
        {
            Assert.Equal(profile.Family == FormatFamily.PulseWidth, profile.PulseWidth is not null);
            Assert.Equal(profile.Family == FormatFamily.Fsk, profile.Fsk is not null);
            Assert.Equal(profile.Family == FormatFamily.Biphase, profile.Biphase is not null);
            Assert.False(string.IsNullOrWhiteSpace(profile.Name));
        }
    }

    [Theory]
    [InlineData("kcs-300", 300)]
    [InlineData("kcs-1200", 1200)]
    public void The_kansas_city_profiles_follow_the_standard(string id, double baud)
    {
        var profile = ProfileCatalog.BuiltIn.Get(id);

        // Kansas City Standard (BYTE, February 1976): a 0 is 1200 Hz, a 1 is 2400 Hz; one start bit (0), eight data
        // bits least significant first, two stop bits (1); 300 baud, with 1200 baud as the faster variant.
        Assert.Equal(FormatFamily.Fsk, profile.Family);
        Assert.Equal(2400, profile.Fsk!.MarkHz);
        Assert.Equal(1200, profile.Fsk.SpaceHz);
        Assert.Equal(baud, profile.Fsk.Baud);
        Assert.Equal(new ByteFraming(8, BitOrder.LsbFirst, "0", "11", Parity.None), profile.Framing);
        Assert.Equal(11, profile.Framing.BitsPerByte);
        Assert.True(profile.Layout.IsStream);
    }

    [Fact]
    public void At_300_baud_a_kansas_city_zero_is_four_cycles_and_a_one_eight()
    {
        var fsk = ProfileCatalog.BuiltIn.Get("kcs-300").Fsk!;

        // Kansas City Standard (BYTE, February 1976): four cycles of 1200 Hz or eight of 2400 Hz per bit.
        Assert.Equal(4, fsk.SpaceHz * fsk.BitSeconds, 9);
        Assert.Equal(8, fsk.MarkHz * fsk.BitSeconds, 9);
    }

    [Fact]
    public void The_demo_pulse_width_profile_has_a_sync_that_the_lead_in_cannot_swallow()
    {
        var encoding = ProfileCatalog.BuiltIn.Get("orrin-80").PulseWidth!;

        Assert.NotEqual(encoding.LeadInClass, encoding.Sync[0]);
        Assert.Contains(encoding.Classes, c => c.Name == encoding.LeadInClass);
    }

    [Fact]
    public void The_biphase_profile_reads_its_length_from_the_header_and_checks_with_a_crc()
    {
        var profile = ProfileCatalog.BuiltIn.Get("biphase-1200");

        Assert.Null(profile.Layout.PayloadBytes);
        Assert.NotNull(profile.Layout.FieldWithRole(FieldRole.PayloadLength));
        Assert.Equal("crc16-xmodem", profile.Layout.Checksum!.Algorithm);
        Assert.Equal(1 / 1200.0, profile.Biphase!.CellSeconds, 9);
    }

    [Fact]
    public void Asking_for_an_unknown_profile_lists_the_known_ones()
    {
        var error = Assert.Throws<ProfileException>(() => ProfileCatalog.BuiltIn.Get("no-such-format"));

        Assert.Contains("'no-such-format'", error.Message, StringComparison.Ordinal);
        Assert.Contains("biphase-1200, biphase-1500, fsk-sync-1200, kcs-1200, kcs-300, one-cycle-bits, orrin-80, three-class-pairs", error.Message, StringComparison.Ordinal);
        Assert.False(ProfileCatalog.BuiltIn.TryGet("no-such-format", out _));
    }

    private static string RepositoryRoot()
    {
        var directory = new DirectoryInfo(AppContext.BaseDirectory);
        while (directory is not null && !File.Exists(Path.Combine(directory.FullName, "TapeVault.sln")))
        {
            directory = directory.Parent;
        }

        return directory?.FullName ?? throw new InvalidOperationException("The repository root (with TapeVault.sln) was not found above the test assembly.");
    }
}
