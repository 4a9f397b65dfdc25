using System.Globalization;
using System.Text;

namespace Tieflow.Storage.Points;

/// <summary>Escaping and parsing of InfluxDB line protocol tag sets and field sets.</summary>
public static class LineProtocol
{
    /// <summary>Appends a tag key, tag value or field key, escaping commas, equals signs and spaces (a backslash stays as it is).</summary>
    public static void AppendKey(StringBuilder s, string key)
    {
        foreach (char c in key)
        {
            switch (c)
            {
                case ',' or '=' or ' ':
                    s.Append('\\').Append(c);
                    break;
                case '\n' or '\r' or '\t':
                    // Line protocol cannot carry line breaks in keys; a space keeps the text readable.
                    s.Append("\\ ");
                    break;
                default:
                    s.Append(c);
                    break;
            }
        }
    }

    /// <summary>Appends a string field value (without the quotes), escaping quotes and backslashes; line breaks become spaces.</summary>
    public static void AppendStringValue(StringBuilder s, string value)
    {
        foreach (char c in value)
        {
            switch (c)
            {
                case '"' or '\\':
                    s.Append('\\').Append(c);
                    break;
                case '\n' or '\r':
                    s.Append(' ');
                    break;
                default:
                    s.Append(c);
                    break;
            }
        }
    }

    /// <summary>Reads a tag set (<c>site=a,unit=b</c>) back into key-value pairs, in order.</summary>
    public static IReadOnlyList<KeyValuePair<string, string>> ParseTags(string tags)
    {
        var result = new List<KeyValuePair<string, string>>();
        int i = 0;
        while (i < tags.Length)
        {
            string key = ReadEscaped(tags, ref i, '=');
            i++;
            string value = ReadEscaped(tags, ref i, ',');
            i++;
            result.Add(new(key, value));
        }

        return result;
    }

    /// <summary>Reads a field set back: numbers as <see cref="double"/> (integers too), strings as <see cref="string"/>.</summary>
    /// <exception cref="FormatException">Text that is not a field set of this store.</exception>
    public static IReadOnlyList<KeyValuePair<string, object>> ParseFields(string fields)
    {
        var result = new List<KeyValuePair<string, object>>();
        int i = 0;
        while (i < fields.Length)
        {
            string key = ReadEscaped(fields, ref i, '=');
            i++;
            if (i < fields.Length && fields[i] == '"')
            {
                var s = new StringBuilder();
                i++;
                while (i < fields.Length && fields[i] != '"')
                {
                    if (fields[i] == '\\' && i + 1 < fields.Length && fields[i + 1] is '"' or '\\')
                    {
                        i++;
                    }

                    s.Append(fields[i]);
                    i++;
                }

                i += 2; // closing quote and comma
                result.Add(new(key, s.ToString()));
                continue;
            }

            int end = fields.IndexOf(',', i);
            if (end < 0)
            {
                end = fields.Length;
            }

            ReadOnlySpan<char> number = fields.AsSpan(i, end - i);
            if (number.EndsWith("i"))
            {
                number = number[..^1];
            }

            if (!double.TryParse(number, NumberStyles.Float, CultureInfo.InvariantCulture, out double value))
            {
                throw new FormatException($"field {key} has the value '{number}', which is not a number");
            }

            result.Add(new(key, value));
            i = end + 1;
        }

        return result;
    }

    private static string ReadEscaped(string text, ref int i, char stop)
    {
        var s = new StringBuilder();
        while (i < text.Length && text[i] != stop)
        {
            if (text[i] == '\\' && i + 1 < text.Length && text[i + 1] is ',' or '=' or ' ')
            {
                i++;
            }

            s.Append(text[i]);
            i++;
        }

        return s.ToString();
    }
}
