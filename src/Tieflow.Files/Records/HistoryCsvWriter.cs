using System.Globalization;
using System.Text;
using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>
/// Writes a history CSV (<c>time,tag,value,quality</c>) as the samples come, never holding them: invariant culture,
/// ISO 8601 UTC times, values in the shortest text that reads back to the same double. Formats straight into a
/// UTF-8 buffer (a simulator writes millions of rows: the time text is made once per time, each tag's bytes once).
/// </summary>
public sealed class HistoryCsvWriter : IDisposable
{
    public const string Header = "time,tag,value,quality";

    private const int BufferSize = 1 << 16;
    private const int MaxRow = 512;
    private static readonly byte[] Good = ",good\n"u8.ToArray();
    private static readonly byte[] Uncertain = ",uncertain\n"u8.ToArray();
    private static readonly byte[] Bad = ",bad\n"u8.ToArray();

    private readonly Stream _stream;
    private readonly bool _leaveOpen;
    private readonly byte[] _buffer = new byte[BufferSize];
    private readonly Dictionary<string, byte[]> _tags = new(StringComparer.Ordinal);
    private int _position;
    private DateTimeOffset _lastTime = DateTimeOffset.MinValue;
    private byte[] _lastTimeBytes = [];

    /// <summary>Writes to a stream (the header at once).</summary>
    /// <param name="stream">The target.</param>
    /// <param name="leaveOpen">True to leave the stream open on dispose.</param>
    public HistoryCsvWriter(Stream stream, bool leaveOpen = true)
    {
        ArgumentNullException.ThrowIfNull(stream);
        _stream = stream;
        _leaveOpen = leaveOpen;
        Append(Encoding.UTF8.GetBytes(Header + "\n"));
    }

    /// <summary>Number of records written.</summary>
    public long Count { get; private set; }

    /// <summary>Creates (or replaces) a file and writes the header.</summary>
    /// <exception cref="IOException">The file cannot be created.</exception>
    public static HistoryCsvWriter Create(string path) =>
        new(new FileStream(path, FileMode.Create, FileAccess.Write, FileShare.Read, BufferSize), leaveOpen: false);

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
        if (sample.Time != _lastTime || _lastTimeBytes.Length == 0)
        {
            _lastTime = sample.Time;
            _lastTimeBytes = Encoding.UTF8.GetBytes(RecordFormat.Time(sample.Time) + ",");
        }

        if (!_tags.TryGetValue(sample.Tag, out byte[]? tag))
        {
            if (!RecordFormat.IsPlainField(sample.Tag) || sample.Tag.Length > 200)
            {
                throw new ArgumentException($"tag \"{sample.Tag}\" cannot be written to a history CSV: it is empty, too long, or holds a comma, quote, line break or surrounding blank", nameof(sample));
            }

            tag = Encoding.UTF8.GetBytes(sample.Tag + ",");
            _tags.Add(sample.Tag, tag);
        }

        if (_position + MaxRow > BufferSize)
        {
            Flush(toDisk: false);
        }

        Append(_lastTimeBytes);
        Append(tag);
        if (!sample.Value.TryFormat(_buffer.AsSpan(_position), out int written, "R", CultureInfo.InvariantCulture))
        {
            throw new InvalidOperationException("a number did not fit its buffer");
        }

        _position += written;
        Append(sample.Quality switch
        {
            SignalQuality.Good => Good,
            SignalQuality.Uncertain => Uncertain,
            SignalQuality.Bad => Bad,
            _ => throw new ArgumentOutOfRangeException(nameof(sample), sample.Quality, "Unknown quality."),
        });
        Count++;
    }

    /// <summary>Writes what is buffered to the stream and flushes it.</summary>
    public void Flush() => Flush(toDisk: true);

    public void Dispose()
    {
        Flush();
        if (!_leaveOpen)
        {
            _stream.Dispose();
        }
    }

    private void Flush(bool toDisk)
    {
        _stream.Write(_buffer, 0, _position);
        _position = 0;
        if (toDisk)
        {
            _stream.Flush();
        }
    }

    private void Append(byte[] bytes)
    {
        bytes.CopyTo(_buffer, _position);
        _position += bytes.Length;
    }
}
