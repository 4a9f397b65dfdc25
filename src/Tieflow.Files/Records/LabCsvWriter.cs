using Tieflow.Core.Monitoring;

namespace Tieflow.Files;

/// <summary>Writes a lab CSV (<c>sampled,reported,stream,component,value</c>) as results come; invariant culture, UTC times, round-trip numbers.</summary>
public sealed class LabCsvWriter : IDisposable
{
    public const string Header = "sampled,reported,stream,component,value";

    private readonly TextWriter _writer;
    private readonly bool _ownsWriter;

    /// <summary>Writes to a text writer (the header at once); the writer is left open on dispose.</summary>
    public LabCsvWriter(TextWriter writer)
        : this(writer, ownsWriter: false)
    {
    }

    private LabCsvWriter(TextWriter writer, bool ownsWriter)
    {
        ArgumentNullException.ThrowIfNull(writer);
        _writer = writer;
        _ownsWriter = ownsWriter;
        _writer.Write(Header);
        _writer.Write('\n');
    }

    /// <summary>Creates (or replaces) a file and writes the header.</summary>
    /// <exception cref="IOException">The file cannot be created.</exception>
    public static LabCsvWriter Create(string path) =>
        new(new StreamWriter(path, append: false, new System.Text.UTF8Encoding(false)), ownsWriter: true);

    /// <summary>Writes one result.</summary>
    /// <exception cref="ArgumentException">The stream or component cannot be written as a plain CSV field.</exception>
    public void Write(LabResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        if (!RecordFormat.IsPlainField(result.Stream) || !RecordFormat.IsPlainField(result.Component))
        {
            throw new ArgumentException($"stream \"{result.Stream}\" or component \"{result.Component}\" cannot be written to a lab CSV: empty, or holds a comma, quote, line break or surrounding blank", nameof(result));
        }

        _writer.Write(RecordFormat.Time(result.Sampled));
        _writer.Write(',');
        _writer.Write(RecordFormat.Time(result.Reported));
        _writer.Write(',');
        _writer.Write(result.Stream);
        _writer.Write(',');
        _writer.Write(result.Component);
        _writer.Write(',');
        _writer.Write(RecordFormat.Number(result.Value));
        _writer.Write('\n');
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
