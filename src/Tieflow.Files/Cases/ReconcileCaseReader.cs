using System.Text.Json;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Files;

/// <summary>Reads reconcile case files (docs/file-formats.md) strictly, collecting every problem with its file and JSON path.</summary>
public static class ReconcileCaseReader
{
    /// <summary>Smallest significance of the gross-error tests; below it the critical values lose meaning.</summary>
    public const double MinSignificance = 1e-6;

    /// <summary>Largest magnitude of a flow reading, in the flow unit of the case.</summary>
    public const double MaxFlowReading = 1e9;

    /// <summary>Sigma of a reading relative to its scale (|value|, at least 1 for flows; 1 for fractions): at least this...</summary>
    public const double MinRelativeSigma = 1e-6;

    /// <summary>...and at most this for flows (a fraction's sigma is at most 1).</summary>
    public const double MaxRelativeSigma = 1e3;

    public static ReconcileCase Load(string path)
    {
        using JsonDocument doc = JsonInputFile.Load(path);
        CaseKinds.Expect(doc.RootElement, path, CaseKinds.Reconcile);
        var problems = new InputProblems();
        ReconcileCase? result = Read(new JsonValue(doc.RootElement, path, "$", problems));
        problems.ThrowIfAny();
        return result ?? throw new InputException(path, "$", "the case could not be read");
    }

    public static ReconcileCase? Read(JsonValue root)
    {
        if (root.AsObject("components", "nodes", "streams", "measurements", "significance", "maxIterations") is not { } o)
        {
            return null;
        }

        List<string>? components = o.Get("components", required: false) is { } cv ? ReadIds(cv, "component", minimum: 1) : [];
        List<string>? nodes = o.Get("nodes") is { } nv ? ReadIds(nv, "node", minimum: 1) : null;
        List<NetworkStream>? streams = o.Get("streams") is { } sv ? ReadStreams(sv, nodes) : null;
        if (nodes is not null && streams is not null && o.Get("nodes") is { } nodesValue)
        {
            var used = new HashSet<string>(streams.SelectMany(s => new[] { s.From, s.To }).OfType<string>(), StringComparer.Ordinal);
            for (int i = 0; i < nodes.Count; i++)
            {
                if (!used.Contains(nodes[i]))
                {
                    nodesValue.Problems.Add(o.File, $"{nodesValue.Path}[{i}]", $"node '{nodes[i]}' has no stream; every node needs at least one stream entering or leaving it");
                }
            }
        }

        List<Measurement>? measurements = o.Get("measurements") is { } mv ? ReadMeasurements(mv, streams, components) : null;
        double significance = o.Get("significance", required: false)?.AsNumber(MinSignificance, 0.5, unit: "(the probability of a false alarm of the tests)") ?? 0.05;
        int maxIterations = o.Get("maxIterations", required: false)?.AsInteger(1, 1000) ?? ReconciliationOptions.Default.MaxIterations;
        if (components is null || nodes is null || streams is null || measurements is null || o.Problems.Any)
        {
            return null;
        }

        return new ReconcileCase(o.File, new ProcessNetwork(nodes, streams, components), measurements, significance, maxIterations);
    }

    private static List<string>? ReadIds(JsonValue value, string what, int minimum)
    {
        if (value.AsArray(minimum) is not { } items)
        {
            return null;
        }

        var ids = new List<string>();
        var first = new Dictionary<string, int>(StringComparer.Ordinal);
        bool ok = true;
        for (int i = 0; i < items.Count; i++)
        {
            if (Identifiers.Read(items[i]) is not { } id)
            {
                ok = false;
                continue;
            }

            if (!first.TryAdd(id, i))
            {
                items[i].Fail($"the {what} '{id}' is declared twice (first at {value.Path}[{first[id]}]); give each {what} once");
                ok = false;
                continue;
            }

            ids.Add(id);
        }

        return ok ? ids : null;
    }

    private static List<NetworkStream>? ReadStreams(JsonValue value, List<string>? nodes)
    {
        if (value.AsArray(1) is not { } items)
        {
            return null;
        }

        var known = nodes is null ? null : new HashSet<string>(nodes, StringComparer.Ordinal);
        var streams = new List<NetworkStream>();
        var first = new Dictionary<string, int>(StringComparer.Ordinal);
        bool ok = true;
        for (int i = 0; i < items.Count; i++)
        {
            if (items[i].AsObject("id", "from", "to") is not { } s)
            {
                ok = false;
                continue;
            }

            string? id = s.Get("id") is { } idValue ? Identifiers.Read(idValue) : null;
            string? from = ReadEnd(s, "from", known);
            string? to = ReadEnd(s, "to", known);
            if (id is not null && !first.TryAdd(id, i))
            {
                s.Fail("id", $"the stream '{id}' is declared twice (first at {value.Path}[{first[id]}]); give each stream once");
                id = null;
            }

            bool hasFrom = s.Has("from"), hasTo = s.Has("to");
            if (!hasFrom && !hasTo)
            {
                s.Fail("the stream has neither \"from\" nor \"to\"; give at least one (omit one for a stream that enters or leaves the network)");
                ok = false;
            }
            else if (from is not null && from == to)
            {
                s.Fail("to", $"the stream leaves and enters the same node '{from}'; expected two different nodes");
                ok = false;
            }

            if (id is null || (hasFrom && from is null) || (hasTo && to is null))
            {
                ok = false;
                continue;
            }

            streams.Add(new NetworkStream(id, from, to));
        }

        return ok ? streams : null;
    }

    private static string? ReadEnd(JsonObject s, string key, HashSet<string>? known)
    {
        if (s.Get(key, required: false) is not { } v || v.AsString() is not { } node)
        {
            return null;
        }

        if (known is not null && !known.Contains(node))
        {
            v.Fail($"'{node}' is not a node of the network; expected one of: {string.Join(", ", known)}");
            return null;
        }

        return node;
    }

    // "sigma" in the unit of the reading, or "relativeSigma" as a fraction of the reading (0.02 for 2 %); exactly one.
    // The sigma must be finite and in a range relative to the reading's scale: a sigma of 1e-300 would give the reading
    // a weight the arithmetic cannot hold, one of 1e308 a reading that carries nothing.
    private static double? ReadSigma(JsonObject m, double? reading, bool isFraction)
    {
        bool hasAbsolute = m.Has("sigma"), hasRelative = m.Has("relativeSigma");
        if (hasAbsolute == hasRelative)
        {
            m.Fail(hasAbsolute
                ? "give either \"sigma\" (in the unit of the reading) or \"relativeSigma\" (a fraction of the reading), not both"
                : "the standard deviation is missing; give \"sigma\" (in the unit of the reading) or \"relativeSigma\" (a fraction of the reading)");
            return null;
        }

        if (hasAbsolute)
        {
            JsonValue sv = m.Get("sigma")!.Value;
            double? sigma = sv.AsNumber(0, double.PositiveInfinity, minExclusive: true, unit: "(the standard deviation of the reading, in its unit)");
            if (sigma is not double sd || reading is not double value)
            {
                return null;
            }

            double scale = isFraction ? 1 : Math.Max(Math.Abs(value), 1);
            double low = MinRelativeSigma * scale, high = isFraction ? 1 : MaxRelativeSigma * scale;
            if (sd < low || sd > high)
            {
                sv.Fail($"expected a sigma between {low:G3} and {high:G3} for this reading ({(isFraction ? "a fraction" : $"from {MinRelativeSigma:G} to {MaxRelativeSigma:G} times the reading, or times 1 when the reading is below 1")}), found {sd:G6}; " +
                    "leave a quantity unmeasured rather than give it a huge sigma");
                return null;
            }

            return sd;
        }

        double? relative = m.Get("relativeSigma")!.Value.AsNumber(MinRelativeSigma, 1, unit: "(a fraction of the reading)");
        if (relative is not double r || reading is not double v)
        {
            return null;
        }

        if (v == 0)
        {
            m.Fail("relativeSigma", "a relative sigma of a zero reading is zero, which gives the reading infinite weight; give \"sigma\" instead");
            return null;
        }

        return Math.Abs(v) * r;
    }

    private static List<Measurement>? ReadMeasurements(JsonValue value, List<NetworkStream>? streams, List<string>? components)
    {
        if (value.AsArray(0) is not { } items)
        {
            return null;
        }

        var streamIds = streams is null ? null : new HashSet<string>(streams.Select(s => s.Id), StringComparer.Ordinal);
        var componentIds = components is null ? null : new HashSet<string>(components, StringComparer.Ordinal);
        var measurements = new List<Measurement>();
        var first = new Dictionary<QuantityKey, int>();
        bool ok = true;
        for (int i = 0; i < items.Count; i++)
        {
            if (items[i].AsObject("stream", "quantity", "component", "value", "sigma", "relativeSigma") is not { } m)
            {
                ok = false;
                continue;
            }

            string? stream = m.Get("stream") is { } stv ? Identifiers.Read(stv) : null;
            if (stream is not null && streamIds is not null && !streamIds.Contains(stream))
            {
                m.Fail("stream", $"'{stream}' is not a stream of the network; expected one of: {string.Join(", ", streamIds)}");
                stream = null;
            }

            string? quantity = m.Get("quantity")?.AsChoice("flow", "fraction");
            string? component = null;
            double? reading = null;
            if (quantity == "flow")
            {
                if (m.Has("component"))
                {
                    m.Fail("component", "a flow measurement has no component; remove the key or measure a \"fraction\"");
                }

                reading = m.Get("value")?.AsNumber(-MaxFlowReading, MaxFlowReading, unit: "(the flow unit of the case)");
            }
            else if (quantity == "fraction")
            {
                if (components is { Count: 0 })
                {
                    m.Fail("quantity", "the network declares no components (flow-only), so it has no fractions to measure; declare \"components\" or measure a \"flow\"");
                }
                else if (m.Get("component") is { } cv && Identifiers.Read(cv) is { } c)
                {
                    if (componentIds is not null && !componentIds.Contains(c))
                    {
                        m.Fail("component", $"'{c}' is not a declared component; expected one of: {string.Join(", ", componentIds)}");
                    }
                    else
                    {
                        component = c;
                    }
                }

                reading = m.Get("value")?.AsNumber(0, 1, unit: "(a fraction)");
            }

            double? sigma = ReadSigma(m, reading, quantity == "fraction");
            if (stream is null || quantity is null || (quantity == "fraction" && component is null) || reading is null || sigma is null)
            {
                ok = false;
                continue;
            }

            var key = quantity == "flow" ? QuantityKey.FlowOf(stream) : QuantityKey.FractionOf(stream, component!);
            if (!first.TryAdd(key, i))
            {
                m.Fail($"measures {key} again (first at {value.Path}[{first[key]}]); give each quantity one measurement");
                ok = false;
                continue;
            }

            measurements.Add(new Measurement(key, reading.Value, sigma.Value));
        }

        return ok ? measurements : null;
    }
}
