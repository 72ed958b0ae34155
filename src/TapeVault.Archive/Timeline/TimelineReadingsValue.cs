using System.Text;
using TapeVault.Archive.Entities;
using TapeVault.Core.Blocks;
using TapeVault.Core.Text;
using TapeVault.Core.Timeline;

namespace TapeVault.Archive.Timeline;

/// <summary>
/// A run's readings as the tape timeline draws them, in one value of its own row (<see cref="RunTimeline"/>), so a long
/// tape's timeline reads a row a run, not one a reading (a tape of 400 blocks read in 3 passes by 8 settings has some
/// 27 000). The value holds, after a format byte, the run's setting names, identities and outcomes once each, then per
/// reading the indexes of its setting, identity and outcome and its confidence, start, end and speed as they are
/// stored in its row (binary64, so it reads back exactly). Outcomes are kept by their stored names (the
/// <see cref="BlockStatus"/> names the rows keep), so a later build's words for them apply. The readings are written in
/// the order the timeline puts them in (<see cref="TimelineDrawings.CompareReadings"/>), so they need no sort when read.
/// </summary>
public static class TimelineReadingsValue
{
    /// <summary>The format of the value; one this build does not know is not read (the run's rows are).</summary>
    private const byte Format = 1;

    /// <summary>The fewest bytes a reading takes: three one-byte indexes and four binary64 numbers.</summary>
    private const int ReadingBytes = 3 + (4 * sizeof(double));

    /// <summary>The value for a run's readings.</summary>
    public static byte[] Write(IEnumerable<CandidateRecord> candidates)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        var readings = candidates
            .Select(c => (Reading: TimelineDrawings.ReadingOf(string.Empty, c.SettingName, c.IdentityKey, c.Status, c.Confidence, c.StartSeconds, c.EndSeconds, c.Speed), c.Status))
            .ToList();
        readings.Sort((a, b) => TimelineDrawings.CompareReadings(a.Reading, b.Reading));
        var settings = new Table();
        var identities = new Table();
        var outcomes = new Table();
        var indexes = new (int Setting, int Identity, int Outcome)[readings.Count];
        for (int i = 0; i < readings.Count; i++)
        {
            var (r, status) = readings[i];
            indexes[i] = (settings.IndexOf(r.Setting), identities.IndexOf(r.Key), outcomes.IndexOf(status.ToString()));
        }

        using var bytes = new MemoryStream();
        using (var writer = new BinaryWriter(bytes, Encoding.UTF8, leaveOpen: true))
        {
            writer.Write(Format);
            settings.Write(writer);
            identities.Write(writer);
            outcomes.Write(writer);
            writer.Write7BitEncodedInt(readings.Count);
            for (int i = 0; i < readings.Count; i++)
            {
                var r = readings[i].Reading;
                writer.Write7BitEncodedInt(indexes[i].Setting);
                writer.Write7BitEncodedInt(indexes[i].Identity);
                writer.Write7BitEncodedInt(indexes[i].Outcome);
                writer.Write(r.Confidence);
                writer.Write(r.StartSeconds);
                writer.Write(r.EndSeconds);
                writer.Write(r.Speed);
            }
        }

        return bytes.ToArray();
    }

    /// <summary>
    /// Adds the readings a value holds to <paramref name="into"/>, each of the capture given; false, adding nothing,
    /// when the value is of a format this build does not know or does not read whole.
    /// </summary>
    public static bool TryRead(byte[] value, string captureSha256, List<TimelineReading> into)
    {
        ArgumentNullException.ThrowIfNull(value);
        ArgumentNullException.ThrowIfNull(captureSha256);
        ArgumentNullException.ThrowIfNull(into);
        if (value.Length == 0 || value[0] != Format)
        {
            return false;
        }

        int before = into.Count;
        try
        {
            using var reader = new BinaryReader(new MemoryStream(value, 1, value.Length - 1, writable: false), Encoding.UTF8);
            var settings = ReadTable(reader);
            var identities = ReadTable(reader);
            var outcomes = ReadTable(reader).Select(name => Vocabulary.Of(Enum.Parse<BlockStatus>(name)).Name).ToArray();
            int count = reader.Read7BitEncodedInt();
            if (count < 0 || count > (reader.BaseStream.Length - reader.BaseStream.Position) / ReadingBytes)
            {
                throw new FormatException("The value counts more readings than it holds.");
            }

            into.Capacity = Math.Max(into.Capacity, before + count);
            for (int i = 0; i < count; i++)
            {
                string setting = settings[reader.Read7BitEncodedInt()];
                string identity = identities[reader.Read7BitEncodedInt()];
                string outcome = outcomes[reader.Read7BitEncodedInt()];
                double confidence = reader.ReadDouble();
                double start = reader.ReadDouble();
                double end = reader.ReadDouble();
                double speed = reader.ReadDouble();
                into.Add(new TimelineReading(captureSha256, setting, identity, outcome, confidence, start, end, speed));
            }

            if (reader.BaseStream.Position != reader.BaseStream.Length)
            {
                throw new FormatException("The value holds more than its readings.");
            }

            return true;
        }
        catch (Exception e) when (e is EndOfStreamException or FormatException or IndexOutOfRangeException or ArgumentException)
        {
            into.RemoveRange(before, into.Count - before);
            return false;
        }
    }

    private static string[] ReadTable(BinaryReader reader)
    {
        int count = reader.Read7BitEncodedInt();
        if (count < 0 || count > reader.BaseStream.Length)
        {
            throw new FormatException("The value's table is longer than the value.");
        }

        var names = new string[count];
        for (int i = 0; i < count; i++)
        {
            names[i] = reader.ReadString();
        }

        return names;
    }

    /// <summary>Names in the order first met, each with its index.</summary>
    private sealed class Table
    {
        private readonly Dictionary<string, int> indexes = new(StringComparer.Ordinal);
        private readonly List<string> names = [];

        public int IndexOf(string name)
        {
            if (!indexes.TryGetValue(name, out int index))
            {
                indexes[name] = index = names.Count;
                names.Add(name);
            }

            return index;
        }

        public void Write(BinaryWriter writer)
        {
            writer.Write7BitEncodedInt(names.Count);
            foreach (var name in names)
            {
                writer.Write(name);
            }
        }
    }
}
