using System.Text.Json;
using Spectre.Console;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Distribution;

namespace Tieflow.Service.Output;

/// <summary>Cascade results as JSON (docs/file-formats.md) and as a readable stage table.</summary>
internal static class CascadeOutput
{
    /// <summary>The figures engineers ask for besides the streams.</summary>
    /// <param name="SolventToFeedRatio">Solvent flow (all stages together for cross-current) over feed flow.</param>
    /// <param name="ExtractionFactor">k S / B on solute-free flows for a constant distribution coefficient (per stage for cross-current), else null.</param>
    /// <param name="SolventInRaffinate">Solvent leaving dissolved in the final raffinate, flow unit of the system.</param>
    public sealed record Figures(double SolventToFeedRatio, double? ExtractionFactor, double SolventInRaffinate);

    public static Figures FiguresOf(IPhaseEquilibrium model, MaterialStream feed, MaterialStream solvent, CascadeResult result)
    {
        double totalSolvent = result.Arrangement == CascadeArrangement.Crosscurrent ? solvent.Flow * result.Stages.Count : solvent.Flow;
        double? factor = null;
        if (model is DistributionModel { Isotherm.ConstantCoefficient: double k } && feed.ComponentFlows.Diluent > 0)
        {
            factor = k * solvent.ComponentFlows.Solvent / feed.ComponentFlows.Diluent;
        }

        return new Figures(totalSolvent / feed.Flow, factor, result.Raffinate.ComponentFlows.Solvent);
    }

    public static void WriteJson(Utf8JsonWriter w, CascadeResult result, TernarySystem system, Figures figures, IReadOnlyList<CascadeWarning>? warnings, Action<Utf8JsonWriter>? more = null)
    {
        w.WriteStartObject();
        w.WriteStartArray("stages");
        foreach (StageResult stage in result.Stages)
        {
            w.WriteStartObject();
            w.WriteNumber("stage", stage.Stage);
            JsonOutput.WriteStream(w, "raffinate", stage.Raffinate, system);
            JsonOutput.WriteStream(w, "extract", stage.Extract, system);
            JsonOutput.WriteNumber(w, "efficiency", stage.Efficiency);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        JsonOutput.WriteStream(w, "raffinate", result.Raffinate, system);
        JsonOutput.WriteStream(w, "extract", result.Extract, system);
        JsonOutput.WriteNumber(w, "recovery", result.Recovery);
        w.WriteString("arrangement", result.Arrangement == CascadeArrangement.Crosscurrent ? "crosscurrent" : "countercurrent");
        w.WriteNumber("iterations", result.Iterations);
        JsonOutput.WriteNumber(w, "balanceResidual", result.BalanceResidual);
        w.WriteNumber("solventToFeedRatio", JsonOutput.Round(figures.SolventToFeedRatio));
        if (figures.ExtractionFactor is double factor)
        {
            w.WriteNumber("extractionFactor", JsonOutput.Round(factor));
        }
        else
        {
            w.WriteNull("extractionFactor");
        }

        w.WriteNumber("solventInRaffinate", JsonOutput.Round(figures.SolventInRaffinate));
        if (warnings is not null)
        {
            JsonOutput.WriteWarnings(w, warnings);
        }

        more?.Invoke(w);
        w.WriteEndObject();
    }

    public static void WriteTable(IAnsiConsole console, CascadeResult result, TernarySystem system, Figures figures, IReadOnlyList<CascadeWarning> warnings)
    {
        var flagged = new HashSet<int>(warnings.Where(x => x.Stage is not null).Select(x => x.Stage!.Value));
        var rows = new List<(string, string?, MaterialStream)>();
        foreach (StageResult s in result.Stages)
        {
            string e = s.Efficiency.ToString("0.###", System.Globalization.CultureInfo.InvariantCulture);
            string mark = flagged.Contains(s.Stage) ? " *" : string.Empty;
            rows.Add(($"stage {s.Stage} raffinate{mark}", e, s.Raffinate));
            rows.Add(($"stage {s.Stage} extract{mark}", null, s.Extract));
        }

        rows.Add(("final raffinate", null, result.Raffinate));
        rows.Add((result.Arrangement == CascadeArrangement.Crosscurrent ? "combined extract" : "final extract", null, result.Extract));
        console.Write(TextOutput.StreamTable(system, rows));
        console.WriteLine($"recovery of {system.Solute.Id} into the extract: {result.Recovery:P2}; balance residual {result.BalanceResidual:E1}; {result.Iterations} iteration(s)");
        string unit = system.FlowUnit;
        string factor = figures.ExtractionFactor is double f ? $"; extraction factor {f:G4}" : string.Empty;
        console.WriteLine($"solvent-to-feed ratio {figures.SolventToFeedRatio:G4}{factor}; {system.Solvent.Id} dissolved in the final raffinate {figures.SolventInRaffinate:G4} {unit}");
        TextOutput.WriteWarnings(console, warnings);
    }
}
