using System.Globalization;
using System.Text;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Files;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow calc cascade|design --case FILE --sweep NAME=FROM:TO:POINTS</c>: runs the case once per value of one
/// input and prints one CSV row per run (or, with <c>--json</c>, <c>{ "sweep", "points": [...], "notice" }</c>). A run
/// that cannot be computed is a row with status <c>failed</c> and the reason, not the end of the sweep.
/// </summary>
internal static class SweepHandler
{
    private static readonly string[] CascadeColumns = ["solventToFeed", "recovery", "raffinateSolute", "extractSolute", "raffinateFlow", "extractFlow"];

    private static readonly string[] DesignColumns = ["stages", "fractionalStages", "solventFlow", "minimumSolventFlow", "solventToFeed", "recovery"];

    public static int RunCascade(CliContext context, string casePath, string sweepText, bool json)
    {
        SweepSpec sweep = SweepSpec.Parse(sweepText);
        CascadeCase c = CaseReader.LoadCascade(casePath);
        var rows = new List<(double Value, double[]? Figures, string? Failure)>();
        foreach (double v in sweep.Values())
        {
            CascadeCase point = Apply(c, sweep, v, casePath);
            rows.Add(Try(v, () =>
            {
                CascadeResult r = CascadeRun.Solve(point);
                double solventTotal = point.SolventFlows?.Sum() ?? point.Solvent.Flow;
                return [solventTotal / point.Feed.Flow, r.Recovery, r.Raffinate.Composition.Solute, r.Extract.Composition.Solute, r.Raffinate.Flow, r.Extract.Flow];
            }));
        }

        Print(context, sweep, CascadeColumns, rows, json);
        return ExitCodes.Success;
    }

    public static int RunDesign(CliContext context, string casePath, string sweepText, bool json)
    {
        SweepSpec sweep = SweepSpec.Parse(sweepText);
        DesignCase d = CaseReader.LoadDesign(casePath);
        if ((sweep.Name == "stages" && d.Find != DesignGoal.Solvent) || (sweep.Name == "solvent" && d.Find != DesignGoal.Stages))
        {
            throw new InputException(casePath, "$.find", $"a design that finds \"{FindText(d.Find)}\" cannot sweep {sweep.Name}; sweep " +
                (d.Find == DesignGoal.Stages ? "solvent, efficiency or feed-solute" : d.Find == DesignGoal.Solvent ? "stages, efficiency or feed-solute" : "efficiency or feed-solute"));
        }

        var rows = new List<(double Value, double[]? Figures, string? Failure)>();
        foreach (double v in sweep.Values())
        {
            CascadeCase c = Apply(d.Cascade, sweep, v, casePath);
            var design = new CascadeDesign(c.System.Model, c.TemperatureKelvin);
            rows.Add(Try(v, () =>
            {
                if (d.Find == DesignGoal.MinimumSolvent)
                {
                    MinimumSolventResult m = design.FindMinimumSolvent(c.Feed, c.Solvent.Composition, d.Target);
                    return [double.NaN, double.NaN, m.MinimumSolventFlow, m.MinimumSolventFlow, m.MinimumSolventFlow / c.Feed.Flow, double.NaN];
                }

                DesignResult r = d.Find == DesignGoal.Stages
                    ? design.FindStages(c.Feed, c.Solvent, d.Target, c.Efficiencies)
                    : design.FindSolvent(c.Feed, c.Solvent.Composition, c.Stages, d.Target, c.Efficiencies);
                return [r.Stages, r.FractionalStages, r.SolventFlow, r.MinimumSolventFlow, r.SolventFlow / c.Feed.Flow, r.Cascade.Recovery];
            }));
        }

        Print(context, sweep, DesignColumns, rows, json);
        return ExitCodes.Success;
    }

    /// <summary>The case with the swept input set to <paramref name="value"/>.</summary>
    private static CascadeCase Apply(CascadeCase c, SweepSpec sweep, double value, string path)
    {
        switch (sweep.Name)
        {
            case "solvent":
                if (c.SolventFlows is { } flows)
                {
                    double scale = value / flows.Sum();
                    double[] scaled = flows.Select(f => f * scale).ToArray();
                    return c with { Solvent = new MaterialStream(scaled[0], c.Solvent.Composition), SolventFlows = scaled };
                }

                return c with { Solvent = new MaterialStream(value, c.Solvent.Composition) };
            case "stages":
                int n = (int)value;
                if (c.Efficiencies.Distinct().Count() > 1 || (c.SolventFlows is not null))
                {
                    throw new InputException(path, c.SolventFlows is not null ? "$.solvent.flow" : "$.efficiency",
                        "a list with one value per stage fixes the number of stages; give one number to sweep the stages");
                }

                return c with { Stages = n, Efficiencies = Enumerable.Repeat(c.Efficiencies[0], n).ToArray() };
            case "efficiency":
                return c with { Efficiencies = Enumerable.Repeat(value, Math.Max(c.Efficiencies.Count, 1)).ToArray() };
            default:
                Ternary f = c.Feed.Composition;
                double rest = f.Diluent + f.Solvent;
                if (rest <= 0)
                {
                    throw new InputException(path, "$.feed.composition", "the feed is all solute; a feed-solute sweep needs some diluent");
                }

                var composition = new Ternary(value, (1 - value) * f.Diluent / rest, (1 - value) * f.Solvent / rest);
                return c with { Feed = new MaterialStream(c.Feed.Flow, composition) };
        }
    }

    private static (double, double[]?, string?) Try(double value, Func<double[]> run)
    {
        try
        {
            return (value, run(), null);
        }
        catch (Exception e) when (e is CascadeException or EquilibriumException or InfeasibleSpecificationException or ArithmeticException or ArgumentException)
        {
            return (value, null, e.Message);
        }
    }

    private static void Print(CliContext context, SweepSpec sweep, string[] columns, List<(double Value, double[]? Figures, string? Failure)> rows, bool json)
    {
        if (json)
        {
            JsonOutput.Print(context.Output, w =>
            {
                w.WriteStartObject();
                w.WriteString("sweep", sweep.Name);
                w.WriteStartArray("points");
                foreach (var (value, figures, failure) in rows)
                {
                    w.WriteStartObject();
                    JsonOutput.WriteNumber(w, sweep.Name, value);
                    for (int i = 0; i < columns.Length; i++)
                    {
                        JsonOutput.WriteNumber(w, columns[i], figures is null ? double.NaN : figures[i]);
                    }

                    w.WriteString("status", failure is null ? "ok" : "failed");
                    w.WriteString("message", failure);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                JsonOutput.WriteNotice(w);
                w.WriteEndObject();
            });
            return;
        }

        context.Output.WriteLine(string.Join(',', [sweep.Name, .. columns, "status", "message"]));
        foreach (var (value, figures, failure) in rows)
        {
            var line = new StringBuilder(Csv(value));
            foreach (int i in Enumerable.Range(0, columns.Length))
            {
                line.Append(',').Append(figures is null ? string.Empty : Csv(figures[i]));
            }

            line.Append(',').Append(failure is null ? "ok" : "failed").Append(',').Append(failure is null ? string.Empty : Quote(failure));
            context.Output.WriteLine(line.ToString());
        }

        context.Error.WriteLine(Notices.Advisory);
    }

    private static string Csv(double v) => double.IsFinite(v) ? v.ToString("G10", CultureInfo.InvariantCulture) : string.Empty;

    private static string Quote(string s) => "\"" + s.Replace("\"", "\"\"", StringComparison.Ordinal).ReplaceLineEndings(" ") + "\"";

    private static string FindText(DesignGoal goal) => goal switch { DesignGoal.Solvent => "solvent", DesignGoal.MinimumSolvent => "minimum-solvent", _ => "stages" };
}
