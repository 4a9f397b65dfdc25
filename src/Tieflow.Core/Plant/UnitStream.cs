using System.Globalization;
using Tieflow.Core.Cascade;

namespace Tieflow.Core.Plant;

/// <summary>
/// One stream of a unit: the feed, the solvent, or the raffinate or extract leaving stage <see cref="Stage"/> (1-based).
/// <see cref="Stage"/> is 0 for the feed, the solvent and the combined extract of a cross-current unit.
/// </summary>
/// <param name="Phase">Which stream.</param>
/// <param name="Stage">The stage it leaves (1-based), or 0 for a stream that leaves no single stage.</param>
public readonly record struct UnitStream(StreamPhase Phase, int Stage)
{
    /// <summary>The feed.</summary>
    public static UnitStream Feed => new(StreamPhase.Feed, 0);

    /// <summary>The fresh solvent.</summary>
    public static UnitStream Solvent => new(StreamPhase.Solvent, 0);

    /// <summary>The raffinate leaving stage <paramref name="stage"/>.</summary>
    /// <param name="stage">1-based stage number.</param>
    public static UnitStream RaffinateOf(int stage) => new(StreamPhase.Raffinate, stage);

    /// <summary>The extract leaving stage <paramref name="stage"/>.</summary>
    /// <param name="stage">1-based stage number.</param>
    public static UnitStream ExtractOf(int stage) => new(StreamPhase.Extract, stage);

    /// <summary>The final raffinate of a unit of <paramref name="stages"/> stages (it leaves the last stage).</summary>
    /// <param name="stages">Number of stages.</param>
    public static UnitStream FinalRaffinate(int stages) => RaffinateOf(stages);

    /// <summary>The extract product: leaving stage 1 (counter-current) or the combined extracts (cross-current, stage 0).</summary>
    /// <param name="arrangement">How the stages are connected.</param>
    public static UnitStream FinalExtract(CascadeArrangement arrangement) =>
        arrangement == CascadeArrangement.Countercurrent ? ExtractOf(1) : new(StreamPhase.Extract, 0);

    /// <summary>
    /// Reads a stream name: <c>feed</c>, <c>solvent</c>, <c>raffinate</c>, <c>extract</c>, <c>raffinate-N</c> or <c>extract-N</c>.
    /// </summary>
    /// <param name="name">The name as written in a plant file.</param>
    /// <param name="stages">Number of stages of the unit.</param>
    /// <param name="arrangement">How the stages are connected.</param>
    /// <param name="stream">The stream, when the name is valid for the unit.</param>
    /// <param name="problem">Why the name is not valid, otherwise.</param>
    /// <returns>True when the name names a stream of the unit.</returns>
    public static bool TryParse(string name, int stages, CascadeArrangement arrangement, out UnitStream stream, out string problem)
    {
        ArgumentNullException.ThrowIfNull(name);
        stream = default;
        problem = string.Empty;
        switch (name)
        {
            case "feed":
                stream = Feed;
                return true;
            case "solvent":
                stream = Solvent;
                return true;
            case "raffinate":
                stream = FinalRaffinate(stages);
                return true;
            case "extract":
                stream = FinalExtract(arrangement);
                return true;
        }

        int dash = name.LastIndexOf('-');
        string head = dash > 0 ? name[..dash] : name;
        if (dash > 0 && (head == "raffinate" || head == "extract")
            && int.TryParse(name.AsSpan(dash + 1), NumberStyles.None, CultureInfo.InvariantCulture, out int stage))
        {
            if (stage < 1 || stage > stages)
            {
                problem = $"stream \"{name}\" names stage {stage}, but the unit has stages 1 to {stages}";
                return false;
            }

            stream = head == "raffinate" ? RaffinateOf(stage) : ExtractOf(stage);
            return true;
        }

        problem = $"unknown stream \"{name}\"; expected feed, solvent, raffinate, extract, raffinate-N or extract-N (N from 1 to {stages})";
        return false;
    }

    /// <summary>True for the feed, the solvent, the final raffinate and the extract product.</summary>
    /// <param name="stages">Number of stages of the unit.</param>
    /// <param name="arrangement">How the stages are connected.</param>
    public bool IsTerminal(int stages, CascadeArrangement arrangement) =>
        Phase is StreamPhase.Feed or StreamPhase.Solvent || this == FinalRaffinate(stages) || this == FinalExtract(arrangement);

    /// <summary>
    /// The name used in records and reports: <c>feed</c>, <c>solvent</c>, <c>raffinate</c> and <c>extract</c> for the terminal
    /// streams, <c>raffinate-N</c> and <c>extract-N</c> for the others.
    /// </summary>
    /// <param name="stages">Number of stages of the unit.</param>
    /// <param name="arrangement">How the stages are connected.</param>
    public string Name(int stages, CascadeArrangement arrangement)
    {
        if (Phase == StreamPhase.Feed)
        {
            return "feed";
        }

        if (Phase == StreamPhase.Solvent)
        {
            return "solvent";
        }

        if (this == FinalRaffinate(stages))
        {
            return "raffinate";
        }

        if (this == FinalExtract(arrangement))
        {
            return "extract";
        }

        return string.Create(CultureInfo.InvariantCulture, $"{(Phase == StreamPhase.Raffinate ? "raffinate" : "extract")}-{Stage}");
    }
}
