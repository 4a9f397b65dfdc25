using System.Text;

namespace Tieflow.Service.Cli;

/// <summary>
/// Passes text through to another writer without the spaces and tabs at the end of each line (tables pad their last
/// column). Whitespace is held back until a character other than a line end follows it, so nothing is reordered.
/// </summary>
internal sealed class TrimmingWriter(TextWriter inner) : TextWriter
{
    private readonly StringBuilder _pending = new();

    public override Encoding Encoding => inner.Encoding;

    public override void Write(char value)
    {
        switch (value)
        {
            case ' ' or '\t':
                _pending.Append(value);
                break;
            case '\n' or '\r':
                _pending.Clear();
                inner.Write(value);
                break;
            default:
                if (_pending.Length > 0)
                {
                    inner.Write(_pending.ToString());
                    _pending.Clear();
                }

                inner.Write(value);
                break;
        }
    }

    public override void Write(string? value)
    {
        if (value is null)
        {
            return;
        }

        foreach (char c in value)
        {
            Write(c);
        }
    }

    public override void Write(char[] buffer, int index, int count)
    {
        for (int i = index; i < index + count; i++)
        {
            Write(buffer[i]);
        }
    }

    public override void Flush() => inner.Flush();
}
