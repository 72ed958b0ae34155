using System.Diagnostics;
using TapeVault.Core.Audio;
using TapeVault.Core.Decoding;
using TapeVault.Core.Detection;
using TapeVault.Core.Edges;
using TapeVault.Core.Formats;

namespace TapeVault.Bench;

/// <summary>
/// Where a decode's processor time goes, stage by stage, on one thread: each pass over the capture does one stage more
/// than the one before (read and convert; then the detector bank's read chain and edges; then the tone correlators and
/// gate of a tone format; then the symbol decoders, the whole read path), so each stage's cost is the difference
/// between two passes. Then the decode as the command runs it (the decoders shared out between two workers), whose
/// processor time beside the one-thread total shows what the hand-over between threads costs. Processor time is the
/// process's (every thread's, the runtime's own included), read around each pass.
/// </summary>
public static class Stages
{
    private const int ChunkSamples = 16_384;

    public static int Run(string work, string[] args)
    {
        string profileId = args.Length > 0 ? args[0] : "kcs-300";
        int minutes = args.Length > 1 ? int.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture) : 30;
        int rounds = args.Length > 2 ? int.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture) : 2;
        string path = profileId == "orrin-80" ? Path.Combine(work, $"orrin-{minutes}min.wav") : Path.Combine(work, $"{profileId}-{minutes}min.wav");
        Throughput.EnsureCapture(path, profileId, minutes);
        var profile = ProfileCatalog.BuiltIn.Get(profileId);
        var settings = CaptureDecoder.BankFor(profile, DetectorBanks.Default);
        Console.WriteLine($"Read-path stages: {profileId}, {minutes} min, {settings.Count} settings, one thread unless said; processor seconds (load at start {MachineLoad.Averages()})");
        Console.WriteLine($"{"round",5} {"read",7} {"+chain",7} {"+tones",7} {"+decode",8} {"2 workers",10} {"wall",6}");

        for (int round = 1; round <= rounds; round++)
        {
            double read = Pass(path, reader => Read(reader, _ => { }));
            double chain = Pass(path, reader =>
            {
                var bank = new DetectorBank(settings, reader.SampleRate);
                var edges = Edges(settings.Count);
                Read(reader, samples =>
                {
                    Clear(edges);
                    bank.Process(samples, edges);
                });
            });
            double tones = profile.Fsk is { } fsk
                ? Pass(path, reader =>
                {
                    var bank = new DetectorBank(settings, reader.SampleRate);
                    var tones = new ToneBank(settings.Count, fsk.MarkHz, fsk.SpaceHz, fsk.Baud, reader.SampleRate);
                    var energies = new ToneEnergies(settings.Count, ChunkSamples);
                    var edges = Edges(settings.Count);
                    Read(reader, samples =>
                    {
                        Clear(edges);
                        bank.Process(samples, edges, tones, energies);
                    });
                })
                : chain;
            double decode = Pass(path, reader =>
            {
                var session = new CaptureDecoder.DecodeSession(profile, settings, reader.SampleRate);
                Read(reader, samples => session.Process(samples));
                session.Finish();
            });
            var clock = Stopwatch.StartNew();
            double threaded = Pass(path, reader => CaptureDecoder.Decode(reader, profile));
            Console.WriteLine($"{round,5} {read,7:0.00} {chain - read,7:0.00} {tones - chain,7:0.00} {decode - tones,8:0.00} {threaded,10:0.00} {clock.Elapsed.TotalSeconds,6:0.00}");
        }

        Console.WriteLine("read: the capture read and converted to float; +chain: the bank's read chain and edges; +tones: the tone");
        Console.WriteLine("correlators and gate; +decode: the symbol decoders (all on one thread); 2 workers: the whole decode as the command runs it.");
        Console.WriteLine($"Load at end {MachineLoad.Averages()}.");
        return 0;
    }

    private static double Pass(string path, Action<CaptureReader> body)
    {
        using var reader = CaptureReader.Open(path);
        var before = Process.GetCurrentProcess().TotalProcessorTime;
        body(reader);
        return (Process.GetCurrentProcess().TotalProcessorTime - before).TotalSeconds;
    }

    private static void Read(CaptureReader reader, Action<float[]> each)
    {
        var chunk = new float[ChunkSamples];
        int read;
        while ((read = reader.Read(chunk)) > 0)
        {
            if (read < chunk.Length)
            {
                chunk = chunk[..read];
            }

            each(chunk);
        }
    }

    private static EdgeBuffer[] Edges(int count)
    {
        var edges = new EdgeBuffer[count];
        for (int i = 0; i < count; i++)
        {
            edges[i] = new EdgeBuffer();
        }

        return edges;
    }

    private static void Clear(EdgeBuffer[] edges)
    {
        foreach (var buffer in edges)
        {
            buffer.Clear();
        }
    }
}
