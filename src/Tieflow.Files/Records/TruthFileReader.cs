using System.Text.Json;
using Tieflow.Core.Scenarios;

namespace Tieflow.Files;

/// <summary>
/// Reads a truth file in either form: <c>{ "faults", "samples" }</c> for one unit, or
/// <c>{ "units": { "&lt;id&gt;": { "faults", "samples" } } }</c>. Strict, with every problem listed by file and JSON path.
/// A number written as null (a value the simulator could not compute) reads as NaN.
/// </summary>
public static class TruthFileReader
{
    private static readonly string[] Kinds = Enum.GetValues<FaultKind>().Select(Fault.KindName).ToArray();

    /// <exception cref="InputException">The file is missing, not JSON, or not a truth file.</exception>
    public static TruthFile Load(string path)
    {
        using JsonDocument doc = JsonInputFile.Load(path);
        var problems = new InputProblems();
        TruthFile? file = Read(new JsonValue(doc.RootElement, path, "$", problems));
        problems.ThrowIfAny();
        return file!;
    }

    public static TruthFile? Read(JsonValue value)
    {
        if (value.Kind == JsonValueKind.Object && value.Element.TryGetProperty("units", out _))
        {
            JsonObject? root = value.AsObject("units");
            if (root?.Get("units") is not { } unitsValue)
            {
                return null;
            }

            if (unitsValue.Kind != JsonValueKind.Object)
            {
                unitsValue.Fail($"expected an object of units by id, found {JsonValue.Describe(unitsValue.Element)}");
                return null;
            }

            // Unit ids are free keys, so the object is not read with a list of allowed keys.
            var u = new JsonObject(unitsValue);

            var result = new Dictionary<string, UnitTruth>(StringComparer.Ordinal);
            foreach ((string id, JsonValue unit) in u.Members())
            {
                if (ReadUnit(unit) is { } truth)
                {
                    result[id] = truth;
                }
            }

            if (result.Count == 0 && !value.Problems.Any)
            {
                u.Fail("expected at least one unit");
            }

            return value.Problems.Any ? null : new TruthFile(result, IsSingleUnitForm: false);
        }

        UnitTruth? single = ReadUnit(value);
        return single is null || value.Problems.Any ? null : new TruthFile(new Dictionary<string, UnitTruth> { [TruthFile.SingleUnitKey] = single }, IsSingleUnitForm: true);
    }

    private static UnitTruth? ReadUnit(JsonValue value)
    {
        JsonObject? o = value.AsObject("faults", "samples");
        if (o is not { } unit)
        {
            return null;
        }

        var faults = new List<TruthFault>();
        foreach (JsonValue f in unit.Get("faults")?.AsArray() ?? [])
        {
            if (ReadFault(f) is { } fault)
            {
                faults.Add(fault);
            }
        }

        var samples = new List<TruthSample>();
        DateTimeOffset? previous = null;
        foreach (JsonValue s in unit.Get("samples")?.AsArray() ?? [])
        {
            if (ReadSample(s) is { } sample)
            {
                if (previous is { } p && sample.Time <= p)
                {
                    s.Fail($"samples must be in time order; {RecordFormat.Time(sample.Time)} does not follow {RecordFormat.Time(p)}");
                }

                previous = sample.Time;
                samples.Add(sample);
            }
        }

        return new UnitTruth(faults, samples);
    }

    private static TruthFault? ReadFault(JsonValue value)
    {
        JsonObject? o = value.AsObject("kind", "stage", "tag", "start", "end");
        if (o is not { } f)
        {
            return null;
        }

        string? kindText = f.Get("kind")?.AsChoice(Kinds);
        int? stage = f.Get("stage", required: false) is { } s && s.Kind != JsonValueKind.Null ? s.AsInteger(1) : null;
        string? tag = f.Get("tag", required: false) is { } t && t.Kind != JsonValueKind.Null ? t.AsString() : null;
        DateTimeOffset? start = f.Get("start") is { } st ? Time(st) : null;
        DateTimeOffset? end = f.Get("end", required: false) is { } e && e.Kind != JsonValueKind.Null ? Time(e) : null;
        if (start is { } a && end is { } b && b < a)
        {
            f.Fail("end", "a fault cannot end before it starts");
        }

        return kindText is null || start is null ? null : new TruthFault(TruthFileWriter.ParseKind(kindText)!.Value, stage, tag, start.Value, end);
    }

    private static TruthSample? ReadSample(JsonValue value)
    {
        JsonObject? o = value.AsObject("time", "stageEfficiency", "raffinateSolute", "entrainment", "solventLossRate", "theoreticalStages");
        if (o is not { } s)
        {
            return null;
        }

        DateTimeOffset? time = s.Get("time") is { } t ? Time(t) : null;
        double[]? efficiency = Numbers(s.Get("stageEfficiency"));
        double? raffinate = s.Get("raffinateSolute") is { } r ? Number(r) : null;
        double[]? entrainment = Numbers(s.Get("entrainment"));
        double? loss = s.Get("solventLossRate") is { } l ? Number(l) : null;
        double? stages = s.Get("theoreticalStages", required: false) is { } n ? Number(n) : null;
        if (efficiency is not null && entrainment is not null && efficiency.Length != entrainment.Length)
        {
            s.Fail("entrainment", $"expected one value per stage ({efficiency.Length}, as stageEfficiency), found {entrainment.Length}");
        }

        return time is null || efficiency is null || raffinate is null || entrainment is null || loss is null
            ? null
            : new TruthSample(time.Value, efficiency, raffinate.Value, entrainment, loss.Value, stages is double v && double.IsNaN(v) ? null : stages);
    }

    private static double[]? Numbers(JsonValue? value)
    {
        if (value?.AsArray(1) is not { } items)
        {
            return null;
        }

        var result = new double[items.Count];
        for (int i = 0; i < items.Count; i++)
        {
            if (Number(items[i]) is not double v)
            {
                return null;
            }

            result[i] = v;
        }

        return result;
    }

    private static double? Number(JsonValue value) => value.Kind == JsonValueKind.Null ? double.NaN : value.AsNumber();

    private static DateTimeOffset? Time(JsonValue value)
    {
        string? text = value.AsString();
        if (text is null)
        {
            return null;
        }

        DateTimeOffset? t = RecordFormat.ParseTime(text);
        if (t is null)
        {
            value.Fail($"expected an ISO 8601 UTC time such as 2026-03-02T08:00:00Z, found \"{text}\"");
        }

        return t;
    }
}
