namespace TapeVault.Core.Audio;

/// <summary>
/// Which channel of a multi-channel capture becomes the mono signal the decoder sees.
/// Mono files ignore the choice.
/// </summary>
public enum ChannelChoice
{
    /// <summary>The first channel.</summary>
    Left,

    /// <summary>The second channel.</summary>
    Right,

    /// <summary>The average of all channels.</summary>
    Mix,
}
