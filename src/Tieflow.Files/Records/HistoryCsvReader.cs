using System.Collections;
using System.Globalization;
using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>
/// Reads a history CSV (<c>time,tag,value,quality</c>) one record at a time, streaming (memory does not grow with the
/// file). <see cref="Read"/> is strict: the first line that is not a record throws. <see cref="Open"/> is tolerant, for
/// real exports: a line that is not a record is counted and skipped (the first few are kept with their line numbers and
/// reasons), and only too many of them end the read. Both use one parser.
/// </summary>
public static class HistoryCsvReader
{
    /// <summary>The records of a file, in file order, read lazily (the file stays open while enumerating). Strict.</summary>
    /// <exception cref="InputException">The file is missing, unreadable or malformed (thrown while enumerating), naming the file, the line and the column.</exception>
    public static IEnumerable<SignalSample> Read(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        using var parser = new HistoryCsvParser(path);
        long blank = 0;
        while (true)
        {
            switch (parser.Next(out SignalSample sample, out LineProblem problem))
            {
                case HistoryCsvParser.Outcome.Row when blank == 0:
                    yield return sample;
                    break;
                case HistoryCsvParser.Outcome.Row:
                case HistoryCsvParser.Outcome.Bad when blank != 0:
                    throw new InputException(path, $"line {blank}", "blank line inside the records; remove it");
                case HistoryCsvParser.Outcome.Bad:
                    throw new InputException(path, parser.Location(problem), problem.Message);
                case HistoryCsvParser.Outcome.Blank:
                    blank = blank == 0 ? parser.LineNumber : blank;
                    break;
                default:
                    yield break;
            }
        }
    }

    /// <summary>A tolerant reader of a file: enumerate it for the records; its counts fill in as it goes.</summary>
    /// <param name="path">The file.</param>
    /// <param name="options">The limit on bad lines; defaults when null.</param>
    /// <exception cref="InputException">The file is missing, unreadable, has no history header, or (while enumerating) too many bad lines.</exception>
    public static HistoryCsvSource Open(string path, HistoryReadOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(path);
        return new HistoryCsvSource(path, options ?? new HistoryReadOptions());
    }
}

/// <summary>How tolerant a history read is.</summary>
public sealed record HistoryReadOptions
{
    /// <summary>Bad lines allowed by default (also more than <see cref="DefaultBadFraction"/> of the lines must be bad to fail).</summary>
    public const long DefaultBadLines = 100;

    /// <summary>Fraction of the data lines that must be bad, with more than <see cref="DefaultBadLines"/>, to fail by default.</summary>
    public const double DefaultBadFraction = 0.01;

    /// <summary>
    /// The most bad lines allowed: one more ends the read at once. Null: the default rule, judged at the end of the file
    /// (more than <see cref="DefaultBadLines"/> bad lines that are also more than 1 % of the data lines fail).
    /// </summary>
    public long? MaxBadLines { get; init; }

    /// <summary>How many bad lines are kept with their numbers and reasons (the rest are only counted).</summary>
    public int ListedBadLines { get; init; } = 20;
}

/// <summary>One line of a history file that is not a record.</summary>
/// <param name="Line">1-based line number.</param>
/// <param name="Location">Line and, where known, column.</param>
/// <param name="Reason">What is wrong.</param>
public readonly record struct HistoryBadLine(long Line, string Location, string Reason)
{
    public override string ToString() => $"{Location}: {Reason}";
}

/// <summary>
/// A tolerant, streaming read of a history CSV. Enumerating yields the records in file order; a line that is not a
/// record is counted, and the first few are kept (<see cref="FirstBadLines"/>); blank lines are skipped. Too many bad
/// lines (see <see cref="HistoryReadOptions.MaxBadLines"/>) throw an <see cref="InputException"/> naming the file and
/// the first bad lines. Enumerate once; the counts describe the last enumeration.
/// </summary>
public sealed class HistoryCsvSource : IEnumerable<SignalSample>
{
    private readonly HistoryReadOptions _options;
    private readonly List<HistoryBadLine> _bad = [];

    internal HistoryCsvSource(string path, HistoryReadOptions options)
    {
        File = path;
        _options = options;

        // The file, its readability and its header are checked at once, not at the first record.
        new HistoryCsvParser(path).Dispose();
    }

    /// <summary>The file.</summary>
    public string File { get; }

    /// <summary>Records read.</summary>
    public long Rows { get; private set; }

    /// <summary>Lines that are not records.</summary>
    public long BadLines { get; private set; }

    /// <summary>The first bad lines, with their reasons (at most <see cref="HistoryReadOptions.ListedBadLines"/>).</summary>
    public IReadOnlyList<HistoryBadLine> FirstBadLines => _bad;

    public IEnumerator<SignalSample> GetEnumerator()
    {
        Rows = 0;
        BadLines = 0;
        _bad.Clear();
        using var parser = new HistoryCsvParser(File);
        while (true)
        {
            switch (parser.Next(out SignalSample sample, out LineProblem problem))
            {
                case HistoryCsvParser.Outcome.Row:
                    Rows++;
                    yield return sample;
                    break;
                case HistoryCsvParser.Outcome.Bad:
                    BadLines++;
                    if (_bad.Count < _options.ListedBadLines)
                    {
                        _bad.Add(new HistoryBadLine(parser.LineNumber, parser.Location(problem), problem.Message));
                    }

                    if (_options.MaxBadLines is long max && BadLines > max)
                    {
                        throw TooMany($"more than {max.ToString("N0", CultureInfo.InvariantCulture)} bad lines (--max-bad-lines)");
                    }

                    break;
                case HistoryCsvParser.Outcome.Blank:
                    break;
                default:
                    if (_options.MaxBadLines is null && BadLines > HistoryReadOptions.DefaultBadLines && BadLines > HistoryReadOptions.DefaultBadFraction * (Rows + BadLines))
                    {
                        throw TooMany(string.Create(CultureInfo.InvariantCulture, $"{BadLines:N0} of {Rows + BadLines:N0} data lines are bad, more than {HistoryReadOptions.DefaultBadLines} and more than {100 * HistoryReadOptions.DefaultBadFraction:G} %"));
                    }

                    yield break;
            }
        }
    }

    IEnumerator IEnumerable.GetEnumerator() => GetEnumerator();

    private InputException TooMany(string what)
    {
        if (_bad.Count == 0)
        {
            return new InputException(File, "$", what);
        }

        string first = string.Join("; ", _bad.Take(5).Select(b => b.ToString()));
        return new InputException(File, $"line {_bad[0].Line}", $"{what}; is this the right file? The first: {first}");
    }
}
