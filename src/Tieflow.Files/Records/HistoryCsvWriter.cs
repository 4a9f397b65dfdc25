using System.Globalization;
using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>
/// Writes a history CSV (<c>time,tag,value,quality</c>) as the samples come, never holding them: invariant culture,
/// ISO 8601 UTC times, values in the shortest text that reads back to the same double.
/// </summary>
public sealed class HistoryCsvWriter : IDisposable
{
    public const string Header = "time,tag,value,quality";

    private readonly TextWriter _writer;
    private readonly bool _ownsWriter;
    private readonly char[] _number = new char[32];
    private DateTimeOffset _lastTime = DateTimeOffset.MinValue;
    private string _lastTimeText = string.Empty;

    /// <summary>Writes to a text writer (the header at once); the writer is left open on dispose.</summary>
    public HistoryCsvWriter(TextWriter writer)
        : this(writer, ownsWriter: false)
    {
    }

    private HistoryCsvWriter(TextWriter writer, bool ownsWriter)
    {
        ArgumentNullException.ThrowIfNull(writer);
        _writer = writer;
        _ownsWriter = ownsWriter;
        _writer.Write(Header);
        _writer.Write('\n');
    }

    /// <summary>Number of records written.</summary>
    public long Count { get; private set; }

    /// <summary>Creates (or replaces) a file and writes the header.</summary>
    /// <exception cref="IOException">The file cannot be created.</exception>
    public static HistoryCsvWriter Create(string path) =>
        new(new StreamWriter(path, append: false, new System.Text.UTF8Encoding(false), bufferSize: 1 << 16), ownsWriter: true);

    public static string QualityName(SignalQuality quality) => quality switch
    {
        SignalQuality.Good => "good",
        SignalQuality.Uncertain => "uncertain",
        SignalQuality.Bad => "bad",
        _ => throw new ArgumentOutOfRangeException(nameof(quality), quality, "Unknown quality."),
    };

    /// <summary>Writes one record.</summary>
    /// <exception cref="ArgumentException">The tag cannot be written as a plain CSV field.</exception>
    public void Write(in SignalSample sample)
    {
        if (sample.Time != _lastTime || _lastTimeText.Length == 0)
        {
            _lastTime = sample.Time;
            _lastTimeText = RecordFormat.Time(sample.Time);
        }

        if (!RecordFormat.IsPlainField(sample.Tag))
        {
            throw new ArgumentException($"tag \"{sample.Tag}\" cannot be written to a history CSV: it is empty or holds a comma, quote, line break or surrounding blank", nameof(sample));
        }

        _writer.Write(_lastTimeText);
        _writer.Write(',');
        _writer.Write(sample.Tag);
        _writer.Write(',');
        if (sample.Value.TryFormat(_number, out int written, "R", CultureInfo.InvariantCulture))
        {
            _writer.Write(_number, 0, written);
        }
        else
        {
            _writer.Write(RecordFormat.Number(sample.Value));
        }

        _writer.Write(',');
        _writer.Write(QualityName(sample.Quality));
        _writer.Write('\n');
        Count++;
    }

    public void Flush() => _writer.Flush();

    public void Dispose()
    {
        _writer.Flush();
        if (_ownsWriter)
        {
            _writer.Dispose();
        }
    }
}
