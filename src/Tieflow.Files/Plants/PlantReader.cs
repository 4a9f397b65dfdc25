using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Plant;

namespace Tieflow.Files;

/// <summary>
/// Reads plant files (<c>*.plant.json</c>) strictly: every problem of the file is collected with its file, JSON path and
/// what was expected. Readings, sigmas and ranges stay in each instrument's engineering unit; the instrument's
/// <see cref="EngineeringUnit"/> converts them. The nominal cascade is solved once so that transmitter ranges can be
/// checked against the nominal value of what they measure.
/// </summary>
public static partial class PlantReader
{
    private static readonly string[] RootKeys = ["site", "units"];
    private static readonly string[] UnitKeys = ["id", "kind", "system", "arrangement", "stages", "nominal", "holdup", "spec", "column", "instruments", "labs", "alerts"];
    private static readonly string[] InstrumentKeys = ["tag", "node", "stream", "stage", "quantity", "component", "unit", "sigma", "range", "resolution", "deadTime", "updateInterval", "updateOffset"];

    /// <summary>Reads and validates a plant file.</summary>
    /// <param name="path">The plant file.</param>
    /// <exception cref="InputException">With every problem of the file (and of the system files it names).</exception>
    public static PlantDescription Load(string path)
    {
        using JsonDocument doc = JsonInputFile.Load(path);
        var problems = new InputProblems();
        PlantDescription? plant = Read(new JsonValue(doc.RootElement, path, "$", problems));
        problems.ThrowIfAny();
        return plant!;
    }

    /// <summary>Reads a plant from a whole file's root value; null (with problems recorded) when it is not valid.</summary>
    /// <param name="root">The root value.</param>
    public static PlantDescription? Read(JsonValue root)
    {
        if (root.AsObject(RootKeys) is not { } o)
        {
            return null;
        }

        string? site = o.Get("site")?.AsString();
        var units = new List<UnitDescription>();
        var unitIds = new HashSet<string>(StringComparer.Ordinal);
        var tags = new Dictionary<string, string>(StringComparer.Ordinal);
        var nodes = new Dictionary<string, string>(StringComparer.Ordinal);
        if (o.Get("units")?.AsArray(1) is { } items)
        {
            foreach (JsonValue item in items)
            {
                if (ReadUnit(item, unitIds, tags, nodes) is { } unit)
                {
                    units.Add(unit);
                }
            }
        }

        return site is null || o.Problems.Any ? null : new PlantDescription(site, units);
    }

    private static UnitDescription? ReadUnit(JsonValue value, HashSet<string> unitIds, Dictionary<string, string> tags, Dictionary<string, string> nodes)
    {
        if (value.AsObject(UnitKeys) is not { } o)
        {
            return null;
        }

        int before = o.Problems.Items.Count;
        string? id = o.Get("id") is { } idValue ? ReadId(idValue, "unit id") : null;
        if (id is not null && !unitIds.Add(id))
        {
            o.Fail("id", $"unit id \"{id}\" is used by an earlier unit; unit ids must be unique within the plant");
        }

        string? kindText = o.Get("kind")?.AsChoice("mixer-settler", "column");
        UnitKind kind = kindText == "column" ? UnitKind.Column : UnitKind.MixerSettler;
        SystemFile? system = CaseReader.ReadSystem(o);
        string? arrangementText = o.Get("arrangement", required: false) is { } a ? a.AsChoice("countercurrent", "crosscurrent") : "countercurrent";
        CascadeArrangement arrangement = arrangementText == "crosscurrent" ? CascadeArrangement.Crosscurrent : CascadeArrangement.Countercurrent;
        if (kindText == "column" && arrangementText == "crosscurrent")
        {
            o.Fail("arrangement", "a column is counter-current; remove \"arrangement\" or write \"countercurrent\"");
        }

        int? stages = o.Get("stages")?.AsInteger(1, 200);
        NominalOperation? nominal = system is not null && o.Get("nominal") is { } n ? ReadNominal(n, system, stages) : null;
        Holdup? holdup = o.Get("holdup") is { } h ? ReadHoldup(h) : null;
        double? spec = null;
        if (o.Get("spec") is { } sv && sv.AsObject("raffinateSolute") is { } so)
        {
            spec = so.Get("raffinateSolute")?.AsNumber(0, 1, minExclusive: true, unit: "(solute fraction of the final raffinate on the system's basis)");
            if (spec >= 1)
            {
                so.Fail("raffinateSolute", "expected a solute fraction below 1");
                spec = null;
            }
        }

        double? height = null;
        if (o.Get("column", required: kind == UnitKind.Column) is { } cv)
        {
            if (kind != UnitKind.Column)
            {
                o.Fail("column", "only a unit of kind \"column\" has column dimensions; remove \"column\" or set \"kind\": \"column\"");
            }
            else if (cv.AsObject("height") is { } co)
            {
                height = co.Get("height")?.AsNumber(0, 200, minExclusive: true, unit: "m (active height)");
            }
        }

        CascadeResult? nominalCascade = null;
        if (system is not null && nominal is not null && stages is int ns && o.Problems.Items.Count == before)
        {
            nominalCascade = SolveNominal(o, system, nominal, arrangement);
        }

        var context = new UnitContext(system?.System, stages, arrangement, kind, nominal, nominalCascade);
        var instruments = new List<Instrument>();
        if (o.Get("instruments")?.AsArray() is { } list)
        {
            foreach (JsonValue item in list)
            {
                if (ReadInstrument(item, context, tags, nodes, id ?? "?") is { } instrument)
                {
                    instruments.Add(instrument);
                }
            }
        }

        var labs = new List<LabPoint>();
        if (o.Get("labs", required: false)?.AsArray() is { } labItems)
        {
            foreach (JsonValue item in labItems)
            {
                if (item.AsObject("stream", "component") is { } lo)
                {
                    UnitStream? stream = lo.Get("stream") is { } s ? ReadStream(s, context) : null;
                    ComponentRole? role = lo.Get("component") is { } c ? ReadComponent(c, context) : null;
                    if (stream is not null && role is not null)
                    {
                        labs.Add(new LabPoint(stream.Value, role.Value));
                    }
                }
            }
        }

        var alerts = new Dictionary<string, double>(StringComparer.Ordinal);
        if (o.Get("alerts", required: false) is { } av && av.AsObject([.. AlertLimits.Keys]) is { } ao)
        {
            foreach ((string key, JsonValue v) in ao.Members())
            {
                if (!AlertLimits.TryGetValue(key, out (double Min, double Max, string What) limits))
                {
                    continue;
                }

                (double min, double max, string what) = limits;
                double? x = what == "duration"
                    ? v.AsDuration(TimeSpan.FromSeconds(min), TimeSpan.FromSeconds(max))?.TotalSeconds
                    : v.AsNumber(min, max, minExclusive: min == 0, unit: what);
                if (x is double setting)
                {
                    alerts[key] = setting;
                }
            }
        }

        if (o.Problems.Items.Count != before || id is null || system is null || stages is null || nominal is null || holdup is null || spec is null)
        {
            return null;
        }

        return new UnitDescription
        {
            Id = id,
            Kind = kind,
            SystemName = system.Name,
            System = system.System,
            Equilibrium = system.Model,
            Arrangement = arrangement,
            Stages = stages.Value,
            Nominal = nominal,
            Holdup = holdup,
            RaffinateSoluteSpec = spec.Value,
            ColumnHeightMetres = height,
            Instruments = instruments,
            Labs = labs,
            AlertOverrides = alerts,
        };
    }

    /// <summary>
    /// The analysis and alert settings a plant file may override, with their ranges (durations in seconds). The analysis
    /// documents what each one does (see the README); the names and ranges are checked here so that a typo or an absurd
    /// value is caught when the file is read.
    /// </summary>
    private static readonly Dictionary<string, (double Min, double Max, string What)> AlertLimits = new(StringComparer.Ordinal)
    {
        ["efficiencyDriftSigmas"] = (0, 100, "(CUSUM decision limit, in sigmas of the efficiency)"),
        ["efficiencyDriftDeadband"] = (0, 1, "(drop of efficiency below the baseline that the CUSUM ignores, in sigmas)"),
        ["efficiencyModelSigma"] = (0, 1, "(uncertainty of an efficiency beyond its propagated sigma)"),
        ["entrainmentFraction"] = (0, 0.5, "(carried-over fraction that raises the alert)"),
        ["entrainmentDeadband"] = (0, 0.5, "(fraction below the set point at which it clears)"),
        ["solventLossKgPerHour"] = (0, 1e6, "(unaccounted solvent flow that raises the alert, kg/h or kmol/h)"),
        ["solventLossFraction"] = (0, 1, "(unaccounted solvent as a fraction of the solvent flow that raises the alert)"),
        ["suspectWindows"] = (0, 1000, "(consecutive windows naming the same tag before it is a suspect)"),
        ["labMismatchSigmas"] = (0, 100, "(sigmas between lab and soft sensor)"),
        ["labSigma"] = (0, 0.5, "(standard deviation of a lab result, as a fraction)"),
        ["offSpecMargin"] = (0, 100, "(sigmas above spec before off-spec)"),
        ["onDelay"] = (0, 86400 * 7, "duration"),
        ["offDelay"] = (0, 86400 * 7, "duration"),
        ["floodLimit"] = (0, 10000, "(alerts per flood window)"),
        ["floodWindow"] = (1, 86400, "duration"),
        ["notDeterminableSigma"] = (0, 10, "(efficiency sigma above which a stage is not determinable)"),
        ["windowLength"] = (60, 86400, "duration"),
        ["dynamicFitWindows"] = (0, 48, "(windows the dynamic model is fitted over between steady windows; 0 for none)"),
        ["dynamicModelSigma"] = (0, 0.1, "(model error of a window-mean solute fraction in the dynamic fit)"),
    };

    private static NominalOperation? ReadNominal(JsonValue value, SystemFile system, int? stages)
    {
        if (value.AsObject("feed", "solvent", "temperature", "efficiency") is not { } o)
        {
            return null;
        }

        MaterialStream? feed = o.Get("feed") is { } f ? CaseReader.ReadStream(f, system.System, flowRequired: true) : null;
        MaterialStream? solvent = o.Get("solvent") is { } s ? CaseReader.ReadStream(s, system.System, flowRequired: true) : null;
        if (feed is { Flow: <= 0 })
        {
            o.Fail("feed.flow", "the nominal feed flow must be above zero");
        }

        if (feed is { } fd && fd.Composition.Solute <= 0)
        {
            o.Fail("feed.composition", "the nominal feed holds no solute; there is nothing to extract");
        }

        if (solvent is { Flow: <= 0 })
        {
            o.Fail("solvent.flow", "the nominal solvent flow must be above zero");
        }

        double? t = o.Get("temperature")?.AsNumber(100, 800, unit: "K");
        if (t is double tk && !CaseReader.ValidTemperatures(system.Spec).Contains(tk))
        {
            TemperatureRange range = CaseReader.ValidTemperatures(system.Spec);
            o.Fail("temperature", $"{tk:0.##} K is outside the temperatures of the equilibrium data ({range.MinKelvin:0.##} K to {range.MaxKelvin:0.##} K in {Path.GetFileName(system.Path)})");
            t = null;
        }

        double[]? efficiencies = stages is int n ? CaseReader.ReadEfficiencies(o, n) : null;
        return feed is null || solvent is null || t is null || efficiencies is null ? null : new NominalOperation(feed.Value, solvent.Value, t.Value, efficiencies);
    }

    private static Holdup? ReadHoldup(JsonValue value)
    {
        if (value.AsObject("mixer", "settler") is not { } o)
        {
            return null;
        }

        double? mixer = o.Get("mixer")?.AsNumber(0, 1e9, minExclusive: true, unit: "kg (liquid in the mixer of one stage)");
        double? settler = o.Get("settler")?.AsNumber(0, 1e9, unit: "kg (liquid in the settler of one stage)");
        return mixer is null || settler is null ? null : new Holdup(mixer.Value, settler.Value);
    }

    private static CascadeResult? SolveNominal(JsonObject o, SystemFile system, NominalOperation nominal, CascadeArrangement arrangement)
    {
        try
        {
            var solver = new CascadeSolver(system.Model, nominal.TemperatureKelvin);
            return solver.Solve(arrangement, nominal.Feed, nominal.Solvent, nominal.Efficiencies);
        }
        catch (Exception e) when (e is CascadeException or InfeasibleSpecificationException or EquilibriumException or ArgumentException)
        {
            o.Fail("nominal", $"the nominal operating point cannot be solved as a cascade: {e.Message}");
            return null;
        }
    }

    private static Instrument? ReadInstrument(JsonValue value, UnitContext unit, Dictionary<string, string> tags, Dictionary<string, string> nodes, string unitId)
    {
        if (value.AsObject(InstrumentKeys) is not { } o)
        {
            return null;
        }

        int before = o.Problems.Items.Count;
        string? tag = o.Get("tag") is { } tv ? ReadId(tv, "tag") : null;
        if (tag is not null && !tags.TryAdd(tag, o.Path))
        {
            o.Fail("tag", $"tag \"{tag}\" is already used at {tags[tag]}; tags must be unique within the plant");
        }

        string? node = o.Get("node")?.AsString();
        if (node is not null && !NodeIdText().IsMatch(node))
        {
            o.Fail("node", $"\"{node}\" is not a NodeId in the standard text form; expected for example \"ns=2;s=X300.FI301.PV\" or \"ns=3;i=1042\"");
            node = null;
        }
        else if (node is not null && !nodes.TryAdd(node, o.Path))
        {
            o.Fail("node", $"NodeId \"{node}\" is already used at {nodes[node]}; every instrument needs its own node");
        }

        string? quantityText = o.Get("quantity")?.AsChoice("flow", "fraction", "temperature");
        InstrumentQuantity? quantity = quantityText switch
        {
            "flow" => InstrumentQuantity.Flow,
            "fraction" => InstrumentQuantity.Fraction,
            "temperature" => InstrumentQuantity.Temperature,
            _ => null,
        };

        UnitStream? stream = null;
        int? stage = null;
        ComponentRole? component = null;
        if (quantity is InstrumentQuantity.Flow or InstrumentQuantity.Fraction)
        {
            stream = o.Get("stream") is { } s ? ReadStream(s, unit) : null;
            if (o.Has("stage"))
            {
                o.Fail("stage", $"a {quantityText} instrument measures a stream; remove \"stage\" (the stream names the stage)");
            }

            if (stream is { } st && unit.Kind == UnitKind.Column && unit.Stages is int n && !st.IsTerminal(n, unit.Arrangement))
            {
                o.Fail("stream", $"a column's interstage streams cannot be measured; a column unit measures only feed, solvent, raffinate and extract");
                stream = null;
            }
        }
        else if (quantity == InstrumentQuantity.Temperature)
        {
            stage = o.Get("stage") is { } sv ? sv.AsInteger(1, unit.Stages ?? 200) : null;
            if (o.Has("stream"))
            {
                o.Fail("stream", "a temperature instrument measures a stage; give \"stage\" instead of \"stream\"");
            }
        }

        if (quantity == InstrumentQuantity.Fraction)
        {
            component = o.Get("component") is { } c ? ReadComponent(c, unit) : null;
        }
        else if (quantity is not null && o.Has("component"))
        {
            o.Fail("component", $"only a fraction (analyzer) names a component; a {quantityText} instrument has none");
        }

        EngineeringUnit? engineering = null;
        if (o.Get("unit") is { } uv && uv.AsString() is { } unitName && quantity is { } q && unit.System is { } system)
        {
            engineering = EngineeringUnits.Find(unitName, q, system.Basis);
            if (engineering is null)
            {
                string basisNote = q == InstrumentQuantity.Flow
                    ? system.Basis == CompositionBasis.Mole
                        ? EngineeringUnits.MassFlowUnits.Contains(unitName) ? $" ('{unitName}' is a mass flow, but the system is on a mole basis)" : string.Empty
                        : EngineeringUnits.MoleFlowUnits.Contains(unitName) ? $" ('{unitName}' is a molar flow, but the system is on a mass basis)" : string.Empty
                    : string.Empty;
                uv.Fail($"'{unitName}' is not a unit for a {quantityText} here{basisNote}; expected one of: {string.Join(", ", EngineeringUnits.Allowed(q, system.Basis).Select(x => $"\"{x}\""))}");
            }
        }

        double? sigma = o.Get("sigma")?.AsNumber(0, 1e12, minExclusive: true, unit: "(standard deviation of one reading, in the instrument's unit)");
        double? resolution = o.Get("resolution", required: false) is { } rv ? rv.AsNumber(0, 1e12, unit: "(smallest step of a reading, in the instrument's unit)") : 0;
        double low = double.NegativeInfinity, high = double.PositiveInfinity;
        if (o.Get("range", required: false) is { } rangeValue && rangeValue.AsArray() is { } bounds)
        {
            if (bounds.Count != 2)
            {
                rangeValue.Fail($"expected [low, high] in the instrument's unit, found {bounds.Count} numbers");
            }
            else if (bounds[0].AsNumber() is double lo && bounds[1].AsNumber() is double hi)
            {
                if (hi <= lo)
                {
                    rangeValue.Fail($"the range's high end {hi:G6} must be above its low end {lo:G6}");
                }
                else
                {
                    (low, high) = (lo, hi);
                }
            }
        }

        TimeSpan? deadTime = o.Get("deadTime", required: false)?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(1));
        TimeSpan? interval = o.Get("updateInterval", required: false)?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(1), minExclusive: true);
        TimeSpan offset = TimeSpan.Zero;
        if (o.Get("updateOffset", required: false)?.AsDuration(TimeSpan.Zero, TimeSpan.FromDays(1)) is { } off)
        {
            offset = off;
            if (interval is { } iv && off >= iv)
            {
                o.Fail("updateOffset", $"the offset {JsonDuration.Format(off)} must be shorter than the update interval {JsonDuration.Format(iv)}");
            }
        }

        if (quantity == InstrumentQuantity.Fraction)
        {
            if (!o.Has("deadTime") || !o.Has("updateInterval"))
            {
                o.Fail($"an analyzer (a fraction instrument) needs \"deadTime\" (how old the sample is when its value arrives) and \"updateInterval\" (how often a value arrives); missing: {string.Join(" and ", new[] { "deadTime", "updateInterval" }.Where(k => !o.Has(k)))}");
            }
        }
        else if (quantity is not null)
        {
            foreach (string key in new[] { "deadTime", "updateInterval", "updateOffset" })
            {
                if (o.Has(key))
                {
                    o.Fail(key, $"only analyzers (fraction instruments) have \"{key}\"; a {quantityText} instrument reads continuously");
                }
            }
        }

        if (o.Problems.Items.Count != before || tag is null || node is null || quantity is null || engineering is null || sigma is null || resolution is null)
        {
            return null;
        }

        if (NominalValue(unit, quantity.Value, stream, component) is double nominalBase && (low > double.NegativeInfinity || high < double.PositiveInfinity))
        {
            double nominalReading = engineering.FromBase(nominalBase);
            if (nominalReading < low || nominalReading > high)
            {
                o.Fail("range", $"the range [{low:G6}, {high:G6}] {engineering.Name} excludes the nominal value {nominalReading:G6} {engineering.Name} of what unit {unitId} {Describe(quantity.Value, stream, stage, unit)} measures; widen the range or correct the nominal operation");
                return null;
            }
        }

        return new Instrument
        {
            Tag = tag,
            Node = node,
            Quantity = quantity.Value,
            Stream = stream,
            Stage = stage,
            Component = component,
            Unit = engineering,
            Sigma = sigma.Value,
            RangeLow = low,
            RangeHigh = high,
            Resolution = resolution.Value,
            DeadTime = deadTime,
            UpdateInterval = interval,
            UpdateOffset = offset,
        };
    }

    private static string Describe(InstrumentQuantity q, UnitStream? stream, int? stage, UnitContext unit) => q switch
    {
        InstrumentQuantity.Temperature => string.Create(CultureInfo.InvariantCulture, $"at stage {stage}"),
        _ when stream is { } s && unit.Stages is int n => $"on {s.Name(n, unit.Arrangement)}",
        _ => string.Empty,
    };

    /// <summary>The nominal value of a measured quantity in its base unit, from the nominal cascade; null when unknown.</summary>
    private static double? NominalValue(UnitContext unit, InstrumentQuantity q, UnitStream? stream, ComponentRole? component)
    {
        if (q == InstrumentQuantity.Temperature)
        {
            return unit.Nominal?.TemperatureKelvin;
        }

        if (stream is not { } s || unit.Cascade is not { } cascade || unit.Nominal is not { } nominal)
        {
            return null;
        }

        MaterialStream m = s.Phase switch
        {
            StreamPhase.Feed => nominal.Feed,
            StreamPhase.Solvent => nominal.Solvent,
            StreamPhase.Raffinate => cascade.Stages[s.Stage - 1].Raffinate,
            _ => s.Stage == 0 ? cascade.Extract : cascade.Stages[s.Stage - 1].Extract,
        };
        return q == InstrumentQuantity.Flow ? m.Flow : component is { } c ? m.Composition[c] : null;
    }

    private static UnitStream? ReadStream(JsonValue value, UnitContext unit)
    {
        if (value.AsString() is not { } name || unit.Stages is not int stages)
        {
            return null;
        }

        if (!UnitStream.TryParse(name, stages, unit.Arrangement, out UnitStream stream, out string problem))
        {
            value.Fail(problem);
            return null;
        }

        return stream;
    }

    private static ComponentRole? ReadComponent(JsonValue value, UnitContext unit)
    {
        if (value.AsString() is not { } id || unit.System is not { } system)
        {
            return null;
        }

        int index = system.IndexOf(id);
        if (index < 0)
        {
            value.Fail($"unknown component \"{id}\"; the unit's system has {string.Join(", ", system.Components.Select(c => $"\"{c.Id}\""))}");
            return null;
        }

        return (ComponentRole)index;
    }

    private static string? ReadId(JsonValue value, string what)
    {
        if (value.AsString() is not { } id)
        {
            return null;
        }

        if (!IdText().IsMatch(id))
        {
            value.Fail($"\"{id}\" is not a valid {what}; use 1 to 64 letters, digits, '-', '_' and '.', starting with a letter or digit");
            return null;
        }

        return id;
    }

    [GeneratedRegex(@"^[A-Za-z0-9][A-Za-z0-9_.\-]{0,63}$")]
    private static partial Regex IdText();

    [GeneratedRegex(@"^(ns=\d{1,5};|nsu=[^;]+;)?(i=\d{1,10}|s=.+|g=[0-9A-Fa-f]{8}-[0-9A-Fa-f]{4}-[0-9A-Fa-f]{4}-[0-9A-Fa-f]{4}-[0-9A-Fa-f]{12}|b=[A-Za-z0-9+/=]+)$")]
    private static partial Regex NodeIdText();

    private sealed record UnitContext(TernarySystem? System, int? Stages, CascadeArrangement Arrangement, UnitKind Kind, NominalOperation? Nominal, CascadeResult? Cascade);
}
