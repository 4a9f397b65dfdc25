using System.Globalization;
using System.Text.Json;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.Service.Cli;

/// <summary>How the ua commands print OPC UA values: JSON values, ISO 8601 UTC times, status names.</summary>
internal static class UaJson
{
    public static readonly JsonWriterOptions Options = new() { Indented = false };

    /// <summary>ISO 8601 in UTC (<c>2026-03-02T08:00:00.25Z</c>), or null for an absent timestamp.</summary>
    public static string? Time(DateTime time) =>
        time == DateTime.MinValue ? null : time.ToUniversalTime().ToString("yyyy-MM-dd'T'HH:mm:ss.FFFFFFF'Z'", CultureInfo.InvariantCulture);

    /// <summary>The status name (<c>Good</c>, <c>BadSensorFailure</c>...) or its hex value when unknown.</summary>
    public static string Status(StatusCode status) => status.ToString();

    public static void WriteValue(Utf8JsonWriter writer, Variant value)
    {
        if (value.IsNull)
        {
            writer.WriteNullValue();
            return;
        }
        if (value.Value is Array array && value.Value is not byte[])
        {
            writer.WriteStartArray();
            foreach (var element in array)
            {
                WriteScalar(writer, element);
            }
            writer.WriteEndArray();
            return;
        }
        WriteScalar(writer, value.Value);
    }

    /// <summary>The value as text for the readable tables.</summary>
    public static string Text(Variant value) => value.IsNull ? "(null)" : value.Value switch
    {
        double d => d.ToString("R", CultureInfo.InvariantCulture),
        float f => f.ToString("R", CultureInfo.InvariantCulture),
        DateTime t => Time(t) ?? "(none)",
        Array a and not byte[] => "[" + string.Join(", ", a.Cast<object?>().Select(o => Convert.ToString(o, CultureInfo.InvariantCulture))) + "]",
        byte[] b => Convert.ToBase64String(b),
        var o => Convert.ToString(o, CultureInfo.InvariantCulture) ?? string.Empty,
    };

    private static void WriteScalar(Utf8JsonWriter writer, object? value)
    {
        switch (value)
        {
            case null:
                writer.WriteNullValue();
                break;
            case bool b:
                writer.WriteBooleanValue(b);
                break;
            case double d when double.IsFinite(d):
                writer.WriteNumberValue(d);
                break;
            case float f when float.IsFinite(f):
                writer.WriteNumberValue(f);
                break;
            case double or float:
                // JSON has no NaN or infinity: they travel as text.
                writer.WriteStringValue(Convert.ToString(value, CultureInfo.InvariantCulture));
                break;
            case sbyte or byte or short or ushort or int or uint or long:
                writer.WriteNumberValue(Convert.ToInt64(value, CultureInfo.InvariantCulture));
                break;
            case ulong u:
                writer.WriteNumberValue(u);
                break;
            case string s:
                writer.WriteStringValue(s);
                break;
            case DateTime t:
                writer.WriteStringValue(Time(t));
                break;
            case byte[] bytes:
                writer.WriteBase64StringValue(bytes);
                break;
            case LocalizedText text:
                writer.WriteStringValue(text.Text);
                break;
            default:
                writer.WriteStringValue(Convert.ToString(value, CultureInfo.InvariantCulture));
                break;
        }
    }
}
