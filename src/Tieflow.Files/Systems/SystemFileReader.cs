using System.Text.Json;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Equilibrium.Distribution;

namespace Tieflow.Files;

/// <summary>
/// Reads system files (components and equilibrium, docs/file-formats.md) strictly: every problem is collected with its file
/// and JSON path. Temperatures are kelvin; compositions are on the file's basis.
/// </summary>
public static class SystemFileReader
{
    /// <summary>Default temperatures for activity-model parameters when the file gives no <c>temperatureRange</c>.</summary>
    public static readonly TemperatureRange DefaultActivityRange = new(250, 450);

    /// <summary>How far from the temperature of tie-line or isotherm data a calculation may go, kelvin.</summary>
    public const double SingleTemperatureToleranceKelvin = 5;

    private static readonly string[] Models = ["tie-lines", "nrtl", "uniquac", "distribution"];

    public static SystemFile Load(string path)
    {
        using JsonDocument doc = JsonInputFile.Load(path);
        var problems = new InputProblems();
        SystemFile? system = Read(new JsonValue(doc.RootElement, path, "$", problems));
        problems.ThrowIfAny();
        return system!;
    }

    /// <summary>Reads a system from a JSON value (a whole file, or an inline <c>system</c> object of a case).</summary>
    public static SystemFile? Read(JsonValue value)
    {
        // Problems found before this system (in other units of a plant file) must not make this one unusable.
        int before = value.Problems.Items.Count;
        JsonObject? root = value.AsObject("name", "basis", "components", "equilibrium");
        if (root is not { } o)
        {
            return null;
        }

        string? name = o.Get("name")?.AsString();
        if (name is not null && (name.Length > 200 || name.Any(char.IsControl)))
        {
            o.Fail("name", "expected a name of at most 200 characters without control characters");
            name = null;
        }

        string? basisText = o.Get("basis")?.AsChoice("mass", "mole");
        CompositionBasis basis = basisText == "mole" ? CompositionBasis.Mole : CompositionBasis.Mass;

        string? modelName = null;
        JsonObject? eq = null;
        if (o.Get("equilibrium") is { } eqValue)
        {
            eq = eqValue.AsObject("model", "temperature", "tieLines", "pairs", "k", "isotherm", "temperatureRange");
            modelName = eq?.Get("model")?.AsChoice(Models);
            if (eq is { } used && modelName is not null)
            {
                string[] own = ModelKeys(modelName);
                foreach (string key in new[] { "temperature", "tieLines", "pairs", "k", "isotherm", "temperatureRange" }.Where(k => used.Has(k) && Array.IndexOf(own, k) < 0))
                {
                    used.Fail(key, $"the {modelName} model has no \"{key}\"; expected only: model, {string.Join(", ", own)} (or 'notes')");
                }
            }
        }

        var (components, structure) = ReadComponents(o, modelName == "uniquac");
        TernarySystem? system = null;
        if (components is not null)
        {
            try
            {
                system = new TernarySystem(components, basis);
            }
            catch (ArgumentException e)
            {
                o.Fail("components", FirstLine(e.Message));
            }
        }

        if (system is null || eq is not { } e2 || modelName is null || name is null || basisText is null)
        {
            return null;
        }

        EquilibriumSpec? spec = modelName switch
        {
            "tie-lines" => ReadTieLines(e2, system),
            "nrtl" => ReadNrtl(e2, system),
            "uniquac" => ReadUniquac(e2, system, structure!),
            _ => ReadDistribution(e2, system),
        };
        if (spec is null || value.Problems.Items.Count != before)
        {
            return null;
        }

        try
        {
            return new SystemFile(value.File, name, system, spec, EquilibriumModelFactory.Create(system, spec));
        }
        catch (ArgumentException e)
        {
            e2.Fail(FirstLine(e.Message));
            return null;
        }
    }

    /// <summary>Reads a composition object: every component of the system once, fractions in [0, 1] summing to 1 within 0.001 (then renormalised).</summary>
    public static Ternary? ReadComposition(JsonValue value, TernarySystem system)
    {
        string[] ids = system.Components.Select(c => c.Id).ToArray();
        if (value.AsObject(ids) is not { } o)
        {
            return null;
        }

        Span<double> parts = stackalloc double[3];
        bool ok = true;
        for (int i = 0; i < 3; i++)
        {
            double? f = o.Get(ids[i])?.AsNumber(0, 1, unit: "(a fraction)");
            ok &= f is not null;
            parts[i] = f ?? 0;
        }

        if (!ok)
        {
            return null;
        }

        var t = Ternary.FromSpan(parts);
        if (Math.Abs(t.Sum - 1) > 0.001)
        {
            o.Fail($"fractions must sum to 1 within 0.001; these sum to {t.Sum:G6}");
            return null;
        }

        return t.Normalized();
    }

    private static (List<Component>? Components, UniquacComponent[]? Structure) ReadComponents(JsonObject o, bool needStructure)
    {
        if (o.Get("components")?.AsArray(1) is not { } items)
        {
            return (null, null);
        }

        var components = new List<Component>();
        var structure = new UniquacComponent[3];
        var seen = new Dictionary<string, string>(StringComparer.Ordinal);
        bool ok = true;
        foreach (JsonValue item in items)
        {
            if (item.AsObject("id", "role", "molarMass", "r", "q") is not { } c)
            {
                ok = false;
                continue;
            }

            string? id = c.Get("id") is { } idValue ? Identifiers.Read(idValue) : null;
            string? role = c.Get("role")?.AsChoice("solute", "diluent", "solvent");
            double? molarMass = c.Get("molarMass")?.AsNumber(0, 10000, minExclusive: true, unit: "kg/kmol");
            double? r = c.Get("r", needStructure)?.AsNumber(0, 1000, minExclusive: true);
            double? q = c.Get("q", needStructure)?.AsNumber(0, 1000, minExclusive: true);
            if (id is null || role is null || molarMass is null)
            {
                ok = false;
                continue;
            }

            if (seen.TryGetValue(id, out string? first))
            {
                c.Fail("id", $"component '{id}' is declared twice (first at {first})");
                ok = false;
                continue;
            }

            seen[id] = c.Path;
            var parsedRole = Enum.Parse<ComponentRole>(role, ignoreCase: true);
            if (components.Any(x => x.Role == parsedRole))
            {
                c.Fail("role", $"there can be only one {role}; '{components.First(x => x.Role == parsedRole).Id}' is already the {role}");
                ok = false;
                continue;
            }

            components.Add(new Component(id, parsedRole, molarMass.Value));
            if (r is not null && q is not null)
            {
                structure[(int)parsedRole] = new UniquacComponent(r.Value, q.Value);
            }
        }

        if (!ok)
        {
            return (null, null);
        }

        if (components.Count != 3)
        {
            string[] missing = Enum.GetValues<ComponentRole>().Where(role => components.All(c => c.Role != role)).Select(r => r.ToString().ToLowerInvariant()).ToArray();
            o.Fail("components", $"expected exactly three components, one solute, one diluent and one solvent; found {components.Count}{(missing.Length > 0 ? ", missing the " + string.Join(" and the ", missing) : string.Empty)}");
            return (null, null);
        }

        return (components, needStructure ? structure : null);
    }

    private static TieLineSpec? ReadTieLines(JsonObject eq, TernarySystem system)
    {
        double? t = ReadTemperature(eq);
        if (eq.Get("tieLines")?.AsArray(2) is not { } items)
        {
            return null;
        }

        var lines = new List<TieLine>();
        foreach (JsonValue item in items)
        {
            if (item.AsObject("raffinate", "extract") is not { } line)
            {
                continue;
            }

            Ternary? r = line.Get("raffinate") is { } rv ? ReadComposition(rv, system) : null;
            Ternary? e = line.Get("extract") is { } ev ? ReadComposition(ev, system) : null;
            if (r is not null && e is not null)
            {
                lines.Add(new TieLine(r.Value, e.Value));
            }
        }

        if (t is null || lines.Count != items.Count)
        {
            return null;
        }

        foreach (var problem in EquilibriumModelFactory.FindTieLineProblems(lines))
        {
            eq.Fail(problem.Index < 0 ? "tieLines" : $"tieLines[{problem.Index}]", problem.Message);
        }

        return new TieLineSpec(t.Value, lines);
    }

    private static NrtlSpec? ReadNrtl(JsonObject eq, TernarySystem system)
    {
        TemperatureRange? range = ReadRange(eq);
        var pairs = ReadPairs(eq, system, isNrtl: true, (p, i, j, units) =>
        {
            double? alpha = p.Get("alpha")?.AsNumber(0, 1, minExclusive: true);
            double? aij = p.Get("aij")?.AsNumber();
            double? aji = p.Get("aji")?.AsNumber();
            double? gij = p.Get("gij")?.AsNumber();
            double? gji = p.Get("gji")?.AsNumber();
            return alpha is null || aij is null || aji is null || gij is null || gji is null
                ? null
                : new NrtlPair(i, j, alpha.Value, aij.Value, aji.Value, gij.Value, gji.Value, units);
        });
        return pairs is null || range is null ? null : new NrtlSpec(pairs, range.Value);
    }

    private static UniquacSpec? ReadUniquac(JsonObject eq, TernarySystem system, UniquacComponent[] structure)
    {
        TemperatureRange? range = ReadRange(eq);
        var pairs = ReadPairs(eq, system, isNrtl: false, (p, i, j, units) =>
        {
            double? aij = p.Get("aij")?.AsNumber();
            double? aji = p.Get("aji")?.AsNumber();
            return aij is null || aji is null ? null : new UniquacPair(i, j, aij.Value, aji.Value, units);
        });
        if (pairs is null || range is null || structure.Any(s => s is null))
        {
            return null;
        }

        return new UniquacSpec(structure, pairs, range.Value);
    }

    private static List<TPair>? ReadPairs<TPair>(JsonObject eq, TernarySystem system, bool isNrtl, Func<JsonObject, int, int, InteractionUnits, TPair?> readPair)
        where TPair : class
    {
        if (eq.Get("pairs")?.AsArray(1) is not { } items)
        {
            return null;
        }

        string[] keys = isNrtl ? ["i", "j", "alpha", "aij", "aji", "gij", "gji", "units"] : ["i", "j", "aij", "aji", "units"];
        var pairs = new List<TPair>();
        var where = new Dictionary<(int, int), string>();
        bool ok = true;
        foreach (JsonValue item in items)
        {
            if (item.AsObject(keys) is not { } p)
            {
                ok = false;
                continue;
            }

            int i = ReadComponentRef(p, "i", system);
            int j = ReadComponentRef(p, "j", system);
            string? unitsText = p.Get("units")?.AsChoice("K", "J/mol", "cal/mol");
            InteractionUnits units = unitsText switch { "J/mol" => InteractionUnits.JoulePerMole, "cal/mol" => InteractionUnits.CaloriePerMole, _ => InteractionUnits.Kelvin };
            TPair? pair = readPair(p, i, j, units);
            if (i < 0 || j < 0 || unitsText is null || pair is null)
            {
                ok = false;
                continue;
            }

            if (i == j)
            {
                p.Fail("j", "a pair needs two different components");
                ok = false;
                continue;
            }

            var key = (Math.Min(i, j), Math.Max(i, j));
            if (where.TryGetValue(key, out string? first))
            {
                p.Fail($"the pair {system.Components[i].Id}/{system.Components[j].Id} is given twice (first at {first})");
                ok = false;
                continue;
            }

            where[key] = p.Path;
            pairs.Add(pair);
        }

        if (!ok)
        {
            return null;
        }

        foreach (var (a, b) in new[] { (0, 1), (0, 2), (1, 2) })
        {
            if (!where.ContainsKey((a, b)))
            {
                eq.Fail("pairs", $"the pair {system.Components[a].Id}/{system.Components[b].Id} is missing; a ternary model needs all three binary pairs");
                ok = false;
            }
        }

        return ok ? pairs : null;
    }

    /// <summary>Largest solute-free ratio in an isotherm (kg solute per kg diluent or solvent) and the range of a constant k.</summary>
    public const double MaxIsothermRatio = 1000;

    private static DistributionSpec? ReadDistribution(JsonObject eq, TernarySystem system)
    {
        _ = system;

        // A distribution coefficient need not name a temperature: without one it is taken to hold at any temperature.
        double? t = eq.Has("temperature") ? ReadTemperature(eq) : null;
        bool temperatureOk = !eq.Has("temperature") || t is not null;
        bool hasK = eq.Has("k"), hasTable = eq.Has("isotherm");
        if (hasK == hasTable)
        {
            eq.Fail("give either \"k\" (Y = k X) or \"isotherm\" ([[X, Y], ...]), not " + (hasK ? "both" : "neither"));
            return null;
        }

        DistributionIsotherm? isotherm = null;
        if (hasK)
        {
            double? k = eq.Get("k")!.Value.AsNumber(1e-6, 1e6, unit: "(Y per X, solute-free ratios)");
            isotherm = k is null ? null : DistributionIsotherm.Constant(k.Value);
        }
        else if (eq.Get("isotherm")!.Value.AsArray(2) is { } rows)
        {
            var points = new List<(double X, double Y)>();
            foreach (JsonValue row in rows)
            {
                if (row.AsArray(2) is { Count: 2 } xy && xy[0].AsNumber(0, MaxIsothermRatio, unit: "(kg solute per kg diluent)") is double x
                    && xy[1].AsNumber(0, MaxIsothermRatio, unit: "(kg solute per kg solvent)") is double y)
                {
                    if (points.Count > 0 && (x <= points[^1].X || y <= points[^1].Y))
                    {
                        row.Fail($"isotherm points must rise in X and in Y; [{x}, {y}] does not follow [{points[^1].X}, {points[^1].Y}]");
                        return null;
                    }

                    points.Add((x, y));
                }
                else
                {
                    row.Fail($"expected a pair [X, Y] of solute-free ratios from 0 to {MaxIsothermRatio:G}");
                    return null;
                }
            }

            isotherm = DistributionIsotherm.Table(points);
        }

        return !temperatureOk || isotherm is null ? null : new DistributionSpec(t, isotherm);
    }

    private static int ReadComponentRef(JsonObject p, string key, TernarySystem system)
    {
        string? id = p.Get(key)?.AsString();
        if (id is null)
        {
            return -1;
        }

        int index = system.IndexOf(id);
        if (index < 0)
        {
            p.Fail(key, $"'{id}' is not a declared component; expected one of: {string.Join(", ", system.Components.Select(c => c.Id))}");
        }

        return index;
    }

    private static string[] ModelKeys(string model) => model switch
    {
        "tie-lines" => ["temperature", "tieLines"],
        "nrtl" or "uniquac" => ["pairs", "temperatureRange"],
        _ => ["temperature", "k", "isotherm"],
    };

    private static double? ReadTemperature(JsonObject eq) => eq.Get("temperature")?.AsNumber(100, 800, unit: "K");

    private static TemperatureRange? ReadRange(JsonObject eq)
    {
        if (eq.Get("temperatureRange", required: false) is not { } v)
        {
            return DefaultActivityRange;
        }

        if (v.AsArray(2) is { Count: 2 } r && r[0].AsNumber(100, 800, unit: "K") is double lo && r[1].AsNumber(100, 800, unit: "K") is double hi)
        {
            if (hi > lo)
            {
                return new TemperatureRange(lo, hi);
            }

            v.Fail($"expected [lowest, highest] kelvin with highest above lowest, found [{lo}, {hi}]");
            return null;
        }

        v.Fail("expected [lowest, highest] in kelvin");
        return null;
    }

    private static string FirstLine(string message)
    {
        int i = message.IndexOf(" (Parameter", StringComparison.Ordinal);
        return i > 0 ? message[..i] : message;
    }
}
