namespace TapeVault.Web.Api;

public sealed record CollectionSummary(int Id, string Name, string Description, int Items, DateTimeOffset CreatedUtc);

public sealed record CollectionDetail(int Id, string Name, string Description, DateTimeOffset CreatedUtc, IReadOnlyList<ItemSummary> Items);

public sealed record ItemSummary(int Id, string AccessionNumber, string Title, string Side, int Captures, int Runs);

public sealed record ItemDetail(
    int Id,
    int CollectionId,
    string CollectionName,
    string AccessionNumber,
    string Title,
    string LabelText,
    string ConditionNotes,
    string Side,
    IReadOnlyList<CaptureSummary> Captures,
    IReadOnlyList<JobView> ActiveJobs);

public sealed record CaptureSummary(
    int Id,
    int ItemId,
    string FileName,
    string Sha256,
    long Size,
    int SampleRate,
    int Channels,
    int BitsPerSample,
    string Encoding,
    double DurationSeconds,
    string Deck,
    string Operator,
    DateOnly? CapturedOn,
    string Notes,
    DateTimeOffset IngestedUtc,
    string IngestedBy,
    IReadOnlyList<RunSummary> Runs)
{
    /// <summary>The file's container: wav (RIFF), rf64, bw64 or flac.</summary>
    public string Container { get; init; } = "wav";

    /// <summary>The file's own metadata (bext, iXML, FLAC comments) and what it suggests; null when it carries none.</summary>
    public TapeVault.Archive.Ingest.EmbeddedMetadata? Embedded { get; init; }
}

public sealed record RunSummary(
    int Id,
    int CaptureId,
    string ProfileId,
    IReadOnlyList<string> Settings,
    string CodeVersion,
    DateTimeOffset StartedUtc,
    DateTimeOffset FinishedUtc,
    string Outcome,
    int Positions,
    int CleanPositions);

public sealed record RunDetail(RunSummary Run, string CaptureFileName, int ItemId, string AccessionNumber, IReadOnlyList<PositionView> Positions, int CollectionId = 0, string CollectionName = "", string ItemTitle = "");

/// <summary>One block position of a run: the best reading, and every setting's reading of it.</summary>
public sealed record PositionView(int Position, string Identity, CandidateView Best, IReadOnlyList<CandidateView> Readings);

public sealed record CandidateView(
    string Setting,
    string Status,
    double Confidence,
    double MinimumMargin,
    double MeanMargin,
    int AmbiguousDecisions,
    int Decisions,
    double SnrDb,
    double Speed,
    double StartSeconds,
    double EndSeconds,
    bool Truncated,
    int PayloadLength,
    string PayloadSha256);

public sealed record JobView(
    int Id,
    string Kind,
    string State,
    double Progress,
    string ProgressText,
    string? Error,
    int? ItemId,
    int? CaptureId,
    int? ResultId,
    string CreatedBy,
    DateTimeOffset CreatedUtc,
    DateTimeOffset? StartedUtc,
    DateTimeOffset? FinishedUtc,
    int Attempts,
    int? CollectionId = null,
    string? CollectionName = null,
    string? AccessionNumber = null);

public sealed record EventView(long Id, string EventType, DateTimeOffset OccurredUtc, string Agent, string ObjectType, string ObjectId, string Outcome, string Detail);

public sealed record ProfileView(string Id, string Name, string Description, string Family);

public sealed record SettingView(
    string Name,
    double HighPassHz,
    double? LowPassHz,
    bool Differentiate,
    bool Invert,
    string ThresholdMode,
    double Hysteresis,
    string Edges,
    string Explanation);

/// <param name="Disabled">The account cannot sign in (a curator disabled it).</param>
/// <param name="MustChangePassword">The account's password is a one-time password, to be changed at its next sign-in.</param>
public sealed record UserView(string UserName, IReadOnlyList<string> Roles, bool Disabled, bool MustChangePassword);

public sealed record NewCollection(string Name, string? Description);

public sealed record NewItem(string AccessionNumber, string Title, string? LabelText, string? ConditionNotes, string? Side);

/// <summary>A decode request: a profile, and the names of default-bank settings to use (none: the whole bank).</summary>
public sealed record DecodeRequest(string Profile, IReadOnlyList<string>? Settings, string? Channel);

public sealed record NewUser(string UserName, string Role, string? Password);

public sealed record NewUserCreated(string UserName, string Role, string? GeneratedPassword);

public sealed record SignInRequest(string UserName, string Password);

/// <summary>A signed-in account changing its own password.</summary>
public sealed record PasswordChange(string CurrentPassword, string NewPassword);

/// <summary>A curator's reset of another account: its new one-time password, shown once.</summary>
public sealed record PasswordReset(string UserName, string OneTimePassword);

public sealed record UploadResult(CaptureSummary Capture, bool Duplicate, bool LinkedExistingObject, string Message, JobView? DecodeJob);

public sealed record AntiforgeryToken(string HeaderName, string Token);

public sealed record ImageSummary(
    int Id,
    int ItemId,
    int Version,
    string Sha256,
    long Size,
    string ProfileId,
    string CodeVersion,
    DateTimeOffset CreatedUtc,
    string CreatedBy,
    int CleanBlocks,
    int VotedBlocks,
    int RepairedBlocks,
    int MissingBlocks,
    int Conflicts,
    double OverallConfidence,
    IReadOnlyList<int> SourceRunIds);

public sealed record ImageDetail(ImageSummary Image, IReadOnlyList<ImageBlockView> Blocks, IReadOnlyList<ImageFileView> Files, IReadOnlyList<ImageCaptureView> Captures);

public sealed record ImageBlockView(
    int Position,
    string Key,
    string Status,
    double Confidence,
    int AgreeingCaptures,
    bool Conflict,
    int PayloadLength,
    string PayloadSha256,
    string? WinningCaptureSha256,
    string? WinningCaptureFile,
    string? WinningSetting,
    IReadOnlyList<ConflictView> Conflicts);

public sealed record ConflictView(string CaptureSha256, string Setting, int AgreeingCaptures, string PayloadSha256);

public sealed record ImageFileView(string Name, long Length, int FirstPosition, int BlockCount, bool Complete);

public sealed record ImageCaptureView(string Sha256, string FileName, int SampleRate, int Channels, double DurationSeconds);

/// <summary>The block map: one row per capture × detector setting, one column per position of the newest image.</summary>
public sealed record BlockMap(int? ImageId, IReadOnlyList<BlockMapColumn> Columns, IReadOnlyList<BlockMapRow> Rows);

public sealed record BlockMapColumn(int Position, string Key, string Status, double Confidence);

public sealed record BlockMapRow(int CaptureId, string CaptureFile, int RunId, string Setting, IReadOnlyList<BlockMapCell> Cells);

/// <summary>One setting's best reading of one position; status "none" when the setting read nothing there.</summary>
public sealed record BlockMapCell(string Status, double Confidence, bool Chosen);

public sealed record ExportView(int Id, string Kind, int? CollectionId, int? ItemId, string FileName, string Sha256, long Size, DateTimeOffset CreatedUtc, string CreatedBy);

/// <summary>One reading of one image position, for the position's side-by-side view.</summary>
public sealed record PositionReading(
    int CaptureId,
    string CaptureFile,
    int RunId,
    string Setting,
    string Status,
    double Confidence,
    double StartSeconds,
    int Bytes,
    string FirstBytesHex,
    double MinimumMargin,
    double MeanMargin,
    int AmbiguousDecisions,
    bool SameAsImage);

/// <summary>An image position and every reading of it.</summary>
public sealed record PositionReadings(
    int ItemId,
    int ImageVersion,
    int Position,
    int PositionCount,
    string Key,
    string Status,
    double Confidence,
    int Bytes,
    string FirstBytesHex,
    IReadOnlyList<PositionReading> Readings);

/// <summary>A file named by a tape image's headers: its place in the image's file list, a name safe to save under, its bytes.</summary>
public sealed record RecoveredFile(int Index, string SafeName, TapeVault.Core.Image.ExtractedFile Extracted);

/// <summary>The files recovered from one version of a tape's image.</summary>
public sealed record RecoveredFiles(int ImageId, string AccessionNumber, int Version, DateTimeOffset CreatedUtc, IReadOnlyList<RecoveredFile> Files);

/// <summary>One detector setting in the decode form: its name and what sets it apart from the rest of its group.</summary>
public sealed record SettingChoiceView(string Name, string Difference);

/// <summary>Detector settings that make the same assumption about where the capture's signal comes from.</summary>
public sealed record SettingGroupView(string Title, string Assumes, IReadOnlyList<SettingChoiceView> Settings);
