namespace TapeVault.Core.Formats;

public static partial class ProfileLoader
{
    private sealed partial class Validator
    {
        private List<BlockLayout>? _kinds;

        private FormatProfile WithKinds(FormatProfile profile) => _kinds is null ? profile : profile with { Kinds = _kinds.AsReadOnly() };

        // Several block kinds, each a layout of its own, in the order a file writes them.
        private BlockLayout Kinds(LayoutDocument d)
        {
            if (d.Header is not null || d.PayloadBytes is not null || d.MaximumPayloadBytes is not null || d.Checksum is not null)
            {
                Fail("layout.kinds", "replaces layout.header, payloadBytes, maximumPayloadBytes and checksum: give them in each kind");
            }

            var docs = d.Kinds!;
            if (docs.Count is < 2 or > 8)
            {
                Fail("layout.kinds", $"must list 2 to 8 block kinds (one kind needs no list), not {docs.Count}");
            }

            var kinds = new List<BlockLayout>(docs.Count);
            for (int i = 0; i < docs.Count; i++)
            {
                string at = $"layout.kinds[{i}]";
                var k = docs[i] ?? throw Error(at, "must be an object");
                string kindName = Required(k.Name, at + ".name");
                if (kinds.Exists(other => other.Kind == kindName))
                {
                    Fail(at + ".name", $"repeats the kind name '{kindName}'");
                }

                var layoutDoc = new LayoutDocument
                {
                    Header = k.Header,
                    PayloadBytes = k.PayloadBytes,
                    MaximumPayloadBytes = k.MaximumPayloadBytes,
                    Checksum = k.Checksum,
                    Copies = d.Copies,
                };
                var layout = Layout(layoutDoc, at, lengthByRule: k.PayloadLength is not null);
                if (layout.IsStream)
                {
                    Fail(at, "must have a header, a payload length or a checksum: a block kind is not a stream");
                }

                PayloadLengthRule? rule = null;
                if (k.PayloadLength is { } lengthDoc)
                {
                    if (layout.PayloadBytes is not null || layout.FieldWithRole(FieldRole.PayloadLength) is not null)
                    {
                        Fail(at + ".payloadLength", "must not be given with payloadBytes or a payload-length field");
                    }

                    rule = LengthRule(lengthDoc, kinds, at + ".payloadLength");
                }

                var firstSync = kinds.Count > 0 ? kinds[0].Header.FirstOrDefault(h => h.Role == FieldRole.Sync) : null;
                var sync = layout.Header.FirstOrDefault(h => h.Role == FieldRole.Sync);
                if (kinds.Count > 0 && !Equals(firstSync, sync))
                {
                    // The reader finds a block start before it knows the kind: every kind must begin alike.
                    Fail(at + ".header", "must begin with the same sync field as the first kind (or, like it, with none): a block's start is found before its kind is known");
                }

                kinds.Add(layout with { Kind = kindName, LengthRule = rule });
            }

            _kinds = kinds;
            return kinds[0];
        }

        private PayloadLengthRule LengthRule(PayloadLengthDocument d, List<BlockLayout> earlier, string at)
        {
            string kindName = Required(d.Kind, at + ".kind");
            int source = earlier.FindIndex(k => k.Kind == kindName);
            if (source < 0)
            {
                Fail(at + ".kind", $"must name an earlier kind, not '{kindName}' (earlier: {string.Join(", ", earlier.Select(k => k.Kind))})");
            }

            var sourceHeader = earlier[source].Header;
            HeaderField NumberField(string? name, string path)
            {
                string fieldName = Required(name, path);
                var field = sourceHeader.FirstOrDefault(h => h.Name == fieldName)
                    ?? throw Error(path, $"names no field of the kind '{kindName}': '{fieldName}' (its fields are {string.Join(", ", sourceHeader.Select(h => h.Name))})");
                if (field.Role is FieldRole.FileName or FieldRole.Sync || field.Bytes > 4)
                {
                    Fail(path, $"must name a number of at most 4 bytes, not the {field.Role} field '{fieldName}'");
                }

                return field;
            }

            if (d.Field is not null)
            {
                if (d.Start is not null || d.End is not null || d.EndIs is not null)
                {
                    Fail(at, "must give either field, or start and end, not both");
                }

                return new PayloadLengthRule(source, NumberField(d.Field, at + ".field"), null, null, InclusiveEnd: false);
            }

            var start = NumberField(d.Start, at + ".start");
            var end = NumberField(d.End, at + ".end");
            bool inclusive = (d.EndIs ?? "inclusive") switch
            {
                "inclusive" => true,
                "exclusive" => false,
                var other => throw Error(at + ".endIs", $"must be inclusive (the end address is the last byte's) or exclusive (the one after), not '{other}'"),
            };
            return new PayloadLengthRule(source, null, start, end, inclusive);
        }
    }
}
