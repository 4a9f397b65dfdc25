using System.Globalization;

namespace Tieflow.Service.Cli;

/// <summary>
/// A sweep over one input of a cascade or design case: <c>NAME=FROM:TO:POINTS</c>, e.g. <c>solvent=200:1000:9</c>.
/// Names: <c>solvent</c> (solvent flow, kg/h or kmol/h), <c>stages</c>, <c>efficiency</c> (every stage),
/// <c>feed-solute</c> (solute fraction of the feed; the other two keep their ratio).
/// </summary>
internal sealed record SweepSpec(string Name, double From, double To, int Points)
{
    public const int MaxPoints = 1000;

    public static readonly string[] Names = ["solvent", "stages", "efficiency", "feed-solute"];

    public const string Form = "NAME=FROM:TO:POINTS with NAME one of solvent, stages, efficiency, feed-solute (e.g. solvent=200:1000:9)";

    /// <summary>The values of the sweep, evenly spaced from <see cref="From"/> to <see cref="To"/>; whole and distinct for stages.</summary>
    public IReadOnlyList<double> Values()
    {
        var values = new List<double>();
        for (int i = 0; i < Points; i++)
        {
            double v = Points == 1 ? From : From + ((To - From) * i / (Points - 1));
            values.Add(Name == "stages" ? Math.Round(v) : v);
        }

        return Name == "stages" ? values.Distinct().ToList() : values;
    }

    public static SweepSpec Parse(string text)
    {
        string[] parts = text.Split('=', 2);
        string[] range = parts.Length == 2 ? parts[1].Split(':') : [];
        if (parts.Length != 2 || range.Length != 3 || Array.IndexOf(Names, parts[0].Trim()) < 0)
        {
            throw new CliUsageException($"--sweep '{text}': expected {Form}");
        }

        string name = parts[0].Trim();
        if (!double.TryParse(range[0], NumberStyles.Float, CultureInfo.InvariantCulture, out double from) || !double.IsFinite(from)
            || !double.TryParse(range[1], NumberStyles.Float, CultureInfo.InvariantCulture, out double to) || !double.IsFinite(to)
            || !int.TryParse(range[2], NumberStyles.Integer, CultureInfo.InvariantCulture, out int points))
        {
            throw new CliUsageException($"--sweep '{text}': FROM and TO must be numbers and POINTS a whole number; expected {Form}");
        }

        if (points is < 1 or > MaxPoints)
        {
            throw new CliUsageException($"--sweep '{text}': expected 1 to {MaxPoints} points, found {points}");
        }

        (double lo, double hi, string what) = name switch
        {
            "solvent" => (0.0, 1e9, "a solvent flow above 0 and at most 1e9"),
            "stages" => (1.0, 200.0, "a number of stages from 1 to 200"),
            "efficiency" => (0.0, 1.0, "an efficiency above 0 and at most 1"),
            _ => (0.0, 1.0, "a feed solute fraction above 0 and below 1"),
        };
        foreach (double v in new[] { from, to })
        {
            bool ok = name switch
            {
                "stages" => v >= lo && v <= hi,
                "efficiency" => v > lo && v <= hi,
                "feed-solute" => v > lo && v < hi,
                _ => v > lo && v <= hi,
            };
            if (!ok)
            {
                throw new CliUsageException($"--sweep '{text}': {v.ToString(CultureInfo.InvariantCulture)} is out of range; expected {what}");
            }
        }

        return new SweepSpec(name, from, to, points);
    }
}
