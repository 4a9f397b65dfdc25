using System.Globalization;
using System.Text.Json;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Files;

/// <summary>
/// Reads simulator scenario files strictly: the plant file they name (relative to the scenario file), the time span,
/// the seed, the faults and the disturbances, with every problem collected with its file and JSON path.
/// </summary>
public static class ScenarioReader
{
    private static readonly string[] Kinds = ["stage-efficiency", "entrainment", "solvent-loss", "sensor-bias", "sensor-drift", "sensor-stuck", "signal-bad", "signal-frozen"];
    private static readonly string[] DisturbanceKinds = ["feed-flow", "feed-solute", "solvent-flow", "temperature"];

    /// <summary>Reads and validates a scenario file and the plant file it names.</summary>
    /// <param name="path">The scenario file.</param>
    /// <exception cref="InputException">With every problem found.</exception>
    public static Scenario Load(string path)
    {
        using JsonDocument doc = JsonInputFile.Load(path);
        var problems = new InputProblems();
        Scenario? scenario = Read(new JsonValue(doc.RootElement, path, "$", problems));
        problems.ThrowIfAny();
        return scenario!;
    }

    /// <summary>Reads a scenario from a whole file's root value; null (with problems recorded) when it is not valid.</summary>
    /// <param name="root">The root value.</param>
    public static Scenario? Read(JsonValue root)
    {
        if (root.AsObject("plant", "start", "duration", "step", "seed", "faults", "disturbances", "lab") is not { } o)
        {
            return null;
        }

        PlantDescription? plant = o.Get("plant") is { } pv ? ReadPlant(pv) : null;
        DateTimeOffset? start = o.Get("start") is { } sv ? ReadTime(sv) : null;
        TimeSpan? duration = o.Get("duration")?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(3660), minExclusive: true);
        TimeSpan? step = o.Get("step")?.AsDuration(TimeSpan.FromMilliseconds(10), TimeSpan.FromHours(1));
        if (step is { } st && duration is { } du && st > du)
        {
            o.Fail("step", $"the step {JsonDuration.Format(st)} is longer than the run {JsonDuration.Format(du)}");
        }

        int? seed = o.Get("seed")?.AsInteger();
        var faults = new List<Fault>();
        if (o.Get("faults", required: false)?.AsArray() is { } fs)
        {
            foreach (JsonValue f in fs)
            {
                if (ReadFault(f, plant, duration) is { } fault)
                {
                    faults.Add(fault);
                }
            }
        }

        var disturbances = new List<Disturbance>();
        if (o.Get("disturbances", required: false)?.AsArray() is { } ds)
        {
            foreach (JsonValue d in ds)
            {
                if (ReadDisturbance(d, plant, duration) is { } disturbance)
                {
                    disturbances.Add(disturbance);
                }
            }
        }

        LabSchedule? lab = null;
        if (o.Get("lab", required: false) is { } lv && lv.AsObject("interval", "delay", "sigma") is { } lo)
        {
            TimeSpan? interval = lo.Get("interval")?.AsDuration(TimeSpan.FromMinutes(1), TimeSpan.FromDays(30));
            TimeSpan? delay = lo.Get("delay")?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(30));
            double? sigma = lo.Get("sigma")?.AsNumber(0, 0.5, unit: "(standard deviation of a lab result, a fraction on the plant's basis)");
            lab = interval is null || delay is null || sigma is null ? null : new LabSchedule(interval.Value, delay.Value, sigma.Value);
        }

        if (o.Problems.Any || plant is null || start is null || duration is null || step is null || seed is null)
        {
            return null;
        }

        return new Scenario
        {
            Plant = plant,
            Start = start.Value,
            Duration = duration.Value,
            Step = step.Value,
            Seed = seed.Value,
            Faults = faults,
            Disturbances = disturbances,
            Lab = lab,
        };
    }

    /// <summary>Reads an ISO 8601 time with an explicit UTC designator or offset, as UTC.</summary>
    /// <param name="value">The JSON value.</param>
    public static DateTimeOffset? ReadTime(JsonValue value)
    {
        if (value.AsString() is not { } text)
        {
            return null;
        }

        bool zoned = text.EndsWith('Z') || (text.Length > 6 && (text[^6] == '+' || text[^6] == '-') && text[^3] == ':');
        if (!zoned || !DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal, out DateTimeOffset t))
        {
            value.Fail($"'{text}' is not an ISO 8601 time in UTC; expected for example \"2026-03-02T08:00:00Z\"");
            return null;
        }

        return t.ToUniversalTime();
    }

    private static PlantDescription? ReadPlant(JsonValue value)
    {
        if (value.AsString() is not { } relative)
        {
            return null;
        }

        string baseDir = Path.GetDirectoryName(Path.GetFullPath(value.File)) ?? ".";
        string full = Path.GetFullPath(Path.Combine(baseDir, relative));
        if (!File.Exists(full))
        {
            value.Fail($"the plant file '{relative}' does not exist (looked for {full}); the path is relative to the scenario file");
            return null;
        }

        try
        {
            return PlantReader.Load(full);
        }
        catch (InputException e)
        {
            foreach (InputProblem p in e.Problems)
            {
                value.Problems.Add(p.File, p.JsonPath, p.Message);
            }

            return null;
        }
    }

    private static UnitDescription? ReadUnit(JsonObject o, PlantDescription? plant, bool allowFromTag)
    {
        if (plant is null)
        {
            return null;
        }

        if (o.Get("unit", required: false) is { } uv)
        {
            if (uv.AsString() is not { } id)
            {
                return null;
            }

            UnitDescription? unit = plant.FindUnit(id);
            if (unit is null)
            {
                uv.Fail($"unknown unit \"{id}\"; the plant has {string.Join(", ", plant.Units.Select(u => $"\"{u.Id}\""))}");
            }

            return unit;
        }

        if (plant.Units.Count == 1)
        {
            return plant.Units[0];
        }

        if (!allowFromTag)
        {
            o.Fail($"the plant has {plant.Units.Count} units; name the one this applies to with \"unit\" ({string.Join(", ", plant.Units.Select(u => $"\"{u.Id}\""))})");
        }

        return null;
    }

    private static Fault? ReadFault(JsonValue value, PlantDescription? plant, TimeSpan? duration)
    {
        if (value.Kind != JsonValueKind.Object || !value.Element.TryGetProperty("kind", out JsonElement kindElement))
        {
            value.AsObject("kind")?.Get("kind");
            return null;
        }

        string? kindText = new JsonValue(kindElement, value.File, value.Path + ".kind", value.Problems).AsChoice(Kinds);
        string[] keys = kindText switch
        {
            "stage-efficiency" => ["kind", "unit", "stage", "start", "ramp", "value"],
            "entrainment" => ["kind", "unit", "stage", "start", "end", "fraction", "carried"],
            "solvent-loss" => ["kind", "unit", "start", "end", "fraction"],
            "sensor-bias" => ["kind", "unit", "tag", "start", "end", "bias"],
            "sensor-drift" => ["kind", "unit", "tag", "start", "end", "perHour"],
            "sensor-stuck" => ["kind", "unit", "tag", "start", "end"],
            "signal-bad" or "signal-frozen" => ["kind", "unit", "tag", "start", "end"],
            _ => [],
        };
        if (kindText is null || value.AsObject(keys) is not { } o)
        {
            return null;
        }

        int before = o.Problems.Items.Count;
        bool hasTag = kindText.StartsWith("sensor-", StringComparison.Ordinal) || kindText.StartsWith("signal-", StringComparison.Ordinal);
        UnitDescription? unit = ReadUnit(o, plant, allowFromTag: hasTag);
        string? tag = null;
        if (hasTag && o.Get("tag")?.AsString() is { } t)
        {
            UnitDescription? owner = plant?.Units.FirstOrDefault(u => u.FindInstrument(t) is not null);
            if (plant is not null && owner is null)
            {
                o.Fail("tag", $"unknown tag \"{t}\"; it is not an instrument of the plant file");
            }
            else if (unit is not null && owner is not null && owner != unit)
            {
                o.Fail("tag", $"tag \"{t}\" belongs to unit \"{owner.Id}\", not to \"{unit.Id}\"");
            }

            unit ??= owner;
            tag = t;
        }

        int? stage = null;
        bool stageRequired = kindText == "entrainment";
        if ((kindText is "stage-efficiency" or "entrainment") && o.Get("stage", required: stageRequired) is { } sv)
        {
            stage = sv.AsInteger(1, unit?.Stages ?? 200);
        }

        TimeSpan? start = o.Get("start") is { } stv ? ReadOffset(stv, duration) : null;
        bool endRequired = kindText is "signal-bad" or "signal-frozen";
        TimeSpan? end = o.Get("end", required: endRequired) is { } ev ? ReadOffset(ev, duration) : null;
        if (start is { } s0 && end is { } e0 && e0 <= s0)
        {
            o.Fail("end", $"the fault ends ({JsonDuration.Format(e0)}) before or when it starts ({JsonDuration.Format(s0)})");
        }

        TimeSpan ramp = TimeSpan.Zero;
        double magnitude = 0;
        EntrainedPhase carried = EntrainedPhase.Raffinate;
        switch (kindText)
        {
            case "stage-efficiency":
                ramp = o.Get("ramp", required: false)?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(3660)) ?? TimeSpan.Zero;
                magnitude = o.Get("value")?.AsNumber(0, 1, minExclusive: true, unit: "(the new Murphree efficiency)") ?? double.NaN;
                break;
            case "entrainment":
                magnitude = o.Get("fraction")?.AsNumber(0, 0.5, minExclusive: true, unit: "(mass fraction of the stream that is carried-over phase)") ?? double.NaN;
                carried = o.Get("carried", required: false)?.AsChoice("raffinate", "extract") == "extract" ? EntrainedPhase.Extract : EntrainedPhase.Raffinate;
                break;
            case "solvent-loss":
                magnitude = o.Get("fraction")?.AsNumber(0, 1, minExclusive: true, unit: "(fraction of the solvent flow lost)") ?? double.NaN;
                if (magnitude >= 1)
                {
                    o.Fail("fraction", "expected a fraction below 1: a loss of all the solvent stops the unit");
                }

                break;
            case "sensor-bias":
                magnitude = o.Get("bias")?.AsNumber(unit: "(in the tag's engineering unit)") ?? double.NaN;
                break;
            case "sensor-drift":
                magnitude = o.Get("perHour")?.AsNumber(unit: "(in the tag's engineering unit per hour)") ?? double.NaN;
                break;
        }

        if (o.Problems.Items.Count != before || start is null || (kindText is not "stage-efficiency" and not "solvent-loss" && unit is null))
        {
            return null;
        }

        FaultKind kind = kindText switch
        {
            "stage-efficiency" => FaultKind.StageEfficiency,
            "entrainment" => FaultKind.Entrainment,
            "solvent-loss" => FaultKind.SolventLoss,
            "sensor-bias" => FaultKind.SensorBias,
            "sensor-drift" => FaultKind.SensorDrift,
            "sensor-stuck" => FaultKind.SensorStuck,
            "signal-bad" => FaultKind.SignalBad,
            _ => FaultKind.SignalFrozen,
        };
        return new Fault
        {
            Kind = kind,
            Unit = unit?.Id,
            Stage = stage,
            Tag = tag,
            Start = start.Value,
            End = end,
            Ramp = ramp,
            Value = magnitude,
            Carried = carried,
        };
    }

    private static Disturbance? ReadDisturbance(JsonValue value, PlantDescription? plant, TimeSpan? duration)
    {
        if (value.AsObject("kind", "unit", "start", "value", "ramp") is not { } o)
        {
            return null;
        }

        int before = o.Problems.Items.Count;
        string? kindText = o.Get("kind")?.AsChoice(DisturbanceKinds);
        UnitDescription? unit = ReadUnit(o, plant, allowFromTag: false);
        TimeSpan? start = o.Get("start") is { } sv ? ReadOffset(sv, duration) : null;
        TimeSpan ramp = o.Get("ramp", required: false)?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(3660)) ?? TimeSpan.Zero;
        double? v = kindText switch
        {
            "feed-flow" => o.Get("value")?.AsNumber(0, 1e9, minExclusive: true, unit: "(the new feed flow, kg/h or kmol/h on the system's basis)"),
            "solvent-flow" => o.Get("value")?.AsNumber(0, 1e9, minExclusive: true, unit: "(the new solvent flow, kg/h or kmol/h on the system's basis)"),
            "feed-solute" => o.Get("value")?.AsNumber(0, 1, minExclusive: true, unit: "(the new solute fraction of the feed)"),
            "temperature" => o.Get("value")?.AsNumber(100, 800, unit: "K"),
            _ => null,
        };
        if (kindText == "feed-solute" && v >= 1)
        {
            o.Fail("value", "expected a solute fraction below 1");
        }

        if (o.Problems.Items.Count != before || kindText is null || unit is null || start is null || v is null)
        {
            return null;
        }

        DisturbanceKind kind = kindText switch
        {
            "feed-flow" => DisturbanceKind.FeedFlow,
            "feed-solute" => DisturbanceKind.FeedSolute,
            "solvent-flow" => DisturbanceKind.SolventFlow,
            _ => DisturbanceKind.Temperature,
        };
        return new Disturbance(kind, unit.Id, start.Value, v.Value, ramp);
    }

    private static TimeSpan? ReadOffset(JsonValue value, TimeSpan? duration)
    {
        TimeSpan? t = value.AsDuration(TimeSpan.Zero);
        if (t is { } offset && duration is { } d && offset > d)
        {
            value.Fail($"{JsonDuration.Format(offset)} is after the end of the run ({JsonDuration.Format(d)} from its start); times are relative to \"start\"");
            return null;
        }

        return t;
    }
}
