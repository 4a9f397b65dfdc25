using System.Text.Json;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Files;

/// <summary>Reads split, cascade and design case files (docs/file-formats.md) strictly, collecting every problem with its file and JSON path.</summary>
public static class CaseReader
{
    private static readonly string[] CascadeKeys = ["system", "temperature", "arrangement", "stages", "feed", "solvent", "efficiency"];

    public static SplitCase LoadSplit(string path) => Load(path, CaseKinds.Split, ReadSplit);

    public static CascadeCase LoadCascade(string path) => Load(path, CaseKinds.Cascade, ReadCascade);

    public static DesignCase LoadDesign(string path) => Load(path, CaseKinds.Design, ReadDesign);

    public static SplitCase? ReadSplit(JsonValue root)
    {
        if (root.AsObject("system", "temperature", "inlets") is not { } o)
        {
            return null;
        }

        SystemFile? system = ReadSystem(o);
        double? t = ReadTemperature(o, system);
        system = system is not null && t is double st ? EquilibriumModelFactory.AtTemperature(system, st) : system;
        var inlets = new List<MaterialStream>();
        if (o.Get("inlets")?.AsArray(1) is { } items && system is not null)
        {
            foreach (JsonValue item in items)
            {
                if (ReadStream(item, system.System, flowRequired: true) is { } s)
                {
                    inlets.Add(s);
                }
            }

            if (inlets.Count == items.Count && inlets.Sum(s => s.Flow) <= 0)
            {
                o.Fail("inlets", "the inlets have no flow in total; at least one flow must be above zero");
            }
        }

        return system is null || t is null || o.Problems.Any ? null : new SplitCase(root.File, system, t.Value, inlets);
    }

    public static CascadeCase? ReadCascade(JsonValue root) =>
        root.AsObject(CascadeKeys) is { } o ? ReadCascadeFields(o, stagesRequired: true, solventFlowRequired: true) : null;

    public static DesignCase? ReadDesign(JsonValue root)
    {
        if (root.AsObject([.. CascadeKeys, "find", "target"]) is not { } o)
        {
            return null;
        }

        string? findText = o.Get("find")?.AsChoice("stages", "solvent", "minimum-solvent");
        if (o.Get("arrangement", required: false) is { Kind: JsonValueKind.String } av && av.Element.GetString() == "crosscurrent")
        {
            o.Fail("arrangement", "design calculations are for counter-current cascades; use \"countercurrent\" (solve a cross-current cascade with 'tieflow calc cascade')");
        }

        DesignGoal find = findText switch { "solvent" => DesignGoal.Solvent, "minimum-solvent" => DesignGoal.MinimumSolvent, _ => DesignGoal.Stages };
        CascadeCase? cascade = ReadCascadeFields(o, stagesRequired: find == DesignGoal.Solvent, solventFlowRequired: find == DesignGoal.Stages);
        DesignTarget? target = null;
        if (o.Get("target", required: find != DesignGoal.MinimumSolvent) is { } tv && tv.AsObject("raffinateFraction", "recovery") is { } t)
        {
            bool hasFraction = t.Has("raffinateFraction"), hasRecovery = t.Has("recovery");
            if (hasFraction == hasRecovery)
            {
                t.Fail("give either \"raffinateFraction\" (solute fraction of the final raffinate) or \"recovery\" (fraction of the feed's solute that leaves in the extract), not " + (hasFraction ? "both" : "neither"));
            }
            else
            {
                double? fraction = hasFraction ? t.Get("raffinateFraction")!.Value.AsNumber(0, 1, minExclusive: true, unit: "(a fraction)") : null;
                double? recovery = hasRecovery ? t.Get("recovery")!.Value.AsNumber(0, 1, minExclusive: true, unit: "(a fraction)") : null;
                if (recovery >= 1)
                {
                    t.Fail("recovery", "a recovery of 1 needs infinitely many stages; expected a value below 1");
                }
                else if (fraction >= 1)
                {
                    t.Fail("raffinateFraction", "a raffinate of pure solute asks for no extraction; expected a solute fraction below 1");
                }
                else if (fraction is > 0 and < 1)
                {
                    target = DesignTarget.RaffinateFraction(fraction.Value);
                }
                else if (recovery is > 0 and < 1)
                {
                    target = DesignTarget.Recovery(recovery.Value);
                }
            }
        }
        else if (find == DesignGoal.MinimumSolvent && !o.Has("target"))
        {
            o.Fail("target", "minimum-solvent needs a target: the minimum solvent flow is the one that reaches it with infinitely many stages");
        }

        if (cascade is not null && target is { Kind: DesignTargetKind.RaffinateFraction, Value: var x } && x >= cascade.Feed.Composition.Solute)
        {
            o.Fail("target.raffinateFraction", $"the target {x:G4} is not below the feed's solute fraction {cascade.Feed.Composition.Solute:G4}; nothing would need extracting");
        }

        return cascade is null || target is null || o.Problems.Any ? null : new DesignCase(cascade, find, target.Value);
    }

    /// <summary>Reads a stream object <c>{ "flow", "composition" }</c> on the system's basis.</summary>
    public static MaterialStream? ReadStream(JsonValue value, TernarySystem system, bool flowRequired)
    {
        if (value.AsObject("flow", "composition") is not { } o)
        {
            return null;
        }

        string unit = system.FlowUnit;
        double? flow = o.Get("flow", flowRequired)?.AsNumber(0, 1e9, unit: unit);
        Ternary? composition = o.Get("composition") is { } c ? SystemFileReader.ReadComposition(c, system) : null;
        if ((flowRequired && flow is null) || composition is null)
        {
            return null;
        }

        return new MaterialStream(flow ?? 0, composition.Value);
    }

    /// <summary>Every temperature a case may name, kelvin: what data without a temperature are valid for.</summary>
    public static readonly TemperatureRange AnyTemperature = new(100, 800);

    /// <summary>Temperatures for which the data of a system file may be used.</summary>
    public static TemperatureRange ValidTemperatures(EquilibriumSpec spec) => spec switch
    {
        TieLineSpec t => TemperatureRange.Around(t.TemperatureKelvin, SystemFileReader.SingleTemperatureToleranceKelvin),
        DistributionSpec { TemperatureKelvin: double dt } => TemperatureRange.Around(dt, SystemFileReader.SingleTemperatureToleranceKelvin),
        DistributionSpec => AnyTemperature,
        NrtlSpec n => n.ValidTemperatures,
        UniquacSpec u => u.ValidTemperatures,
        _ => throw new ArgumentOutOfRangeException(nameof(spec), spec, "Unknown equilibrium data."),
    };

    private static CascadeCase? ReadCascadeFields(JsonObject o, bool stagesRequired, bool solventFlowRequired)
    {
        SystemFile? system = ReadSystem(o);
        double? t = ReadTemperature(o, system);
        system = system is not null && t is double st ? EquilibriumModelFactory.AtTemperature(system, st) : system;
        string? arrangement = o.Get("arrangement")?.AsChoice("countercurrent", "crosscurrent");
        int? stages = o.Get("stages", stagesRequired)?.AsInteger(1, 200);
        MaterialStream? feed = null, solvent = null;
        IReadOnlyList<double>? solventFlows = null;
        if (system is not null)
        {
            feed = o.Get("feed") is { } f ? ReadStream(f, system.System, flowRequired: true) : null;
            JsonValue? solventValue = o.Get("solvent");
            if (solventValue is { Kind: JsonValueKind.Object } sl && sl.Element.TryGetProperty("flow", out JsonElement flowElement) && flowElement.ValueKind == JsonValueKind.Array)
            {
                (solvent, solventFlows) = ReadSolventFlowList(o, sl, system.System, arrangement, stages);
            }
            else
            {
                solvent = solventValue is { } s ? ReadStream(s, system.System, flowRequired: solventFlowRequired) : null;
            }
            if (feed is { Flow: <= 0 })
            {
                o.Fail("feed.flow", "the feed flow must be above zero");
            }

            if (feed is { } fd && fd.Composition.Solute <= 0)
            {
                o.Fail("feed.composition", "the feed holds no solute; there is nothing to extract");
            }

            if (solvent is { } sv && solventFlowRequired && sv.Flow <= 0)
            {
                o.Fail("solvent.flow", "the solvent flow must be above zero");
            }
        }

        IReadOnlyList<double>? efficiencies = ReadEfficiencies(o, stages);
        if (system is null || t is null || arrangement is null || feed is null || solvent is null || efficiencies is null || o.Problems.Any)
        {
            return null;
        }

        var kind = arrangement == "crosscurrent" ? CascadeArrangement.Crosscurrent : CascadeArrangement.Countercurrent;
        return new CascadeCase(o.File, system, t.Value, kind, stages ?? 0, feed.Value, solvent.Value, efficiencies) { SolventFlows = solventFlows };
    }

    // A cross-current case may feed each stage its own fresh solvent flow: "solvent": { "flow": [f1, f2, ...], "composition": {...} }.
    private static (MaterialStream? Solvent, IReadOnlyList<double>? Flows) ReadSolventFlowList(JsonObject o, JsonValue solventValue, TernarySystem system, string? arrangement, int? stages)
    {
        if (solventValue.AsObject("flow", "composition") is not { } so)
        {
            return (null, null);
        }

        string unit = system.FlowUnit;
        JsonValue flowValue = so.Get("flow")!.Value;
        Ternary? composition = so.Get("composition") is { } c ? SystemFileReader.ReadComposition(c, system) : null;
        if (arrangement is not null && arrangement != "crosscurrent")
        {
            flowValue.Fail("a list of solvent flows (one per stage) is for cross-current cascades; a counter-current cascade has one solvent inlet, so give one number");
            return (null, null);
        }

        if (o.Has("find"))
        {
            flowValue.Fail("a design case takes one solvent flow; give one number");
            return (null, null);
        }

        if (flowValue.AsArray(1) is not { } items)
        {
            return (null, null);
        }

        if (stages is int n && items.Count != n)
        {
            flowValue.Fail($"expected one solvent flow per stage ({n}), found {items.Count}");
            return (null, null);
        }

        var flows = new double[items.Count];
        for (int i = 0; i < items.Count; i++)
        {
            if (items[i].AsNumber(0, 1e9, minExclusive: true, unit: unit) is not double f)
            {
                return (null, null);
            }

            flows[i] = f;
        }

        return composition is null ? (null, null) : (new MaterialStream(flows[0], composition.Value), flows);
    }

    /// <summary>Reads the optional <c>efficiency</c> member: one number for every stage, or one per stage; 1 when absent.</summary>
    public static double[]? ReadEfficiencies(JsonObject o, int? stages)
    {
        if (o.Get("efficiency", required: false) is not { } v)
        {
            return stages is int n ? Enumerable.Repeat(1.0, n).ToArray() : [1.0];
        }

        if (v.Kind == JsonValueKind.Number)
        {
            double? e = v.AsNumber(0, 1, minExclusive: true, unit: "(a stage efficiency, 1 = equilibrium stage)");
            return e is null ? null : Enumerable.Repeat(e.Value, stages ?? 1).ToArray();
        }

        if (v.AsArray(1) is not { } items)
        {
            return null;
        }

        if (stages is int count && items.Count != count)
        {
            v.Fail($"expected one efficiency per stage ({count}), found {items.Count}");
            return null;
        }

        if (stages is null)
        {
            v.Fail("a list of efficiencies needs a fixed number of stages; give one number when the stages are to be found");
            return null;
        }

        double[] result = new double[items.Count];
        for (int i = 0; i < items.Count; i++)
        {
            double? e = items[i].AsNumber(0, 1, minExclusive: true, unit: "(a stage efficiency, 1 = equilibrium stage)");
            if (e is null)
            {
                return null;
            }

            result[i] = e.Value;
        }

        return result;
    }

    /// <summary>Reads the <c>system</c> member of an object: an inline system, or a path relative to the file that holds it.</summary>
    public static SystemFile? ReadSystem(JsonObject o)
    {
        if (o.Get("system") is not { } v)
        {
            return null;
        }

        if (v.Kind == JsonValueKind.Object)
        {
            return SystemFileReader.Read(v);
        }

        if (v.AsString() is not { } relative)
        {
            return null;
        }

        if (InputFiles.InvalidPathReason(relative) is { } reason)
        {
            v.Fail($"'{InputFiles.Printable(relative)}' cannot be a path: {reason}");
            return null;
        }

        string baseDir = Path.GetDirectoryName(Path.GetFullPath(o.File)) ?? ".";
        string full = Path.GetFullPath(Path.Combine(baseDir, relative));
        if (InputFiles.NotARegularFile(full) is { } what)
        {
            v.Fail($"'{relative}' is {what}, not a regular file (looked for {full}); give the path of a system file");
            return null;
        }

        if (!File.Exists(full))
        {
            v.Fail($"the system file '{relative}' does not exist (looked for {full}); the path is relative to the case file");
            return null;
        }

        try
        {
            using JsonDocument doc = JsonInputFile.Load(full);
            return SystemFileReader.Read(new JsonValue(doc.RootElement, full, "$", o.Problems));
        }
        catch (InputException e)
        {
            foreach (InputProblem p in e.Problems)
            {
                o.Problems.Add(p.File, p.JsonPath, p.Message);
            }

            return null;
        }
    }

    private static double? ReadTemperature(JsonObject o, SystemFile? system)
    {
        double? t = o.Get("temperature")?.AsNumber(100, 800, unit: "K");
        if (t is double value && system is not null)
        {
            TemperatureRange range = ValidTemperatures(system.Spec);
            if (!range.Contains(value))
            {
                o.Fail("temperature", $"{value:0.##} K is outside the temperatures of the equilibrium data ({range.MinKelvin:0.##} K to {range.MaxKelvin:0.##} K in {Path.GetFileName(system.Path)}); use data measured or fitted near {value:0.##} K");
                return null;
            }
        }

        return t;
    }

    private static T Load<T>(string path, string kind, Func<JsonValue, T?> read)
        where T : class
    {
        using JsonDocument doc = JsonInputFile.Load(path);
        CaseKinds.Expect(doc.RootElement, path, kind);
        var problems = new InputProblems();
        T? result = read(new JsonValue(doc.RootElement, path, "$", problems));
        problems.ThrowIfAny();
        return result ?? throw new InputException(path, "$", "the case could not be read");
    }
}
