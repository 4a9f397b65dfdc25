using Microsoft.Extensions.Logging;

namespace Tieflow.Service;

/// <summary>
/// Every log message of the service, source-generated, with event ids that are stable and never reused (the table is
/// in docs/service.md). Messages name files, endpoints, user names and counts; never a password or a token.
/// </summary>
internal static partial class Log
{
    [LoggerMessage(EventId = 1000, Level = LogLevel.Information, Message = "Tieflow monitor starting: site {Site}, units {Units}; source {Source}; store {StoreKind} at {StoreTarget}")]
    public static partial void Starting(ILogger logger, string site, string units, string source, string storeKind, string storeTarget);

    [LoggerMessage(EventId = 1001, Level = LogLevel.Information, Message = "{Notice}")]
    public static partial void Advisory(ILogger logger, string notice);

    [LoggerMessage(EventId = 1002, Level = LogLevel.Information, Message = "Source {Source} connected at {Time:u}: {Reason}")]
    public static partial void SourceConnected(ILogger logger, string source, DateTimeOffset time, string? reason);

    [LoggerMessage(EventId = 1003, Level = LogLevel.Warning, Message = "Source {Source} lost at {Time:u}: {Reason}")]
    public static partial void SourceLost(ILogger logger, string source, DateTimeOffset time, string? reason);

    [LoggerMessage(EventId = 1004, Level = LogLevel.Information, Message = "Source {Source} ended (nothing more to read)")]
    public static partial void SourceEnded(ILogger logger, string source);

    [LoggerMessage(EventId = 1005, Level = LogLevel.Error, Message = "Source {Source} failed and cannot go on: {Reason}")]
    public static partial void SourceFailed(ILogger logger, string source, string reason);

    [LoggerMessage(EventId = 1006, Level = LogLevel.Warning, Message = "Alert raised on {Unit}: {Kind} ({Severity}) at {Time:u}: {Message}")]
    public static partial void AlertRaised(ILogger logger, string unit, string kind, string severity, DateTimeOffset time, string message);

    [LoggerMessage(EventId = 1007, Level = LogLevel.Information, Message = "Alert cleared on {Unit}: {Kind} at {Time:u}")]
    public static partial void AlertCleared(ILogger logger, string unit, string kind, DateTimeOffset time);

    [LoggerMessage(EventId = 1008, Level = LogLevel.Error, Message = "Store write failed ({StoreKind}); {Pending} records held and retried: {Reason}")]
    public static partial void StoreWriteFailed(ILogger logger, string storeKind, int pending, string reason);

    [LoggerMessage(EventId = 1009, Level = LogLevel.Information, Message = "Store writes again ({StoreKind})")]
    public static partial void StoreRecovered(ILogger logger, string storeKind);

    [LoggerMessage(EventId = 1010, Level = LogLevel.Information, Message = "Monitor stopping: analysing what has arrived, writing and flushing")]
    public static partial void Stopping(ILogger logger);

    [LoggerMessage(EventId = 1011, Level = LogLevel.Information, Message = "Monitor stopped: {Samples} readings, {Windows} windows, {Records} records written, data up to {DataTime:u}")]
    public static partial void Stopped(ILogger logger, long samples, int windows, long records, DateTimeOffset? dataTime);

    [LoggerMessage(EventId = 1012, Level = LogLevel.Warning, Message = "Store not flushed within {Timeout}; {Pending} records stay in the outbox for the next start")]
    public static partial void FlushIncomplete(ILogger logger, TimeSpan timeout, long pending);

    [LoggerMessage(EventId = 1013, Level = LogLevel.Information, Message = "Health and status on {Url}health and {Url}status")]
    public static partial void HealthListening(ILogger logger, string url);

    [LoggerMessage(EventId = 1014, Level = LogLevel.Information, Message = "Maximum run time {MaxRuntime} reached; stopping")]
    public static partial void MaxRuntimeReached(ILogger logger, TimeSpan maxRuntime);

    [LoggerMessage(EventId = 1015, Level = LogLevel.Warning, Message = "Readings of tag {Tag} arrive, but no watched unit has it; they are ignored")]
    public static partial void UnknownTag(ILogger logger, string tag);

    [LoggerMessage(EventId = 1016, Level = LogLevel.Information, Message = "Settings: source {SourceKind} {SourceTarget}, user {User}, password {PasswordState}; store {StoreKind}, token {TokenState}; labs folder {LabsFolder}")]
    public static partial void Settings(ILogger logger, string sourceKind, string sourceTarget, string user, string passwordState, string storeKind, string tokenState, string labsFolder);

    [LoggerMessage(EventId = 1017, Level = LogLevel.Error, Message = "Monitor failed: {Reason}")]
    public static partial void MonitorFailed(ILogger logger, string reason);

    [LoggerMessage(EventId = 1018, Level = LogLevel.Information, Message = "Every source has ended; the monitor stops")]
    public static partial void SourcesEnded(ILogger logger);
}
