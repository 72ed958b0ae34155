using System.Diagnostics;
using System.Globalization;
using TapeVault.Bench;

// The benchmark prints figures; it asserts nothing. See docs/performance.md for the goals and the measured results.
CultureInfo.DefaultThreadCurrentCulture = CultureInfo.InvariantCulture;
CultureInfo.CurrentCulture = CultureInfo.InvariantCulture;

if (args.Length >= 2 && args[0] == "--child")
{
    // Each throughput measurement runs in a fresh process so that its peak memory is its own.
    return Throughput.RunChild(args[1..]);
}

string section = args.Length > 0 ? args[0] : "all";
string work = Path.Combine(Path.GetTempPath(), "tapevault-bench");
Directory.CreateDirectory(work);
if (section == "fuzz")
{
    return Fuzz.Run(work, args[1..]);
}

if (section == "fingerprint")
{
    // What every built-in profile decodes, hashed: compare the builds before and after a change to the read path.
    return Fingerprint.Run(work);
}

if (section == "draft")
{
    // draft --count N --first-seed S: see DraftFigure and docs/performance.md.
    return DraftFigure.Run(work, args[1..]);
}

if (section == "read-loss")
{
    // read-loss --count N --first-seed S [--family F] [--show lost]: where the truth loses the draft figure's blocks.
    return ReadLoss.Run(work, args[1..]);
}

if (section == "stages")
{
    // stages [PROFILE [MINUTES [ROUNDS]]]: where a decode's processor time goes, stage by stage (Stages).
    return Stages.Run(work, args[1..]);
}

if (section == "trust-fit")
{
    // trust-fit --dump FILE --out FILE --note TEXT [--keep MAP]: fits the confidence map from a trust run's dump (TAPEVAULT_TRUST_DUMP) of
    // tuning seeds; with --keep, only the curves whose readings the dump holds in full (a family's where it has every profile of the family).
    return TrustFit.Run(args[1..]);
}

if (section == "trust")
{
    // trust --blocks N --first-seed S --jobs J [--profile ID] [--minutes M]: see Trust and docs/performance.md.
    return Trust.Run(work, args[1..]);
}

if (section == "positions")
{
    // positions --candidates FOLDER: places again the readings a trust run saved (TAPEVAULT_TRUST_CANDIDATES) and counts positions per capture.
    return PositionReplay.Run(args[1..]);
}

if (section == "merge-replay")
{
    // merge-replay --candidates FOLDER [--dump FILE] [--weak-shares]: merges again the block tapes a trust run saved (TAPEVAULT_TRUST_CANDIDATES) and judges the positions.
    return MergeReplay.Run(args[1..]);
}

if (section == "segment-fit")
{
    // segment-fit --fit DUMPS --check DUMPS [--cells ah|ahl] [--per-profile] [--least N]: whether a map over merged stream
    // segments' features, fitted on stream-merge dumps of tuning seeds, holds on others (see SegmentFit).
    return SegmentFit.Run(args[1..]);
}

if (section == "stream-merge")
{
    // stream-merge --streams FOLDER [--dump FILE]: merges again the stream tapes a trust run saved (TAPEVAULT_TRUST_STREAMS).
    return StreamReplay.Run(args[1..]);
}

if (section == "memory")
{
    // memory [PROFILE ...] [--minutes 30,60,120]: peak memory of the decode over long captures; see LongCaptureMemory.
    return LongCaptureMemory.Run(work, args[1..]);
}

if (section == "scale")
{
    // scale [--tapes N] [--captures N] [--capture-kb N] [--blocks N] [--requests N] [--rebuild]: see Scale and docs/performance.md.
    return await Scale.RunAsync(work, args[1..]);
}

var total = Stopwatch.StartNew();
Console.WriteLine($"TapeVault benchmark — {Environment.ProcessorCount} cores, .NET {Environment.Version}, {DateTime.UtcNow:yyyy-MM-dd}");
Console.WriteLine();
if (section is "all" or "throughput")
{
    // throughput [MINUTES [LONG-MINUTES [PROFILE]]]: every built-in profile at MINUTES (30), orrin-80 again at
    // LONG-MINUTES (120; 0 for none) for memory flatness; PROFILE measures that profile alone.
    int minutes = section == "throughput" && args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 30;
    int longMinutes = section == "throughput" && args.Length > 2 ? int.Parse(args[2], CultureInfo.InvariantCulture) : 120;
    string? only = section == "throughput" && args.Length > 3 ? args[3] : null;
    Throughput.Run(work, minutes, longMinutes, "orrin-80", only);
}

if (section is "all" or "plots")
{
    PlotData.Run(work, 60);
}

if (section is "all" or "ber")
{
    FskErrorRate.Run();
}

if (section is "all" or "recovery")
{
    // An optional first seed (recovery 101) measures on tapes other than those the stream constants were fitted on.
    // An optional profile id after it (recovery 1 biphase-1200) measures that profile alone.
    int first = section == "recovery" && args.Length > 1 ? int.Parse(args[1], CultureInfo.InvariantCulture) : 1;
    string? only = section == "recovery" && args.Length > 2 ? args[2] : null;
    Recovery.Run(work, first, seeds: 4, only);
}

if (section is "all" or "calibration")
{
    Calibration.Run(work, seeds: 4);
}

if (section is "all")
{
    // Memory at the two ends of the goal's range (`memory` alone measures 60 minutes too), and the archive at scale on
    // 1000 tapes: `scale` alone builds the goal's 10 000, about 45 minutes of build on 2 cores before it measures.
    Console.WriteLine("(The no-argument run: memory at 30 and 120 minutes, as `memory --minutes 30,120`; the archive at scale on 1000 tapes, as `scale --tapes 1000`.)");
    Console.WriteLine();
    LongCaptureMemory.Run(work, ["--minutes", "30,120"]);
    Console.WriteLine();
    await Scale.RunAsync(work, ["--tapes", "1000"]);
}

if (section is "all" or "load")
{
    // Starts the web app and needs a few minutes of synthesis the first time.
    await LoadTest.RunAsync(work);
}

Console.WriteLine($"Total benchmark time {total.Elapsed.TotalSeconds:0} s.");
return 0;
