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
    IReadOnlyList<RunSummary> Runs);

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

public sealed record RunDetail(RunSummary Run, string CaptureFileName, int ItemId, string AccessionNumber, IReadOnlyList<PositionView> Positions);

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
    int Attempts);

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

public sealed record UserView(string UserName, IReadOnlyList<string> Roles, bool LockedOut);

public sealed record NewCollection(string Name, string? Description);

public sealed record NewItem(string AccessionNumber, string Title, string? LabelText, string? ConditionNotes, string? Side);

/// <summary>A decode request: a profile, and the names of default-bank settings to use (none: the whole bank).</summary>
public sealed record DecodeRequest(string Profile, IReadOnlyList<string>? Settings, string? Channel);

public sealed record NewUser(string UserName, string Role, string? Password);

public sealed record NewUserCreated(string UserName, string Role, string? GeneratedPassword);

public sealed record SignInRequest(string UserName, string Password);

public sealed record UploadResult(CaptureSummary Capture, bool Duplicate, bool LinkedExistingObject, string Message, JobView? DecodeJob);

public sealed record AntiforgeryToken(string HeaderName, string Token);
