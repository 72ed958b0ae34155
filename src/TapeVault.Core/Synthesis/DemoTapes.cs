using System.Text;
using TapeVault.Core.Blocks;

namespace TapeVault.Core.Synthesis;

/// <summary>One pass of a demo tape: how it was captured and what damage it suffered.</summary>
public sealed record DemoPass(string Deck, string Description, ChannelDamage Damage);

/// <summary>A demo tape of the fictional club, with its files and several captures of differing damage.</summary>
public sealed record DemoTape(string Accession, string Title, string LabelText, string Condition, string ProfileId, IReadOnlyList<TapeFile> Files, IReadOnlyList<DemoPass> Passes);

/// <summary>
/// The demo scenario: the Brackenfield Home Computer Club (fictional) hands its shelf of Orrin 80 tapes (a fictional
/// machine) to be digitised. Invented for demonstrations only; no test takes it as ground truth.
/// </summary>
public static class DemoTapes
{
    public const string Club = "Brackenfield Home Computer Club";

    public static IReadOnlyList<DemoTape> All { get; } =
    [
        new(
            "BHCC-0017",
            "Moorland Trek (club adventure game)",
            "MOORLAND TREK v2 — side A — do not overwrite!",
            "Shell cracked at one corner; slight oxide shedding near the start. Captured after a gentle single wind.",
            "orrin-80",
            [
                Text("TREK", """
                    10 REM MOORLAND TREK - BRACKENFIELD HCC
                    20 PRINT "YOU STAND ON THE OPEN MOOR. MIST RISES."
                    30 PRINT "PATHS LEAD NORTH TO THE CAIRN AND EAST TO THE BECK."
                    40 INPUT "WHICH WAY";W$
                    50 IF W$="NORTH" THEN GOTO 200
                    60 IF W$="EAST" THEN GOTO 300
                    70 PRINT "THE BOG SWALLOWS YOUR BOOT.": GOTO 40
                    200 PRINT "AT THE CAIRN A RAVEN WATCHES YOU.": END
                    300 PRINT "THE BECK RUNS COLD AND CLEAR.": END
                    """),
                Text("SCORES", "ALICE 410\nBEN 385\nCHIDI 377\nDORA 352\n"),
            ],
            [
                new("club deck, line out", "First pass: mild noise and slow wow.", new ChannelDamage { SnrDb = 24, WowPercent = 0.25, Seed = 11 }),
                new("club deck, line out", "Second pass after head cleaning: a few dropouts.", new ChannelDamage { SnrDb = 20, Speed = 1.02, RandomDropoutsPerMinute = 12, Seed = 12 }),
                new("bench head amplifier", "Third pass off the head, inverted wiring, azimuth 0.3°.", new ChannelDamage { Chain = ReadChain.HeadAmplifier, Invert = true, AzimuthDegrees = 0.3, SnrDb = 22, Seed = 13 }),
            ]),
        new(
            "BHCC-0042",
            "Newsletter archive, spring issues",
            "NEWS 1-3 (Brackenfield HCC)",
            "Label faded; tape slightly stiff. No mould seen.",
            "kcs-300",
            [Text("NEWS", "BRACKENFIELD HCC NEWSLETTER - SPRING\nMEETINGS ON THURSDAYS IN THE VILLAGE HALL.\nBRING YOUR OWN TAPES AND A SPARE LEAD.\n")],
            [
                new("club deck, line out", "Clean pass at 2 % fast.", new ChannelDamage { SnrDb = 26, Speed = 1.02, Seed = 21 }),
                new("club deck, line out", "Noisy pass with hum.", new ChannelDamage { SnrDb = 14, HumLevel = 0.03, Seed = 22 }),
            ]),
    ];

    private static TapeFile Text(string name, string text) => new(name, Encoding.ASCII.GetBytes(text.Replace("\r\n", "\n", StringComparison.Ordinal)));
}
