using System.Text.Json;
using Tieflow.Core.Scenarios;

namespace Tieflow.Files;

/// <summary>
/// Writes a truth file as the samples come. One unit: the single-unit form
/// <c>{ "faults": [...], "samples": [...] }</c> straight to the file. Several units: the form
/// <c>{ "units": { "&lt;id&gt;": { ... } } }</c>, each unit's samples spooled to a temporary file beside the target
/// and joined on <see cref="Complete"/>, so that memory stays flat in the length of the run.
/// Times are ISO 8601 UTC, numbers round-trip; a non-finite number is written as null.
/// </summary>
public sealed class TruthFileWriter : IDisposable
{
    private static readonly JsonWriterOptions Options = new() { Indented = false, SkipValidation = false };
    private static readonly byte[] SampleSeparator = ",\n"u8.ToArray();

    private readonly string _path;
    private readonly IReadOnlyList<(string UnitId, IReadOnlyList<TruthFault> Faults)> _units;
    private readonly Dictionary<string, Spool> _spools = new(StringComparer.Ordinal);
    private bool _completed;

    private TruthFileWriter(string path, IReadOnlyList<(string UnitId, IReadOnlyList<TruthFault> Faults)> units)
    {
        _path = path;
        _units = units;
        bool single = units.Count == 1;
        foreach ((string id, _) in units)
        {
            string file = single ? path : $"{path}.{_spools.Count}.part";
            _spools.Add(id, new Spool(file, new FileStream(file, FileMode.Create, FileAccess.Write, FileShare.None, 1 << 16)));
        }

        if (single)
        {
            Spool s = _spools[units[0].UnitId];
            s.Stream.Write("{\"faults\":"u8);
            WriteFaults(s.Stream, units[0].Faults);
            s.Stream.Write(",\n\"samples\":[\n"u8);
        }
    }

    /// <summary>Creates (or replaces) a truth file for the given units and their faults (absolute times).</summary>
    /// <exception cref="ArgumentException">No unit, or a unit id repeated.</exception>
    /// <exception cref="IOException">The file cannot be created.</exception>
    public static TruthFileWriter Create(string path, IReadOnlyList<(string UnitId, IReadOnlyList<TruthFault> Faults)> units)
    {
        ArgumentNullException.ThrowIfNull(path);
        ArgumentNullException.ThrowIfNull(units);
        if (units.Count == 0 || units.Select(u => u.UnitId).Distinct(StringComparer.Ordinal).Count() != units.Count)
        {
            throw new ArgumentException("expected at least one unit, each id once", nameof(units));
        }

        return new TruthFileWriter(path, units);
    }

    /// <summary>The contract's text of a fault kind, and back.</summary>
    public static FaultKind? ParseKind(string text)
    {
        foreach (FaultKind kind in Enum.GetValues<FaultKind>())
        {
            if (Fault.KindName(kind) == text)
            {
                return kind;
            }
        }

        return null;
    }

    /// <summary>Writes one sample of a unit (samples of each unit in time order).</summary>
    public void Write(string unitId, TruthSample sample)
    {
        ArgumentNullException.ThrowIfNull(sample);
        ObjectDisposedException.ThrowIf(_completed, this);
        if (!_spools.TryGetValue(unitId, out Spool? spool))
        {
            throw new ArgumentException($"unit '{unitId}' was not given when the truth file was created", nameof(unitId));
        }

        if (spool.Count > 0)
        {
            spool.Stream.Write(SampleSeparator);
        }

        using (var w = new Utf8JsonWriter(spool.Stream, Options))
        {
            w.WriteStartObject();
            w.WriteString("time", RecordFormat.Time(sample.Time));
            WriteArray(w, "stageEfficiency", sample.StageEfficiency);
            WriteNumber(w, "raffinateSolute", sample.RaffinateSolute);
            WriteArray(w, "entrainment", sample.Entrainment);
            WriteNumber(w, "solventLossRate", sample.SolventLossRate);
            if (sample.TheoreticalStages is double n)
            {
                WriteNumber(w, "theoreticalStages", n);
            }

            w.WriteEndObject();
        }

        spool.Count++;
    }

    /// <summary>Finishes the file (joins the spooled units); nothing may be written after.</summary>
    public void Complete()
    {
        if (_completed)
        {
            return;
        }

        _completed = true;
        if (_units.Count == 1)
        {
            Spool s = _spools[_units[0].UnitId];
            s.Stream.Write("\n]}\n"u8);
            s.Stream.Dispose();
            return;
        }

        foreach (Spool s in _spools.Values)
        {
            s.Stream.Dispose();
        }

        using (var output = new FileStream(_path, FileMode.Create, FileAccess.Write, FileShare.None, 1 << 16))
        {
            output.Write("{\"units\":{\n"u8);
            for (int i = 0; i < _units.Count; i++)
            {
                (string id, IReadOnlyList<TruthFault> faults) = _units[i];
                if (i > 0)
                {
                    output.Write(",\n"u8);
                }

                using (var w = new Utf8JsonWriter(output, Options))
                {
                    w.WriteStringValue(id);
                }

                output.Write(":{\"faults\":"u8);
                WriteFaults(output, faults);
                output.Write(",\n\"samples\":[\n"u8);
                using (FileStream part = File.OpenRead(_spools[id].File))
                {
                    part.CopyTo(output);
                }

                output.Write("\n]}"u8);
            }

            output.Write("\n}}\n"u8);
        }

        foreach (Spool s in _spools.Values)
        {
            File.Delete(s.File);
        }
    }

    public void Dispose()
    {
        if (!_completed)
        {
            // An unfinished run (stopped early) still leaves a readable file with the samples so far.
            Complete();
        }
    }

    private static void WriteFaults(Stream stream, IReadOnlyList<TruthFault> faults)
    {
        using var w = new Utf8JsonWriter(stream, Options);
        w.WriteStartArray();
        foreach (TruthFault f in faults)
        {
            w.WriteStartObject();
            w.WriteString("kind", Fault.KindName(f.Kind));
            if (f.Stage is int stage)
            {
                w.WriteNumber("stage", stage);
            }
            else
            {
                w.WriteNull("stage");
            }

            if (f.Tag is string tag)
            {
                w.WriteString("tag", tag);
            }
            else
            {
                w.WriteNull("tag");
            }

            w.WriteString("start", RecordFormat.Time(f.Start));
            if (f.End is DateTimeOffset end)
            {
                w.WriteString("end", RecordFormat.Time(end));
            }
            else
            {
                w.WriteNull("end");
            }

            w.WriteEndObject();
        }

        w.WriteEndArray();
    }

    private static void WriteArray(Utf8JsonWriter w, string name, IReadOnlyList<double> values)
    {
        w.WriteStartArray(name);
        foreach (double v in values)
        {
            if (double.IsFinite(v))
            {
                w.WriteNumberValue(v);
            }
            else
            {
                w.WriteNullValue();
            }
        }

        w.WriteEndArray();
    }

    private static void WriteNumber(Utf8JsonWriter w, string name, double value)
    {
        if (double.IsFinite(value))
        {
            w.WriteNumber(name, value);
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private sealed class Spool(string file, FileStream stream)
    {
        public string File { get; } = file;

        public FileStream Stream { get; } = stream;

        public long Count { get; set; }
    }
}
