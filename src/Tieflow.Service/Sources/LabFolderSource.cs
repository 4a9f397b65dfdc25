using System.Globalization;
using System.Threading.Channels;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Logging.Abstractions;
using Tieflow.Core.Monitoring;
using Tieflow.Files;
using Tieflow.Service.Cli;
using Tieflow.Service.Hosting;

namespace Tieflow.Service.Sources;

/// <summary>
/// Lab results from a drop folder of lab CSV files (<c>sampled,reported,stream,component,value</c>, read by
/// <see cref="LabCsvReader"/>). Each <c>*.csv</c> file directly in the folder is read once it is complete, its
/// results are emitted as <see cref="LabArrived"/> in file order, and the file is moved to <c>processed/</c>; a file
/// that cannot be read is moved to <c>rejected/</c> next to <c>&lt;name&gt;.reason.txt</c>, which names the line, the
/// column and what was expected. A bad file never stops the source.
/// </summary>
/// <remarks>
/// <para>When is a file complete? Files whose name does not end in <c>.csv</c> are never read, so a writer that can
/// rename writes <c>results.csv.part</c> and renames it to <c>results.csv</c> when done (a rename is atomic). For a
/// writer that cannot, a <c>.csv</c> file is read only after its size and last write time stayed the same for
/// <see cref="LabFolderOptions.SettleTime"/>, as seen by polls of the folder every
/// <see cref="LabFolderOptions.PollInterval"/> on the injected clock.</para>
/// <para>Delivery is at least once: results are emitted before the file is moved, so a crash between the two reads
/// the file again at the next start. A file in <c>processed/</c> is never read again.</para>
/// </remarks>
internal sealed partial class LabFolderSource : ISignalSource
{
    /// <summary>The folder inside the drop folder that receives files that were read.</summary>
    public const string ProcessedFolder = "processed";

    /// <summary>The folder inside the drop folder that receives files that could not be read, with their reasons.</summary>
    public const string RejectedFolder = "rejected";

    private readonly LabFolderOptions _options;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly Dictionary<string, Seen> _seen = new(StringComparer.Ordinal);
    private long _polls;

    public LabFolderSource(LabFolderOptions options, TimeProvider time, ILoggerFactory? loggerFactory = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(time);
        _options = options;
        _time = time;
        _logger = (loggerFactory ?? NullLoggerFactory.Instance).CreateLogger<LabFolderSource>();
    }

    public string Name => $"lab folder {_options.Folder}";

    /// <summary>Looks at the folder so far (for tests and the status page).</summary>
    public long Polls => Interlocked.Read(ref _polls);

    public async Task RunAsync(ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(output);
        string folder = Prepare();

        // A periodic timer made before the first look keeps the polls on the clock's grid, however long a look takes.
        using var timer = new PeriodicTimer(_options.PollInterval, _time);
        while (!cancellationToken.IsCancellationRequested)
        {
            try
            {
                await PollAsync(folder, output, cancellationToken).ConfigureAwait(false);
            }
            catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
            {
                return;
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                // Boundary of one look at the folder: a folder that went away or cannot be listed is tried again next time.
                LogPollFailed(_logger, folder, e.Message);
            }

            Interlocked.Increment(ref _polls);
            try
            {
                if (!await timer.WaitForNextTickAsync(cancellationToken).ConfigureAwait(false))
                {
                    return;
                }
            }
            catch (OperationCanceledException)
            {
                return;
            }
        }
    }

    private string Prepare()
    {
        IReadOnlyList<string> problems = _options.Problems();
        if (problems.Count > 0)
        {
            throw new SignalSourceException(ExitCodes.BadInput, "the lab folder cannot be watched:" + Environment.NewLine + string.Join(Environment.NewLine, problems.Select(p => "  " + p)));
        }

        string folder = Path.GetFullPath(_options.Folder!);
        try
        {
            Directory.CreateDirectory(folder);
            Directory.CreateDirectory(Path.Combine(folder, ProcessedFolder));
            Directory.CreateDirectory(Path.Combine(folder, RejectedFolder));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new SignalSourceException(ExitCodes.BadInput, $"{SettingsKeys.LabsFolder}: the folder '{folder}' (with {ProcessedFolder}/ and {RejectedFolder}/ inside) cannot be made: {e.Message}", e);
        }

        return folder;
    }

    private async Task PollAsync(string folder, ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        DateTimeOffset now = _time.GetUtcNow();
        var present = new HashSet<string>(StringComparer.Ordinal);
        foreach (string path in Directory.EnumerateFiles(folder, "*", SearchOption.TopDirectoryOnly).Order(StringComparer.Ordinal))
        {
            if (!path.EndsWith(".csv", StringComparison.OrdinalIgnoreCase))
            {
                continue;
            }

            var info = new FileInfo(path);
            if (!info.Exists)
            {
                continue;
            }

            present.Add(path);
            var shape = (info.Length, info.LastWriteTimeUtc);
            if (!_seen.TryGetValue(path, out Seen? seen) || seen.Shape != shape)
            {
                _seen[path] = seen = new Seen(shape, now);
            }

            if (seen.Done || now - seen.Since < _options.SettleTime)
            {
                continue;
            }

            await ReadAsync(folder, path, seen, output, cancellationToken).ConfigureAwait(false);
        }

        foreach (string gone in _seen.Keys.Where(k => !present.Contains(k)).ToList())
        {
            _seen.Remove(gone);
        }
    }

    private async Task ReadAsync(string folder, string path, Seen seen, ChannelWriter<SourceEvent> output, CancellationToken cancellationToken)
    {
        IReadOnlyList<LabResult> results;
        try
        {
            results = LabCsvReader.Load(path);
        }
        catch (InputException e) when (File.Exists(path) && !IsUnreadable(e))
        {
            Reject(folder, path, seen, e.Message);
            return;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or InputException)
        {
            // Gone or locked meanwhile: the next look tries again.
            LogReadFailed(_logger, path, e.Message);
            return;
        }

        foreach (LabResult result in results)
        {
            await output.WriteAsync(new LabArrived(result), cancellationToken).ConfigureAwait(false);
        }

        seen.Done = true;
        string? moved = Move(path, Path.Combine(folder, ProcessedFolder));
        LogProcessed(_logger, path, results.Count, moved ?? "(could not be moved; it will not be read again while the source runs)");
    }

    private void Reject(string folder, string path, Seen seen, string reason)
    {
        seen.Done = true;
        string? moved = Move(path, Path.Combine(folder, RejectedFolder));
        string text = string.Create(CultureInfo.InvariantCulture,
            $"{Path.GetFileName(path)} was not read, and none of its results were used: {reason}{Environment.NewLine}" +
            $"A lab file needs the header sampled,reported,stream,component,value and one result a line: two ISO 8601 UTC times " +
            $"(the result reported at or after the sample was drawn), the stream, the component, and the fraction (0 to 1). " +
            $"Mend the file and drop it into the folder again.{Environment.NewLine}" +
            $"Rejected at {now()}.{Environment.NewLine}");
        try
        {
            string reasonPath = (moved ?? Path.Combine(folder, RejectedFolder, Path.GetFileName(path))) + ".reason.txt";
            File.WriteAllText(reasonPath, text);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            LogMoveFailed(_logger, path, e.Message);
        }

        LogRejected(_logger, path, reason);

        string now() => _time.GetUtcNow().UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture);
    }

    /// <summary>Moves a file into a folder under a name not yet taken there (<c>x.csv</c>, <c>x-2.csv</c>, ...); the new path, or null.</summary>
    private string? Move(string path, string into)
    {
        string name = Path.GetFileNameWithoutExtension(path);
        string extension = Path.GetExtension(path);
        for (int n = 1; n < 10_000; n++)
        {
            string target = Path.Combine(into, n == 1 ? name + extension : $"{name}-{n}{extension}");
            if (File.Exists(target))
            {
                continue;
            }

            try
            {
                File.Move(path, target, overwrite: false);
                return target;
            }
            catch (IOException) when (File.Exists(target))
            {
                // Taken meanwhile: the next name.
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                LogMoveFailed(_logger, path, e.Message);
                return null;
            }
        }

        LogMoveFailed(_logger, path, $"every name up to {name}-9999{extension} is taken in {into}");
        return null;
    }

    /// <summary>The reader's "missing" or "cannot be read" problems are about the file system, not the content.</summary>
    private static bool IsUnreadable(InputException e) =>
        e.Problems.Count == 1 && (e.Problems[0].Message.StartsWith("the file does not exist", StringComparison.Ordinal) ||
                                  e.Problems[0].Message.StartsWith("the file cannot be read", StringComparison.Ordinal));

    [LoggerMessage(EventId = 4201, Level = LogLevel.Information, Message = "Lab file {Path}: {Count} results read; moved to {MovedTo}")]
    private static partial void LogProcessed(ILogger logger, string path, int count, string movedTo);

    [LoggerMessage(EventId = 4202, Level = LogLevel.Warning, Message = "Lab file {Path} rejected: {Reason}")]
    private static partial void LogRejected(ILogger logger, string path, string reason);

    [LoggerMessage(EventId = 4203, Level = LogLevel.Warning, Message = "Lab folder {Folder} cannot be looked at now: {Error}")]
    private static partial void LogPollFailed(ILogger logger, string folder, string error);

    [LoggerMessage(EventId = 4204, Level = LogLevel.Error, Message = "Lab file {Path} could not be moved: {Error}")]
    private static partial void LogMoveFailed(ILogger logger, string path, string error);

    [LoggerMessage(EventId = 4205, Level = LogLevel.Warning, Message = "Lab file {Path} cannot be read now, trying again later: {Error}")]
    private static partial void LogReadFailed(ILogger logger, string path, string error);

    /// <summary>A file as last seen: its size and write time, since when they stayed so (source clock), and whether it was handled.</summary>
    private sealed class Seen((long Length, DateTime Written) shape, DateTimeOffset since)
    {
        public (long Length, DateTime Written) Shape { get; } = shape;

        public DateTimeOffset Since { get; } = since;

        public bool Done { get; set; }
    }
}
