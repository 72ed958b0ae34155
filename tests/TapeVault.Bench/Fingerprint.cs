using System.Security.Cryptography;
using System.Text;
using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Decoding;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Bench;

/// <summary>
/// A fingerprint of what the read path decodes: every candidate of every setting (position, setting, status, payload,
/// confidence to the last bit, start time) of damaged captures of every built-in profile, hashed per profile, through
/// the two-thread decode and through one thread in uneven chunks. A change meant to make the read path faster must
/// leave every line the same; run it on the builds before and after and compare.
/// </summary>
public static class Fingerprint
{
    public static int Run(string work)
    {
        foreach (string id in Throughput.Profiles)
        {
            var profile = ProfileCatalog.BuiltIn.Get(id);
            string path = Path.Combine(work, $"fingerprint-{id}.wav");
            if (!File.Exists(path))
            {
                var damage = new ChannelDamage { SnrDb = 13, WowPercent = 0.3, FlutterPercent = 0.1, RandomDropoutsPerMinute = 20, Speed = 1.02, Seed = 11 };
                var random = new Random(5);
                var files = new List<TapeFile>();
                for (int f = 0; f < 3; f++)
                {
                    var content = new byte[profile.Layout.IsStream ? 300 : 700];
                    random.NextBytes(content);
                    files.Add(new TapeFile($"F{f}", content));
                }

                CaptureSynthesizer.Write(path + ".tmp", profile, files, damage);
                File.Move(path + ".tmp", path, overwrite: true);
            }

            Print(id, path, profile);
        }

        // The file minimodem writes (an outside maker of FSK): made here when missing, as the throughput bench makes it,
        // so that every run prints the same lines.
        string kcs = Path.Combine(work, "minimodem-kcs300-30min.wav");
        Throughput.EnsureMinimodemCapture(kcs, 30);
        Print("kcs-300 minimodem", kcs, ProfileCatalog.BuiltIn.Get("kcs-300"));

        return 0;
    }

    private static void Print(string label, string path, FormatProfile profile)
    {
        using var pipelined = CaptureDecoder.Decode(path, profile);
        var session = new CaptureDecoder.DecodeSession(profile, pipelined.Settings, pipelined.Capture.SampleRate);
        using (var reader = CaptureReader.Open(path))
        {
            var chunk = new float[5003];
            int read;
            while ((read = reader.Read(chunk)) > 0)
            {
                session.Process(chunk.AsSpan(0, read));
            }
        }

        var single = session.Finish();
        Console.WriteLine($"{label,-20} {pipelined.Candidates.Count,6} candidates, {pipelined.Best.Count(b => b.Status == BlockStatus.Clean),4} clean best  two threads {Hash(pipelined.Candidates)}  one thread {Hash(single)}");
    }

    private static string Hash(IReadOnlyList<BlockCandidate> candidates)
    {
        var text = new StringBuilder();
        foreach (var c in candidates)
        {
            text.Append($"{c.Position} {c.SettingName} {c.Status} {c.PayloadHex} {c.Confidence:R} {c.StartSeconds:R} {c.EndSeconds:R} {c.Speed:R}\n");
        }

        return Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text.ToString())))[..16];
    }
}
