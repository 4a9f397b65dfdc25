namespace Tieflow.Files;

/// <summary>
/// Reads a record CSV file line by line (streaming), checks its header, and splits each line into exactly the expected
/// number of plain fields; every problem names the file, the line and the column.
/// </summary>
internal sealed class CsvLines : IDisposable
{
    private readonly TextReader _reader;
    private readonly string[] _columns;
    private readonly Range[] _ranges;
    private string _line = string.Empty;

    public CsvLines(string path, string[] columns)
    {
        File = path;
        _columns = columns;
        _ranges = new Range[columns.Length + 1];
        if (!System.IO.File.Exists(path))
        {
            throw new InputException(path, "line 1", "the file does not exist");
        }

        try
        {
            _reader = new StreamReader(path, System.Text.Encoding.UTF8, detectEncodingFromByteOrderMarks: true, bufferSize: 1 << 16);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "line 1", $"the file cannot be read: {e.Message}");
        }

        string? header = ReadRaw();
        string expected = string.Join(',', columns);
        if (header is null)
        {
            throw Problem(1, "the file is empty; expected the header " + expected);
        }

        if (header.Trim() != expected)
        {
            throw Problem(1, $"expected the header \"{expected}\", found \"{Shorten(header)}\"");
        }
    }

    public string File { get; }

    /// <summary>1-based number of the line last read.</summary>
    public int LineNumber { get; private set; }

    /// <summary>Reads the next data line into fields; false at the end (blank lines are allowed only at the end).</summary>
    public bool Next()
    {
        string? line = ReadRaw();
        if (line is null)
        {
            return false;
        }

        if (line.Length == 0)
        {
            int blank = LineNumber;
            while ((line = ReadRaw()) is not null)
            {
                if (line.Length != 0)
                {
                    throw Problem(blank, "blank line inside the records; remove it");
                }
            }

            return false;
        }

        _line = line;
        int count = line.AsSpan().Split(_ranges, ',');
        if (count != _columns.Length)
        {
            throw Problem(LineNumber, $"expected {_columns.Length} fields ({string.Join(',', _columns)}), found {count}");
        }

        return true;
    }

    /// <summary>The text of field <paramref name="index"/> (0-based) of the current line.</summary>
    public ReadOnlySpan<char> Field(int index) => _line.AsSpan()[_ranges[index]];

    /// <summary>A problem at field <paramref name="index"/> of the current line, naming the column.</summary>
    public InputException FieldProblem(int index, string message) =>
        new(File, $"line {LineNumber}, column {Column(index)}", $"{_columns[index]}: {message}");

    public InputException Problem(int line, string message) => new(File, $"line {line}", message);

    public void Dispose() => _reader.Dispose();

    private int Column(int index) => _ranges[index].Start.GetOffset(_line.Length) + 1;

    private string? ReadRaw()
    {
        string? line = _reader.ReadLine();
        if (line is not null)
        {
            LineNumber++;
        }

        return line;
    }

    private static string Shorten(string s) => s.Length <= 60 ? s : s[..60] + "...";
}
