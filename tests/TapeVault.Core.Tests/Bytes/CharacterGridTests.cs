using TapeVault.Core.Bytes;
using TapeVault.Core.Formats;
using TapeVault.Core.Pulses;
using Xunit;

namespace TapeVault.Core.Tests.Bytes;

/// <summary>
/// Where asynchronous characters may start again after a loss of signal, and how long a run of mark tone is. The
/// frame is the Kansas City Standard's (BYTE, February 1976: one start bit, eight data bits, two stop bits, eleven
/// bits a character); the tolerances are our own rule (0.3 bit, growing 0.15 % a bit, given up past 0.45 bit).
/// </summary>
public sealed class CharacterGridTests
{
    private const double Bit = 147; // samples a bit at 300 baud and 44.1 kHz

    private static ByteFraming Kcs => ProfileCatalog.BuiltIn.Get("kcs-300").Framing;

    [Fact]
    public void Grid_TakesAnyFall_BeforeAnyCharacterWasFramed()
    {
        var grid = new CharacterGrid(Kcs);
        Assert.True(grid.MayResumeAt(12_345, Bit));
        Assert.False(grid.HoldsAt(12_345, Bit));
    }

    [Fact]
    public void Grid_TakesFallsOnItsCharacters_AndRefusesThoseBitsOff()
    {
        var grid = new CharacterGrid(Kcs);
        grid.Add(framingOk: true, start: 1000, confirmed: true);

        // Five characters of eleven bits later, exactly, and a fifth of a bit off: on the grid.
        Assert.True(grid.MayResumeAt(1000 + (55 * Bit), Bit));
        Assert.True(grid.MayResumeAt(1000 + (55.2 * Bit), Bit));

        // Three bits early (lower-case text framed from its bit 7): off the grid.
        Assert.False(grid.MayResumeAt(1000 + (52 * Bit), Bit));
        Assert.True(grid.HoldsAt(1000 + (52 * Bit), Bit));
    }

    [Fact]
    public void Grid_GivesUp_OnceDriftCouldHideAWholeBit()
    {
        var grid = new CharacterGrid(Kcs);
        grid.Add(framingOk: true, start: 0, confirmed: true);

        // 0.3 + 0.0015 × 113 ≈ 0.47 bit of doubt after 113 bits: past 0.45, any fall may start one.
        double tenCharactersAndThreeBits = (110 + 3) * Bit;
        Assert.False(grid.HoldsAt(tenCharactersAndThreeBits, Bit));
        Assert.True(grid.MayResumeAt(tenCharactersAndThreeBits, Bit));
    }

    [Fact]
    public void Grid_KeepsItsStart_AcrossABadlyFramedCharacter_ButNotItsConfirmation()
    {
        var grid = new CharacterGrid(Kcs);
        grid.Add(framingOk: true, start: 0, confirmed: true);
        grid.Add(framingOk: false, start: 4 * Bit, confirmed: false);

        Assert.False(grid.Confirmed);
        Assert.True(grid.MayResumeAt(22 * Bit, Bit));
        Assert.False(grid.MayResumeAt(26 * Bit, Bit));
    }

    [Fact]
    public void MarkRun_SurvivesADipShorterThanAQuarterBit_AndEndsAtALongerOne()
    {
        var run = new MarkToneRun(leadInSamples: 2 * 44_100);
        for (int i = 0; i < 300; i++)
        {
            run.Step(0.9f, Bit);
        }

        for (int i = 0; i < 30; i++)
        {
            run.Step(-0.4f, Bit);
        }

        Assert.Equal(300, run.Samples);
        for (int i = 0; i < 10; i++)
        {
            run.Step(-0.4f, Bit);
        }

        Assert.Equal(0, run.Samples);
    }

    [Fact]
    public void MarkRun_HearsALeadIn_OnlyAfterMostlyClearMarkForAboutItsLength()
    {
        var run = new MarkToneRun(leadInSamples: 1000);
        for (int i = 0; i < 100; i++)
        {
            run.Step(0.9f, Bit);
        }

        Assert.False(run.HeardLeadIn);
        for (int i = 0; i < 900; i++)
        {
            run.Step(i % 10 < 8 ? 0.9f : -0.9f, Bit);
        }

        Assert.True(run.HeardLeadIn);
    }
}
