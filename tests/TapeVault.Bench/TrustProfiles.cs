using TapeVault.Core.Formats;

namespace TapeVault.Bench;

/// <summary>
/// Profiles of the bench's own invention for the trust measurement, beside the built-in streams and biphase format:
/// a pulse-width block format (the built-in pulse-width profile is the demo's, never a check) and an FSK block format
/// with a header and a CRC (the built-in FSK profiles are streams). Both use checksums that a run of zero bytes
/// satisfies (sum8 and CRC-16/XMODEM), the case where a phantom block can pass its check.
/// </summary>
public static class TrustProfiles
{
    public static FormatProfile PulseBlocks { get; } = ProfileLoader.Parse(
        """
        {
          "id": "bench-pulse-blocks",
          "name": "Bench pulse-width blocks",
          "description": "Invented for the trust benchmark: short cycle 0, long cycle 1, a lead-in of short cycles, a sync of one very long cycle and one long, a start and a stop bit, a file id, a block number, a length and a sum8 over header and payload.",
          "family": "pulse-width",
          "pulseWidth": {
            "classes": [
              { "name": "short", "microseconds": 300 },
              { "name": "long", "microseconds": 600 },
              { "name": "sync", "microseconds": 1200 }
            ],
            "zero": [ "short" ],
            "one": [ "long" ],
            "leadIn": { "class": "short", "minimumCount": 96 },
            "sync": [ "sync", "long" ]
          },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "1", "parity": "none" },
          "layout": {
            "header": [
              { "name": "file", "bytes": 1, "role": "file-id" },
              { "name": "block", "bytes": 1, "role": "block-number" },
              { "name": "length", "bytes": 1, "role": "payload-length" }
            ],
            "maximumPayloadBytes": 64,
            "checksum": { "algorithm": "sum8", "covers": "header-and-payload" },
            "copies": 1
          },
          "recording": { "leadInSeconds": 1.0, "blockGapSeconds": 0.1, "trailerSeconds": 0.2 }
        }
        """,
        "bench");

    /// <summary>
    /// FSK blocks in the Kansas City Standard's tones at 1200 baud with one stop bit (so that minimodem's 8-N-1
    /// transmitter writes them as they are), a file id, a block number, a length and a CRC-16/XMODEM.
    /// </summary>
    public static FormatProfile ToneBlocks { get; } = ProfileLoader.Parse(
        """
        {
          "id": "bench-tone-blocks",
          "name": "Bench FSK blocks",
          "description": "Invented for the trust benchmark: 2400 Hz mark, 1200 Hz space, 1200 baud, 8-N-1, a lead-in of mark tone before each block, a file id, a block number, a length and a CRC-16/XMODEM over header and payload.",
          "family": "fsk",
          "fsk": { "markHz": 2400, "spaceHz": 1200, "baud": 1200, "leadInMinimumSeconds": 0.1 },
          "framing": { "dataBits": 8, "bitOrder": "lsb-first", "startBits": "0", "stopBits": "1", "parity": "none" },
          "layout": {
            "header": [
              { "name": "file", "bytes": 1, "role": "file-id" },
              { "name": "block", "bytes": 1, "role": "block-number" },
              { "name": "length", "bytes": 1, "role": "payload-length" }
            ],
            "maximumPayloadBytes": 64,
            "checksum": { "algorithm": "crc16-xmodem", "covers": "header-and-payload", "endian": "big" },
            "copies": 1
          },
          "recording": { "leadInSeconds": 1.0, "blockGapSeconds": 0.3, "trailerSeconds": 0.3 }
        }
        """,
        "bench");
}
