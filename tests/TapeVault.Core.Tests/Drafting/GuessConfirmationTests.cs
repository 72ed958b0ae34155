using System.Text.Json.Nodes;
using TapeVault.Core.Drafting;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;
using Xunit;

namespace TapeVault.Core.Tests.Drafting;

/// <summary>
/// Confirming a draft's guesses, the measure of the draft figure: the claim the figure makes is the one the format
/// language's requirements state ("decodes ... after no more than the fields it marked as guesses are confirmed"), so
/// confirming may change only what the draft marked as guessed and must never bring in a field the draft measured.
/// The reference profiles here are drawn by <see cref="RandomFormats"/>; the drafts are the reference with one
/// measured field set otherwise, so that whatever comes from the reference is seen.
/// </summary>
public sealed class GuessConfirmationTests
{
    [Fact]
    public void A_guessed_family_that_was_right_keeps_the_tones_and_baud_the_draft_measured()
    {
        string truth = RandomFormats.Draw("fsk-sync", new Random(11));
        var draft = JsonNode.Parse(truth)!.AsObject();
        double markHz = draft["fsk"]!["markHz"]!.GetValue<double>() * 1.04;
        double baud = draft["fsk"]!["baud"]!.GetValue<double>() * 1.04;
        draft["fsk"]!["markHz"] = markHz;
        draft["fsk"]!["spaceHz"] = draft["fsk"]!["spaceHz"]!.GetValue<double>() * 1.04;
        draft["fsk"]!["baud"] = baud;

        var confirmed = ProfileLoader.Parse(GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["family"]), "confirmed");

        Assert.Equal(FormatFamily.Fsk, confirmed.Family);
        Assert.Equal(markHz, confirmed.Fsk!.MarkHz, 6);
        Assert.Equal(baud, confirmed.Fsk.Baud, 6);
    }

    /// <summary>
    /// Guessed classes take the reference's; the lead-in class the draft measured (not a guess) is kept as the
    /// confirmed class nearest to it in length, so that it still names a class of the confirmed profile.
    /// </summary>
    [Fact]
    public void Guessed_classes_are_the_references_and_a_measured_lead_in_class_names_the_nearest_of_them()
    {
        string truth = RandomFormats.Draw("pulse-width", new Random(5));
        var reference = JsonNode.Parse(truth)!.AsObject();
        var classes = reference["pulseWidth"]!["classes"]!.AsArray();
        string leadIn = reference["pulseWidth"]!["leadIn"]!["class"]!.GetValue<string>();
        double leadInLength = classes.Single(c => c!["name"]!.GetValue<string>() == leadIn)!["microseconds"]!.GetValue<double>();

        // The draft: the reference's classes as the tape plays 3 % slow and named otherwise, and a group of its own
        // between every two of them (crowded pulses), its lead-in class the one nearest the reference's.
        var draft = JsonNode.Parse(truth)!.AsObject();
        var grouped = new JsonArray();
        for (int i = 0; i < classes.Count; i++)
        {
            double us = classes[i]!["microseconds"]!.GetValue<double>() / 0.97;
            grouped.Add(new JsonObject { ["name"] = $"class-{(2 * i) + 1}", ["microseconds"] = us });
            grouped.Add(new JsonObject { ["name"] = $"class-{(2 * i) + 2}", ["microseconds"] = us * 1.3 });
        }

        draft["pulseWidth"]!["classes"] = grouped;
        draft["pulseWidth"]!["leadIn"]!["class"] = $"class-{(2 * classes.IndexOf(classes.Single(c => c!["microseconds"]!.GetValue<double>() == leadInLength))) + 1}";

        var confirmed = JsonNode.Parse(GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["pulseWidth.classes", "pulseWidth.zero", "pulseWidth.one", "pulseWidth.sync"]))!;

        // Source: the reference profile the draft's guesses are confirmed from.
        Assert.Equal(classes.ToJsonString(), confirmed["pulseWidth"]!["classes"]!.ToJsonString());
        Assert.Equal(leadIn, confirmed["pulseWidth"]!["leadIn"]!["class"]!.GetValue<string>());
        foreach (string field in new[] { "zero", "one", "sync" })
        {
            Assert.Equal(reference["pulseWidth"]![field]!.ToJsonString(), confirmed["pulseWidth"]![field]!.ToJsonString());
        }

        ProfileLoader.Parse(confirmed.ToJsonString(), "confirmed");
    }

    [Fact]
    public void A_guessed_family_that_was_wrong_leaves_a_draft_with_no_section_for_the_right_family()
    {
        string truth = RandomFormats.Draw("fsk-sync", new Random(12));
        string draft = RandomFormats.Draw("pulse-width", new Random(12));

        string confirmed = GuessConfirmation.Confirm(draft, truth, ["family"]);

        // The family's name is confirmed, the tones were never measured: the draft cannot be read as FSK.
        Assert.Equal("fsk", JsonNode.Parse(confirmed)!["family"]!.GetValue<string>());
        Assert.Null(JsonNode.Parse(confirmed)!["fsk"]);
        Assert.Throws<ProfileException>(() => ProfileLoader.Parse(confirmed, "confirmed"));
    }

    [Fact]
    public void The_earlier_rule_is_kept_only_for_comparison_and_takes_the_reference_section()
    {
        string truth = RandomFormats.Draw("fsk-sync", new Random(11));
        var draft = JsonNode.Parse(truth)!.AsObject();
        draft["fsk"]!["markHz"] = draft["fsk"]!["markHz"]!.GetValue<double>() * 1.04;

        var confirmed = ProfileLoader.Parse(GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["family"], ConfirmationRule.Earlier), "confirmed");

        Assert.Equal(ProfileLoader.Parse(truth, "truth").Fsk!.MarkHz, confirmed.Fsk!.MarkHz);
    }

    [Fact]
    public void A_guessed_header_keeps_where_the_draft_measured_the_check_to_start()
    {
        string truth = RandomFormats.Draw("fsk-sync", new Random(13));
        var reference = JsonNode.Parse(truth)!.AsObject();

        // The reference's check covers the name on; the draft measured it from the block number on, with the name
        // bytes as one unknown field ahead of it.
        var draft = JsonNode.Parse(truth)!.AsObject();
        draft["layout"]!["header"] = new JsonArray(
            new JsonObject { ["name"] = "sync", ["bytes"] = 3, ["role"] = "sync", ["expect"] = reference["layout"]!["header"]![0]!["expect"]!.DeepClone() },
            new JsonObject { ["name"] = "field-3", ["bytes"] = 8, ["role"] = "other" },
            new JsonObject { ["name"] = "block", ["bytes"] = 1, ["role"] = "other" },
            new JsonObject { ["name"] = "length", ["bytes"] = 2, ["role"] = "payload-length", ["endian"] = "little" });
        draft["layout"]!["checksum"]!["covers"] = new JsonArray("block", "length", "payload");
        draft["layout"]!["maximumPayloadBytes"] = 100;

        var confirmed = JsonNode.Parse(GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["layout.header"]))!;

        // The header is the reference's; the check still starts at byte 11, where the draft found it holding.
        Assert.Equal(reference["layout"]!["header"]!.ToJsonString(), confirmed["layout"]!["header"]!.ToJsonString());
        Assert.Equal("[\"block\",\"length\",\"payload\"]", confirmed["layout"]!["checksum"]!["covers"]!.ToJsonString());
        Assert.Equal(100, confirmed["layout"]!["maximumPayloadBytes"]!.GetValue<int>());
        ProfileLoader.Parse(confirmed.ToJsonString(), "confirmed");
    }

    [Fact]
    public void A_guessed_header_behind_a_check_of_the_payload_keeps_the_check_from_the_end_of_the_drafted_header()
    {
        string truth = RandomFormats.Draw("fsk-sync", new Random(13));
        var reference = JsonNode.Parse(truth)!.AsObject();

        // The draft read every block at one length: its header the sync alone, the reference's name, block number and
        // length inside a fixed payload, and the check holding from the end of the sync on (covering its "payload").
        var draft = JsonNode.Parse(truth)!.AsObject();
        draft["layout"]!["header"] = new JsonArray(reference["layout"]!["header"]![0]!.DeepClone());
        draft["layout"]!["checksum"]!["covers"] = "payload";
        ((JsonObject)draft["layout"]!).Remove("maximumPayloadBytes");
        draft["layout"]!["payloadBytes"] = 139;

        var confirmed = JsonNode.Parse(GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["layout.header", "layout.payloadBytes"]))!;

        // Before: the coverage stayed "payload", the bytes after the reference's header alone, and no block's check held.
        // The reference's own coverage (RandomFormats writes the fsk-sync check over name, block, length and payload).
        Assert.Equal(reference["layout"]!["checksum"]!["covers"]!.ToJsonString(), confirmed["layout"]!["checksum"]!["covers"]!.ToJsonString());
        ProfileLoader.Parse(confirmed.ToJsonString(), "confirmed");
    }

    [Fact]
    public void A_guessed_header_keeps_the_sync_field_the_draft_measured_where_the_reference_writes_its_sync_as_pulses()
    {
        // The reference writes its sync as pulse classes; the draft measured the same sync as whole bytes (the lead-in's
        // bits before it) and wrote it as the header's first field, with no class sequence.
        string truth = RandomFormats.Draw("pulse-width", new Random(14));
        var names = new JsonArray([.. JsonNode.Parse(truth)!["layout"]!["header"]!.AsArray().Select(f => (JsonNode)JsonValue.Create(f!["name"]!.GetValue<string>())!), JsonValue.Create("payload")]);
        var draft = WithSyncField(truth);
        draft["layout"]!["checksum"]!["covers"] = names;

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["layout.header"]);

        var node = JsonNode.Parse(confirmed)!;
        Assert.Equal("sync", node["layout"]!["header"]![0]!["role"]!.GetValue<string>());
        Assert.DoesNotContain("\"sync\"", node["layout"]!["checksum"]!["covers"]!.ToJsonString(), StringComparison.Ordinal);
        ProfileLoader.Parse(confirmed, "confirmed");
    }

    [Fact]
    public void A_guessed_sync_written_as_a_sync_field_goes_when_the_reference_s_pulse_sync_is_confirmed_in_its_place()
    {
        // As drafted from seed 148004 of the draft figure: the reference writes its sync as pulse classes; the draft
        // measured the same pulses (with the lead-in's last bits) as whole bytes, wrote them as the header's first
        // field, and marked that sync a guess. Confirmed, the reference's class sequence stands for that sync; the
        // draft's sync field kept after it was looked for a second time, and the confirmed draft read none of the
        // truth's 14 blocks (the draft itself, unconfirmed, read all 15 it found with its check holding).
        string truth = RandomFormats.Draw("pulse-width", new Random(14));
        var draft = WithSyncField(truth);

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["pulseWidth.sync", "layout.header"]);

        // The reference is the outside reference here: the confirmed header and sync are its own (RandomFormats).
        var node = JsonNode.Parse(confirmed)!;
        var reference = JsonNode.Parse(truth)!;
        Assert.Equal(reference["pulseWidth"]!["sync"]!.ToJsonString(), node["pulseWidth"]!["sync"]!.ToJsonString());
        Assert.Equal(reference["layout"]!["header"]!.ToJsonString(), node["layout"]!["header"]!.ToJsonString());
        ProfileLoader.Parse(confirmed, "confirmed");
    }

    [Fact]
    public void A_guessed_header_of_a_format_whose_header_block_gives_the_data_length_is_the_references_block_kinds()
    {
        // The reference: a header block whose start and end addresses give the length of the data block after it.
        // The draft read every block as one kind: the nine sync bytes (a countdown that differs between the copies,
        // so no sync field) as an unknown field before the check, a fixed payload, and the check it measured.
        string truth = RandomFormats.Draw("three-class-pairs", new Random(15));
        var reference = JsonNode.Parse(truth)!.AsObject();
        var draft = JsonNode.Parse(truth)!.AsObject();
        draft["layout"] = new JsonObject
        {
            ["header"] = new JsonArray(new JsonObject { ["name"] = "field-0", ["bytes"] = 9, ["role"] = "other" }),
            ["payloadBytes"] = 30,
            ["checksum"] = new JsonObject { ["algorithm"] = "xor8", ["covers"] = "payload", ["endian"] = "big" },
            ["copies"] = 2,
        };

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["layout.header", "layout.payloadBytes"]);

        // It loads (the kinds bring each block's header and length rule), every kind keeps the draft's check, from
        // the byte after the sync on, and the copies the draft measured.
        var profile = ProfileLoader.Parse(confirmed, "confirmed");
        var node = JsonNode.Parse(confirmed)!["layout"]!;
        var kinds = (JsonArray)node["kinds"]!;
        var referenceKinds = (JsonArray)reference["layout"]!["kinds"]!;
        Assert.Equal(referenceKinds.Count, kinds.Count);
        for (int i = 0; i < kinds.Count; i++)
        {
            Assert.Equal(referenceKinds[i]!["header"]!.ToJsonString(), kinds[i]!["header"]!.ToJsonString());
            Assert.Equal("xor8", kinds[i]!["checksum"]!["algorithm"]!.GetValue<string>());
            Assert.DoesNotContain("countdown", kinds[i]!["checksum"]!["covers"]!.ToJsonString(), StringComparison.Ordinal);
        }

        Assert.Equal("[\"type\",\"name\",\"start\",\"end\",\"payload\"]", kinds[0]!["checksum"]!["covers"]!.ToJsonString());
        Assert.Equal("[\"payload\"]", kinds[1]!["checksum"]!["covers"]!.ToJsonString());
        Assert.Equal(2, profile.Layout.Copies);
        Assert.Null(node["header"]);
        Assert.Null(node["payloadBytes"]);
    }

    /// <summary>
    /// Seed 186008 of the draft figure (three-class-pairs, read as one kind of block each written once): the guessed
    /// header confirmed as the reference's kinds brought a countdown sync with one value per copy (two) beside the one
    /// copy the draft measured, and the confirmed draft did not load ("layout.header[0].expect gives 2 values").
    /// </summary>
    [Fact]
    public void A_guessed_header_whose_sync_differs_per_copy_is_fitted_to_the_copies_the_draft_measured_and_loads()
    {
        // Source: the benchmark writer's truth profile (RandomFormats), whose two copies carry different countdowns.
        string truth = RandomFormats.Draw("three-class-pairs", new Random(15));
        var reference = JsonNode.Parse(truth)!.AsObject();
        var countdowns = reference["layout"]!["kinds"]![0]!["header"]![0]!["expect"]!.AsArray();
        Assert.Equal(2, countdowns.Count);
        var draft = JsonNode.Parse(truth)!.AsObject();
        draft["layout"] = new JsonObject
        {
            ["header"] = new JsonArray(new JsonObject { ["name"] = "field-0", ["bytes"] = 9, ["role"] = "other" }),
            ["payloadBytes"] = 30,
            ["checksum"] = new JsonObject { ["algorithm"] = "xor8", ["covers"] = "payload", ["endian"] = "big" },
            ["copies"] = 1,
        };

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), truth, ["layout.header", "layout.payloadBytes"]);

        // It loads, keeps the one copy the draft measured, and each kind expects the first copy's countdown.
        var profile = ProfileLoader.Parse(confirmed, "confirmed");
        Assert.Equal(1, profile.Layout.Copies);
        foreach (var kind in JsonNode.Parse(confirmed)!["layout"]!["kinds"]!.AsArray())
        {
            Assert.Equal($"[{countdowns[0]!.ToJsonString()}]", kind!["header"]![0]!["expect"]!.ToJsonString());
        }
    }

    [Fact]
    public void A_confirmed_pulse_sync_gives_back_the_header_byte_the_draft_s_sync_took_and_the_check_still_covers_the_payload_only()
    {
        // As drafted from seed 162014 of the draft figure. The reference (RandomFormats' draw for that seed, as the
        // figure prints it): sync `m`, then a two-byte block number and a one-byte length, the check over the payload
        // alone. Every block's number was below 256, so its first byte (00: eight `s`, then `l` for odd parity) began
        // every block alike: the draft took it into its sync (`long`, eight `short`, `medium`), counted its two-byte
        // header from after it, measured the check over the payload, and marked sync, header and payload length guesses.
        var draft = JsonNode.Parse(Seed162014Truth)!.AsObject();
        draft["pulseWidth"] = JsonNode.Parse("""
            {"classes":[{"name":"short","microseconds":603.4},{"name":"medium","microseconds":1308.3},{"name":"long","microseconds":2216.1}],
             "zero":["short"],"one":["medium"],"leadIn":{"class":"short","minimumCount":97},
             "sync":["long","short","short","short","short","short","short","short","short","medium"]}
            """);
        draft["layout"] = JsonNode.Parse("""
            {"header":[{"name":"block","bytes":2,"role":"block-number","endian":"little"}],"payloadBytes":90,
             "checksum":{"algorithm":"crc16-ccitt-false","covers":"payload","endian":"big"},"copies":2}
            """);

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), Seed162014Truth, ["pulseWidth.sync", "layout.header", "layout.payloadBytes"]);

        // Before: the check was taken to start two bytes into the reference's header (the draft's header length),
        // so it covered the length byte too and held on none of the truth's 24 blocks. The reference's own coverage
        // (the payload alone) is the outside reference, as RandomFormats wrote it.
        var node = JsonNode.Parse(confirmed)!;
        Assert.Equal("[\"long\"]", node["pulseWidth"]!["sync"]!.ToJsonString());
        Assert.Equal("[\"payload\"]", node["layout"]!["checksum"]!["covers"]!.ToJsonString());
        Assert.Equal(90, node["layout"]!["maximumPayloadBytes"]!.GetValue<int>());
        ProfileLoader.Parse(confirmed, "confirmed");
    }

    [Fact]
    public void A_confirmed_pulse_sync_that_differs_from_the_draft_s_by_no_whole_byte_moves_no_check()
    {
        // The same draft with its sync one bit pulse short of a whole byte after the reference's: nothing of the
        // header was taken, and the check keeps its place as the draft's header puts it.
        var draft = JsonNode.Parse(Seed162014Truth)!.AsObject();
        draft["pulseWidth"]!["sync"] = new JsonArray("m", "s", "s", "s", "s", "s", "s", "s", "s");
        draft["layout"]!["header"] = new JsonArray(new JsonObject { ["name"] = "block", ["bytes"] = 2, ["role"] = "block-number", ["endian"] = "little" });

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), Seed162014Truth, ["pulseWidth.sync", "layout.header"]);

        // Two bytes of the draft's header before the payload: the check from byte 2 of the reference's header on.
        Assert.Equal("[\"length\",\"payload\"]", JsonNode.Parse(confirmed)!["layout"]!["checksum"]!["covers"]!.ToJsonString());
    }

    [Fact]
    public void A_confirmed_biphase_sync_gives_back_the_header_byte_the_draft_s_sync_bits_took()
    {
        // As drafted from seed 158001 of the draft figure (biphase). The reference (RandomFormats' draw for that seed,
        // as the figure prints it): sync bits 110011111111, then a two-byte block number and a length, the check over
        // the payload alone. The block number's first byte (00, framed 0 00000000 0 1: start, data, even parity, stop)
        // began every block alike, so the draft's sync bits went on through it and its header counted from after it.
        const string Truth = """
            {"id":"random-biphase","name":"Random biphase","family":"biphase",
             "biphase":{"cellMicroseconds":1004.9,"oneIs":"falling","leadInMinimumBits":34,"syncBits":"110011111111"},
             "framing":{"dataBits":8,"bitOrder":"msb-first","startBits":"0","stopBits":"1","parity":"even"},
             "layout":{"header":[{"name":"block","bytes":2,"role":"block-number","endian":"big"},{"name":"length","bytes":1,"role":"payload-length"}],
               "maximumPayloadBytes":78,"checksum":{"algorithm":"CRC-16/ARC","covers":"payload","endian":"little"},"copies":2}}
            """;
        var draft = JsonNode.Parse(Truth)!.AsObject();
        draft["biphase"] = JsonNode.Parse("""{"cellMicroseconds":1053.12,"oneIs":"rising","syncBits":"11001111111100000000001","leadInMinimumBits":32}""");
        draft["layout"] = JsonNode.Parse("""
            {"header":[{"name":"block","bytes":1,"role":"block-number"},{"name":"length","bytes":1,"role":"payload-length"}],"maximumPayloadBytes":255,
             "checksum":{"algorithm":"CRC-16/ARC","covers":"payload","endian":"little"},"copies":1}
            """);

        string confirmed = GuessConfirmation.Confirm(draft.ToJsonString(), Truth, ["biphase.oneIs", "biphase.syncBits", "layout.header"]);

        // Before: the check was taken to start at byte 2 of the reference's header (the draft's header length), over
        // the length byte too, and the confirmed draft read none of the truth's 24 blocks. The reference's coverage
        // (the payload alone, as RandomFormats wrote it) is the outside reference.
        var node = JsonNode.Parse(confirmed)!;
        Assert.Equal("110011111111", node["biphase"]!["syncBits"]!.GetValue<string>());
        Assert.Equal("[\"payload\"]", node["layout"]!["checksum"]!["covers"]!.ToJsonString());
        ProfileLoader.Parse(confirmed, "confirmed");
    }

    /// <summary>RandomFormats' draw for seed 162014 of the draft figure, as the figure prints it.</summary>
    private const string Seed162014Truth = """
        {"id":"random-pulse-width","name":"Random pulse-width","family":"pulse-width",
         "pulseWidth":{"classes":[{"name":"s","microseconds":576.4},{"name":"l","microseconds":1249.2},{"name":"m","microseconds":2137.1}],
           "zero":["s"],"one":["l"],"leadIn":{"class":"s","minimumCount":72},"sync":["m"]},
         "framing":{"dataBits":8,"bitOrder":"lsb-first","startBits":"","stopBits":"","parity":"odd"},
         "layout":{"header":[{"name":"block","bytes":2,"role":"block-number","endian":"big"},{"name":"length","bytes":1,"role":"payload-length"}],
           "maximumPayloadBytes":90,"checksum":{"algorithm":"crc16-ccitt-false","covers":"payload","endian":"big"},"copies":2}}
        """;

    /// <summary>The reference as a draft that measured its pulse sync as whole bytes: no class sequence, a sync field first in the header.</summary>
    private static JsonObject WithSyncField(string truth)
    {
        var draft = JsonNode.Parse(truth)!.AsObject();
        ((JsonObject)draft["pulseWidth"]!).Remove("sync");
        ((JsonArray)draft["layout"]!["header"]!).Insert(0, new JsonObject { ["name"] = "sync", ["bytes"] = 1, ["role"] = "sync", ["expect"] = new JsonArray("A5") });
        return draft;
    }
}
