using System.Text.Json;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;
using TapeVault.Core.Synthesis;

namespace TapeVault.Core.Tests.Trust;

/// <summary>
/// One pass the trust benchmark saved (`TAPEVAULT_TRUST_CANDIDATES=folder`): its profile, seed and pass, where its
/// damage came from, the blocks written (hex), every setting's readings, and, where the case holds them, where the
/// synthesiser wrote each copy on the capture's time base.
/// </summary>
internal sealed record SavedCapture(string Profile, int Seed, int Pass, string Source, string[] Written, List<BlockCandidate> Candidates, List<WrittenSpan>? Copies = null)
{
    private static readonly JsonSerializerOptions CaseJson = new() { NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals };

    /// <summary>The saved pass in Trust/Cases/<paramref name="name"/>.</summary>
    public static SavedCapture Load(string name)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "Trust", "Cases", name);
        return JsonSerializer.Deserialize<SavedCapture>(File.ReadAllText(path), CaseJson)
            ?? throw new InvalidOperationException($"{name} holds no case.");
    }

    /// <summary>A saved capture's readings, their positions cleared, placed again by the positioner with its profile's copies.</summary>
    public static (SavedCapture Capture, List<BlockCandidate> Placed) PlaceAgain(string name)
    {
        var capture = Load(name);
        var profile = ProfileCatalog.BuiltIn.Get(capture.Profile);
        return (capture, BlockPositioner.Place(capture.Candidates.Select(c => c with { Position = -1 }).ToList(), profile.Layout.Copies));
    }

    /// <summary>Where the synthesiser wrote each copy; a case saved without them cannot be judged by place.</summary>
    public IReadOnlyList<WrittenSpan> WrittenCopies =>
        Copies ?? throw new InvalidOperationException($"the saved pass of {Profile} seed {Seed} holds no written copies.");

    /// <summary>The written copy whose sync the reading starts at (within 30 ms), or null (a reading in a lead-in or gap, or from within a block).</summary>
    public WrittenSpan? WrittenAt(BlockCandidate c)
    {
        foreach (var span in WrittenCopies)
        {
            if (Math.Abs(span.DataSeconds - c.StartSeconds) <= 0.03)
            {
                return span;
            }
        }

        return null;
    }
}
