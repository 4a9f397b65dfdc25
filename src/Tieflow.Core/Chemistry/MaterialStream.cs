namespace Tieflow.Core.Chemistry;

/// <summary>
/// A liquid stream: total flow and composition on its system's basis (kg/h with mass fractions,
/// or kmol/h with mole fractions).
/// </summary>
/// <param name="Flow">Total flow, kg/h on a mass basis or kmol/h on a mole basis; zero or more.</param>
/// <param name="Composition">Fractions in role order, summing to one.</param>
public readonly record struct MaterialStream(double Flow, Ternary Composition)
{
    /// <summary>Component flows (flow times fraction), in role order.</summary>
    public Ternary ComponentFlows => Flow * Composition;

    /// <summary>A stream from component flows; a zero total gives a zero stream with the given fallback composition.</summary>
    public static MaterialStream FromComponentFlows(Ternary componentFlows, Ternary compositionIfEmpty = default)
    {
        double total = componentFlows.Sum;
        return total > 0 ? new MaterialStream(total, (1.0 / total) * componentFlows) : new MaterialStream(0, compositionIfEmpty);
    }

    /// <summary>Total of several streams (component flows added).</summary>
    public static MaterialStream Mix(ReadOnlySpan<MaterialStream> streams)
    {
        Ternary sum = default;
        foreach (MaterialStream s in streams)
        {
            sum += s.ComponentFlows;
        }

        return FromComponentFlows(sum);
    }
}
