using TapeVault.Core.Audio;
using TapeVault.Core.Blocks;
using TapeVault.Core.Formats;

namespace TapeVault.Core.Synthesis;

/// <summary>A synthesised capture on disk with its ground truth: the blocks as written.</summary>
public sealed record SynthesizedCapture(string Path, IReadOnlyList<byte[]> Blocks, double TapeSeconds, double NoiseSigma);

/// <summary>
/// Writes any profile's files to a WAV capture through the channel model: blocks → flux reversals → read-back →
/// damage. Deterministic from the damage's seed. Streams in chunks, so an hour of capture needs no more memory than
/// a second.
/// </summary>
public static class CaptureSynthesizer
{
    public static SynthesizedCapture Write(
        string path,
        FormatProfile profile,
        IReadOnlyList<TapeFile> files,
        ChannelDamage damage,
        CaptureEncoding? encoding = null)
    {
        return WriteBlocks(path, profile, BlockWriter.Blocks(profile, files), damage, encoding);
    }

    /// <summary>
    /// Writes ready-made blocks (header + payload + checksum, copies not repeated) as they stand, without laying
    /// files out: for captures of blocks that are not what <see cref="BlockWriter"/> would make, such as a block
    /// altered after its checksum was computed. The encoding defaults to the damage's converter resolution
    /// (<see cref="ChannelDamage.QuantizeBits"/>: 8, 16 or 24-bit PCM), else 16-bit PCM; a stereo damage writes two channels.
    /// </summary>
    public static SynthesizedCapture WriteBlocks(
        string path,
        FormatProfile profile,
        IReadOnlyList<byte[]> blocks,
        ChannelDamage damage,
        CaptureEncoding? encoding = null)
    {
        ArgumentNullException.ThrowIfNull(damage);
        ArgumentNullException.ThrowIfNull(blocks);
        var model = Model(profile, blocks, damage, out double tapeSeconds);
        using var writer = new CaptureWriterStream(path, damage.SampleRate, encoding ?? EncodingFor(damage), model.Channels);
        var chunk = new float[16_384];
        int count;
        if (model.Channels == 1)
        {
            while ((count = model.Render(chunk)) > 0)
            {
                writer.Write(chunk.AsSpan(0, count));
            }
        }
        else
        {
            var other = new float[chunk.Length];
            while ((count = model.Render(chunk, other)) > 0)
            {
                writer.Write(chunk.AsSpan(0, count), other.AsSpan(0, count));
            }
        }

        return new SynthesizedCapture(path, blocks, tapeSeconds, model.NoiseSigma);
    }

    /// <summary>The sample encoding that holds the damage's converter resolution exactly: 8, 16 or 24-bit PCM (16 when none is set).</summary>
    public static CaptureEncoding EncodingFor(ChannelDamage damage)
    {
        ArgumentNullException.ThrowIfNull(damage);
        return damage.QuantizeBits switch
        {
            8 => CaptureEncoding.Pcm8,
            24 => CaptureEncoding.Pcm24,
            _ => CaptureEncoding.Pcm16,
        };
    }

    /// <summary>A ready-to-render channel model whose noise level is set from the clean signal's measured RMS.</summary>
    public static ChannelModel Model(FormatProfile profile, IReadOnlyList<byte[]> blocks, ChannelDamage damage, out double tapeSeconds)
    {
        ArgumentNullException.ThrowIfNull(damage);
        tapeSeconds = 0;
        foreach (double reversal in FluxWriter.Reversals(profile, blocks))
        {
            tapeSeconds = reversal;
        }

        double? rms = null;
        if (damage.SnrDb is not null)
        {
            rms = MeasureCleanRms(profile, blocks, damage, tapeSeconds);
        }

        return new ChannelModel(FluxWriter.Reversals(profile, blocks), damage, tapeSeconds, rms);
    }

    /// <summary>The RMS of the undamaged signal (no noise, hum or dropouts) over up to the first ten seconds of recording.</summary>
    public static double MeasureCleanRms(FormatProfile profile, IReadOnlyList<byte[]> blocks, ChannelDamage damage, double tapeSeconds)
    {
        ArgumentNullException.ThrowIfNull(damage);
        var clean = damage with
        {
            SnrDb = null, HumLevel = 0, Dropouts = [], RandomDropoutsPerMinute = 0, PrintThroughDb = null, ClipDriveDb = null,
            QuantizeBits = null, Channels = CaptureChannels.Mono,
        };
        var model = new ChannelModel(FluxWriter.Reversals(profile, blocks), clean, tapeSeconds);
        int skip = (int)(damage.MarginSeconds * damage.SampleRate) + damage.SampleRate / 20;
        long limit = Math.Min(model.TotalSamples - 2 * skip, 10L * damage.SampleRate);
        var chunk = new float[16_384];
        double sum = 0;
        long n = 0;
        long position = 0;
        int count;
        while (n < limit && (count = model.Render(chunk)) > 0)
        {
            for (int i = 0; i < count && n < limit; i++, position++)
            {
                if (position >= skip)
                {
                    sum += (double)chunk[i] * chunk[i];
                    n++;
                }
            }
        }

        return n > 0 ? Math.Sqrt(sum / n) : damage.Level;
    }
}
