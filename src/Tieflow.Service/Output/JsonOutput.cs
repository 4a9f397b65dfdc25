using System.Text;
using System.Text.Json;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;

namespace Tieflow.Service.Output;

/// <summary>Writes results as indented JSON in the shapes of docs/file-formats.md.</summary>
internal static class JsonOutput
{
    private static readonly JsonWriterOptions Options = new() { Indented = true };

    /// <summary>Runs <paramref name="write"/> on a writer and prints the document, with the advisory notice as a last member when it is an object.</summary>
    public static void Print(TextWriter output, Action<Utf8JsonWriter> write)
    {
        using var buffer = new MemoryStream();
        using (var writer = new Utf8JsonWriter(buffer, Options))
        {
            write(writer);
        }

        output.WriteLine(Encoding.UTF8.GetString(buffer.ToArray()));
    }

    /// <summary>Writes a number rounded by <see cref="Round"/>, or null when it is not finite: NaN and infinity never reach an output.</summary>
    public static void WriteNumber(Utf8JsonWriter w, string name, double value)
    {
        if (double.IsFinite(value))
        {
            w.WriteNumber(name, Round(value));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    public static void WriteNotice(Utf8JsonWriter w) => w.WriteString("notice", Notices.Advisory);

    /// <summary>The basis, units, system name and temperature of a result.</summary>
    public static void WriteContext(Utf8JsonWriter w, string systemName, TernarySystem system, double temperatureKelvin)
    {
        bool mass = system.Basis == CompositionBasis.Mass;
        w.WriteString("system", systemName);
        w.WriteString("basis", mass ? "mass" : "mole");
        w.WriteStartObject("units");
        w.WriteString("flow", system.FlowUnit);
        w.WriteString("composition", mass ? "mass fraction" : "mole fraction");
        w.WriteString("temperature", "K");
        w.WriteEndObject();
        w.WriteNumber("temperature", Round(temperatureKelvin));
    }

    /// <summary>Warnings as an array of { code, stage (null for the whole result), message }.</summary>
    public static void WriteWarnings(Utf8JsonWriter w, IReadOnlyList<CascadeWarning> warnings)
    {
        w.WriteStartArray("warnings");
        foreach (CascadeWarning warning in warnings)
        {
            w.WriteStartObject();
            w.WriteString("code", warning.Code);
            if (warning.Stage is int stage)
            {
                w.WriteNumber("stage", stage);
            }
            else
            {
                w.WriteNull("stage");
            }

            w.WriteString("message", warning.Message);
            w.WriteEndObject();
        }

        w.WriteEndArray();
    }

    public static void WriteStream(Utf8JsonWriter w, string name, MaterialStream stream, TernarySystem system)
    {
        w.WritePropertyName(name);
        WriteStream(w, stream, system);
    }

    public static void WriteStream(Utf8JsonWriter w, MaterialStream stream, TernarySystem system)
    {
        w.WriteStartObject();
        WriteNumber(w, "flow", stream.Flow);
        WriteComposition(w, "composition", stream.Composition, system);
        w.WriteEndObject();
    }

    public static void WriteComposition(Utf8JsonWriter w, string name, Ternary fractions, TernarySystem system)
    {
        w.WriteStartObject(name);
        for (int i = 0; i < 3; i++)
        {
            WriteNumber(w, system.Components[i].Id, fractions[i]);
        }

        w.WriteEndObject();
    }

    /// <summary>Twelve significant digits: enough for any check, without the noise of the last bits.</summary>
    public static double Round(double value) => double.IsFinite(value) && value != 0 ? double.Parse(value.ToString("G12", System.Globalization.CultureInfo.InvariantCulture), System.Globalization.CultureInfo.InvariantCulture) : value;
}
