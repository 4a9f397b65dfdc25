using System.Globalization;
using System.Text;
using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>
/// The one parser of history CSV lines (<c>time,tag,value,quality</c>), shared by the strict and the tolerant reader.
/// Works on the file's UTF-8 bytes: lines are found in a large buffer without making a string per line, a tag is
/// turned into its string once (later rows find it by its UTF-8 bytes, without decoding), a time repeated on consecutive
/// rows is parsed once, and the fixed forms the writer produces (<c>2026-03-02T08:00:00Z</c>, <c>...:00.25Z</c>; plain
/// decimals) take a fast path whose result is exactly the general parser's; everything else falls back to it.
/// </summary>
internal sealed class HistoryCsvParser : IDisposable
{
    public const string Header = "time,tag,value,quality";
    private const int BufferSize = 1 << 18;
    private const int MaxCachedTags = 100_000;
    private const int TagSlots = 1024;
    private static readonly string[] Columns = ["time", "tag", "value", "quality"];

    private readonly Stream _stream;
    private readonly byte[] _buffer = new byte[BufferSize];
    private readonly Dictionary<string, string> _tags = new(StringComparer.Ordinal);
    private readonly Dictionary<string, string>.AlternateLookup<ReadOnlySpan<char>> _tagLookup;
    private readonly char[] _chars = new char[256];

    // Tags seen, keyed by their UTF-8 bytes (open addressing on a hash of the bytes), so that a row's tag is found
    // without decoding it; filled up to half its slots, after which new tags take the decoding path above.
    private readonly byte[]?[] _tagBytes = new byte[]?[TagSlots];
    private readonly string?[] _tagStrings = new string?[TagSlots];
    private int _tagSlotsUsed;
    private readonly byte[] _lastTimeText = new byte[64];
    private int _lastTimeLength;
    private DateTimeOffset _lastTime;
    private int _start;
    private int _end;
    private bool _eof;
    private bool _tooLong;

    public HistoryCsvParser(string path)
    {
        File = path;
        _tagLookup = _tags.GetAlternateLookup<ReadOnlySpan<char>>();
        if (!System.IO.File.Exists(path))
        {
            throw new InputException(path, "line 1", "the file does not exist");
        }

        try
        {
            _stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, bufferSize: 1, FileOptions.SequentialScan);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "line 1", $"the file cannot be read: {e.Message}");
        }

        Fill();
        if (_end - _start >= 3 && _buffer[0] == 0xEF && _buffer[1] == 0xBB && _buffer[2] == 0xBF)
        {
            _start = 3;
        }

        if (!ReadLine(out ReadOnlySpan<byte> header))
        {
            throw new InputException(path, "line 1", "the file is empty; expected the header " + Header);
        }

        if (_tooLong || !header.Trim(" \t"u8).SequenceEqual("time,tag,value,quality"u8))
        {
            string found = _tooLong ? "a line longer than the read buffer" : Encoding.UTF8.GetString(header.Length <= 60 ? header : header[..60]) + (header.Length > 60 ? "..." : string.Empty);
            throw new InputException(path, "line 1", $"expected the header \"{Header}\", found \"{found}\"");
        }
    }

    /// <summary>The outcome of reading one line.</summary>
    public enum Outcome
    {
        /// <summary>A record.</summary>
        Row,

        /// <summary>A line that is not a record (see the problem).</summary>
        Bad,

        /// <summary>An empty line.</summary>
        Blank,

        /// <summary>The end of the file.</summary>
        End,
    }

    public string File { get; }

    /// <summary>1-based number of the line last read.</summary>
    public long LineNumber { get; private set; }

    /// <summary>Reads the next line: a record, a bad line (with its problem), a blank line, or the end.</summary>
    /// <param name="sample">The record, when the outcome is <see cref="Outcome.Row"/>.</param>
    /// <param name="problem">The problem, when the outcome is <see cref="Outcome.Bad"/>.</param>
    public Outcome Next(out SignalSample sample, out LineProblem problem)
    {
        sample = default;
        problem = default;
        if (!ReadLine(out ReadOnlySpan<byte> line))
        {
            return Outcome.End;
        }

        if (_tooLong)
        {
            problem = new LineProblem(0, $"the line is longer than {BufferSize} bytes");
            return Outcome.Bad;
        }

        if (line.Length == 0)
        {
            return Outcome.Blank;
        }

        return Parse(line, out sample, out problem) ? Outcome.Row : Outcome.Bad;
    }

    /// <summary>Where a problem of the current line is, as a location for <see cref="InputException"/>.</summary>
    public string Location(LineProblem problem) => problem.Column > 0 ? $"line {LineNumber}, column {problem.Column}" : $"line {LineNumber}";

    public void Dispose() => _stream.Dispose();

    private bool Parse(ReadOnlySpan<byte> line, out SignalSample sample, out LineProblem problem)
    {
        sample = default;
        int c1 = line.IndexOf((byte)',');
        int c2 = c1 < 0 ? -1 : line[(c1 + 1)..].IndexOf((byte)',');
        c2 = c2 < 0 ? -1 : c1 + 1 + c2;
        int c3 = c2 < 0 ? -1 : line[(c2 + 1)..].IndexOf((byte)',');
        c3 = c3 < 0 ? -1 : c2 + 1 + c3;
        if (c3 < 0 || line[(c3 + 1)..].Contains((byte)','))
        {
            int found = Math.Min(line.Count((byte)',') + 1, Columns.Length + 1);
            problem = new LineProblem(0, $"expected {Columns.Length} fields ({string.Join(',', Columns)}), found {found}");
            return false;
        }

        ReadOnlySpan<byte> timeText = line[..c1], tagText = line[(c1 + 1)..c2], valueText = line[(c2 + 1)..c3], qualityText = line[(c3 + 1)..];
        if (!ParseTime(timeText, out DateTimeOffset time))
        {
            problem = Field(0, 0, $"expected an ISO 8601 UTC time such as 2026-03-02T08:00:00Z, found \"{Text(timeText)}\"");
            return false;
        }

        string? tag = Tag(tagText);
        if (tag is null)
        {
            problem = Field(1, c1 + 1, "expected a tag without surrounding blanks");
            return false;
        }

        if (!ParseNumber(valueText, out double value))
        {
            problem = Field(2, c2 + 1, $"expected a number (invariant culture, '.' as the decimal point), found \"{Text(valueText)}\"");
            return false;
        }

        SignalQuality quality;
        if (qualityText.SequenceEqual("good"u8))
        {
            quality = SignalQuality.Good;
        }
        else if (qualityText.SequenceEqual("uncertain"u8))
        {
            quality = SignalQuality.Uncertain;
        }
        else if (qualityText.SequenceEqual("bad"u8))
        {
            quality = SignalQuality.Bad;
        }
        else
        {
            problem = Field(3, c3 + 1, $"expected good, uncertain or bad, found \"{Text(qualityText)}\"");
            return false;
        }

        if (quality != SignalQuality.Bad && !double.IsFinite(value))
        {
            problem = Field(2, c2 + 1, $"a {Text(qualityText)} reading must be a finite number, found \"{Text(valueText)}\"");
            return false;
        }

        problem = default;
        sample = new SignalSample(tag, time, value, quality);
        return true;
    }

    private static LineProblem Field(int index, int offset, string message) => new(offset + 1, $"{Columns[index]}: {message}");

    private static string Text(ReadOnlySpan<byte> bytes) => Encoding.UTF8.GetString(bytes.Length <= 80 ? bytes : bytes[..80]) + (bytes.Length > 80 ? "..." : string.Empty);

    private string? Tag(ReadOnlySpan<byte> bytes)
    {
        // The same bytes always decode to the same text, so a tag found by its bytes is the one decoding would give.
        uint hash = 2166136261;
        foreach (byte b in bytes)
        {
            hash = (hash ^ b) * 16777619;
        }

        int slot = (int)(hash & (TagSlots - 1));
        while (_tagBytes[slot] is { } known)
        {
            if (bytes.SequenceEqual(known))
            {
                return _tagStrings[slot];
            }

            slot = (slot + 1) & (TagSlots - 1);
        }

        string? tag = DecodeTag(bytes);
        if (tag is not null && bytes.Length <= _chars.Length && _tagSlotsUsed < TagSlots / 2)
        {
            _tagBytes[slot] = bytes.ToArray();
            _tagStrings[slot] = tag;
            _tagSlotsUsed++;
        }

        return tag;
    }

    private string? DecodeTag(ReadOnlySpan<byte> bytes)
    {
        if (bytes.Length > _chars.Length)
        {
            // Longer than any tag the writer accepts: checked and made each time (such a file is not the common case).
            string text = Encoding.UTF8.GetString(bytes);
            return IsTag(text) ? text : null;
        }

        int n = Encoding.UTF8.GetChars(bytes, _chars);
        ReadOnlySpan<char> chars = _chars.AsSpan(0, n);
        if (_tagLookup.TryGetValue(chars, out string? tag))
        {
            return tag;
        }

        if (!IsTag(chars))
        {
            return null;
        }

        tag = chars.ToString();
        if (_tags.Count < MaxCachedTags)
        {
            // One string per tag, so that a long file does not allocate a tag per record (bounded, so that a file of
            // endless distinct tags cannot grow the cache with its length).
            _tags[tag] = tag;
        }

        return tag;
    }

    private static bool IsTag(ReadOnlySpan<char> text) => !text.IsWhiteSpace() && text.Length == text.Trim().Length;

    /// <summary>Parses a time: the writer's fixed UTC form exactly and fast, any other form by the general parser.</summary>
    private bool ParseTime(ReadOnlySpan<byte> text, out DateTimeOffset time)
    {
        if (text.Length == _lastTimeLength && text.SequenceEqual(_lastTimeText.AsSpan(0, _lastTimeLength)))
        {
            time = _lastTime;
            return true;
        }

        if (!TryParseFixedTime(text, out time))
        {
            if (text.Length > _chars.Length)
            {
                return false;
            }

            int n = Encoding.UTF8.GetChars(text, _chars);
            if (RecordFormat.ParseTime(_chars.AsSpan(0, n)) is not { } general)
            {
                return false;
            }

            time = general;
        }

        if (text.Length <= _lastTimeText.Length)
        {
            text.CopyTo(_lastTimeText);
            _lastTimeLength = text.Length;
            _lastTime = time;
        }

        return true;
    }

    /// <summary><c>yyyy-MM-ddTHH:mm:ss[.f{1,7}]Z</c>; false for anything else (which then goes to the general parser).</summary>
    internal static bool TryParseFixedTime(ReadOnlySpan<byte> t, out DateTimeOffset time)
    {
        time = default;
        if (t.Length < 20 || t.Length == 21 || t.Length > 28 || t[^1] != (byte)'Z'
            || t[4] != (byte)'-' || t[7] != (byte)'-' || t[10] != (byte)'T' || t[13] != (byte)':' || t[16] != (byte)':')
        {
            return false;
        }

        if (!Digits(t, 0, 4, out int year) || !Digits(t, 5, 2, out int month) || !Digits(t, 8, 2, out int day)
            || !Digits(t, 11, 2, out int hour) || !Digits(t, 14, 2, out int minute) || !Digits(t, 17, 2, out int second))
        {
            return false;
        }

        long fraction = 0;
        if (t.Length > 20)
        {
            int digits = t.Length - 21;
            if (t[19] != (byte)'.' || !Digits(t, 20, digits, out int f))
            {
                return false;
            }

            fraction = f;
            for (int i = digits; i < 7; i++)
            {
                fraction *= 10;
            }
        }

        if (year < 1 || month < 1 || month > 12 || day < 1 || day > DateTime.DaysInMonth(year, month) || hour > 23 || minute > 59 || second > 59)
        {
            return false;
        }

        long ticks = new DateTime(year, month, day, hour, minute, second, DateTimeKind.Utc).Ticks + fraction;
        time = new DateTimeOffset(ticks, TimeSpan.Zero);
        return true;
    }

    private static bool Digits(ReadOnlySpan<byte> t, int start, int count, out int value)
    {
        value = 0;
        for (int i = start; i < start + count; i++)
        {
            int d = t[i] - '0';
            if ((uint)d > 9)
            {
                return false;
            }

            value = (value * 10) + d;
        }

        return true;
    }

    private static readonly double[] PowersOfTen =
    [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
    ];

    /// <summary>
    /// Parses a number. Plain decimals (<c>-12.375</c>) whose digits fit in 2^53 and that have at most 22 decimals are
    /// an exact integer divided by an exact power of ten: one correctly rounded division, which is the same double the
    /// general (correctly rounding) parser gives. Everything else goes to the general parser.
    /// </summary>
    internal static bool ParseNumber(ReadOnlySpan<byte> text, out double value)
    {
        int i = 0;
        bool negative = false;
        if (text.Length > 0 && text[0] == (byte)'-')
        {
            negative = true;
            i = 1;
        }

        ulong mantissa = 0;
        int digits = 0, decimals = 0;
        bool point = false, fast = true;
        for (; i < text.Length; i++)
        {
            int d = text[i] - '0';
            if ((uint)d <= 9)
            {
                if (digits >= 16)
                {
                    fast = false;
                    break;
                }

                mantissa = (mantissa * 10) + (uint)d;
                if (mantissa != 0)
                {
                    digits++;
                }

                if (point)
                {
                    decimals++;
                }
            }
            else if (text[i] == (byte)'.' && !point)
            {
                point = true;
            }
            else
            {
                fast = false;
                break;
            }
        }

        int length = text.Length - (negative ? 1 : 0) - (point ? 1 : 0);
        if (fast && length > 0 && mantissa <= (1UL << 53) && decimals <= 22)
        {
            double v = decimals == 0 ? mantissa : mantissa / PowersOfTen[decimals];
            value = negative ? -v : v;
            return true;
        }

        return double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out value);
    }

    /// <summary>The next line without its line break (LF or CRLF); false at the end of the file.</summary>
    private bool ReadLine(out ReadOnlySpan<byte> line)
    {
        _tooLong = false;
        int searched = 0;
        while (true)
        {
            int nl = _buffer.AsSpan(_start + searched, _end - _start - searched).IndexOf((byte)'\n');
            if (nl >= 0)
            {
                int length = searched + nl;
                line = _buffer.AsSpan(_start, length);
                _start += length + 1;
                LineNumber++;
                if (line.Length > 0 && line[^1] == (byte)'\r')
                {
                    line = line[..^1];
                }

                return true;
            }

            if (_eof)
            {
                if (_start < _end)
                {
                    line = _buffer.AsSpan(_start, _end - _start);
                    _start = _end;
                    LineNumber++;
                    if (line[^1] == (byte)'\r')
                    {
                        line = line[..^1];
                    }

                    return true;
                }

                line = default;
                return false;
            }

            searched = _end - _start;
            if (_start == 0 && _end == _buffer.Length)
            {
                // A line longer than the buffer: skip to its end and report it as one bad line.
                SkipLongLine();
                LineNumber++;
                _tooLong = true;
                line = default;
                return true;
            }

            Fill();
        }
    }

    private void SkipLongLine()
    {
        while (true)
        {
            _start = _end = 0;
            Fill();
            int nl = _buffer.AsSpan(0, _end).IndexOf((byte)'\n');
            if (nl >= 0)
            {
                _start = nl + 1;
                return;
            }

            if (_eof)
            {
                _start = _end;
                return;
            }
        }
    }

    private void Fill()
    {
        if (_start > 0)
        {
            _buffer.AsSpan(_start, _end - _start).CopyTo(_buffer);
            _end -= _start;
            _start = 0;
        }

        while (_end < _buffer.Length && !_eof)
        {
            int n = _stream.Read(_buffer, _end, _buffer.Length - _end);
            if (n == 0)
            {
                _eof = true;
            }

            _end += n;
            if (n > 0)
            {
                return;
            }
        }
    }
}

/// <summary>A problem of one history line: the 1-based column (0 for the whole line) and what is wrong.</summary>
internal readonly record struct LineProblem(int Column, string Message);
