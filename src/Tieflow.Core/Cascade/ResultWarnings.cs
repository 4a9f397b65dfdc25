using System.Globalization;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Distribution;
using Tieflow.Core.Equilibrium.TieLines;

namespace Tieflow.Core.Cascade;

/// <summary>
/// Warnings about splits, cascades and designs: compositions outside the range of the equilibrium data (below the
/// lowest or above the highest tie line of a table, beyond the last point of an isotherm table), a temperature outside
/// the range of the model's parameters, a solvent that strips nothing or loads the raffinate, and a design close to the
/// minimum solvent flow.
/// </summary>
public static class ResultWarnings
{
    /// <summary>Below this multiple of the minimum solvent flow a design warns that the stage count is very sensitive.</summary>
    public const double NearMinimumSolventRatio = 1.2;

    /// <summary>Warnings about a solved cascade (stage compositions, temperature, the solvent's effect).</summary>
    /// <param name="model">The equilibrium model the cascade was solved with.</param>
    /// <param name="temperatureKelvin">Temperature of the stages, kelvin.</param>
    /// <param name="feed">Feed to stage 1.</param>
    /// <param name="solvent">Solvent (per stage for a cross-current cascade).</param>
    /// <param name="result">The solved cascade.</param>
    public static IReadOnlyList<CascadeWarning> ForCascade(IPhaseEquilibrium model, double temperatureKelvin, MaterialStream feed, MaterialStream solvent, CascadeResult result)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(result);
        var warnings = new List<CascadeWarning>();
        Temperature(model, temperatureKelvin, warnings);
        foreach (StageResult stage in result.Stages)
        {
            DataRange(model, stage.Raffinate.Composition, stage.Stage, warnings);
        }

        string solute = model.System.Solute.Id;
        double feedSolute = feed.ComponentFlows.Solute;
        double raffinateSolute = result.Raffinate.ComponentFlows.Solute;
        if (feedSolute > 0 && raffinateSolute > feedSolute * (1 + 1e-9))
        {
            warnings.Add(new CascadeWarning("solvent-loads-raffinate", null,
                $"The solvent loads the raffinate: the final raffinate carries {F(raffinateSolute)} {Unit(model)} of {solute} against {F(feedSolute)} {Unit(model)} in the feed (recovery {F(100 * result.Recovery)} %). The solvent brings in more {solute} than it takes out; use a leaner solvent."));
        }
        else if (solvent.Composition.Solute > 0)
        {
            // x* of the raffinate in equilibrium with the solvent as it enters: when the feed is already that lean, the
            // solvent can take nothing from it.
            double xStar = EquilibriumRaffinate(model, temperatureKelvin, solvent.Composition.Solute);
            if (double.IsFinite(xStar) && xStar >= feed.Composition.Solute)
            {
                warnings.Add(new CascadeWarning("solvent-strips-nothing", null,
                    $"The solvent strips nothing: it enters with a {solute} fraction of {F(solvent.Composition.Solute)}, in equilibrium with a raffinate of {F(xStar)}, at or above the feed's {F(feed.Composition.Solute)}. Use a leaner solvent."));
            }
        }

        return warnings;
    }

    /// <summary>Warnings about a design: those of its cascade, and a solvent flow below 1.2 times the minimum.</summary>
    public static IReadOnlyList<CascadeWarning> ForDesign(IPhaseEquilibrium model, double temperatureKelvin, MaterialStream feed, Ternary solventComposition, DesignResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        var warnings = new List<CascadeWarning>(ForCascade(model, temperatureKelvin, feed, new MaterialStream(result.SolventFlow, solventComposition), result.Cascade));
        if (result.MinimumSolventFlow > 0 && result.SolventFlow < NearMinimumSolventRatio * result.MinimumSolventFlow)
        {
            warnings.Add(new CascadeWarning("near-minimum-solvent", null,
                $"The solvent flow is {F(result.SolventFlow / result.MinimumSolventFlow)} times the minimum ({F(result.MinimumSolventFlow)} {Unit(model)}): below {NearMinimumSolventRatio.ToString(CultureInfo.InvariantCulture)} times the minimum the stage count is very sensitive to the solvent flow, the efficiency and the equilibrium data."));
        }

        return warnings;
    }

    /// <summary>Warnings about an equilibrium split (the phases against the data's range, the temperature).</summary>
    public static IReadOnlyList<CascadeWarning> ForSplit(IPhaseEquilibrium model, double temperatureKelvin, PhaseSplit split)
    {
        ArgumentNullException.ThrowIfNull(model);
        var warnings = new List<CascadeWarning>();
        Temperature(model, temperatureKelvin, warnings);
        if (split.IsTwoPhase)
        {
            DataRange(model, split.Raffinate, null, warnings);
        }

        return warnings;
    }

    private static void Temperature(IPhaseEquilibrium model, double temperatureKelvin, List<CascadeWarning> warnings)
    {
        TemperatureRange range = model.ValidTemperatures;
        if (!range.Contains(temperatureKelvin))
        {
            warnings.Add(new CascadeWarning("temperature-outside-data", null,
                $"The temperature {F(temperatureKelvin)} K is outside the range of the equilibrium data ({F(range.MinKelvin)} to {F(range.MaxKelvin)} K): the results are an extrapolation."));
        }
    }

    private static void DataRange(IPhaseEquilibrium model, Ternary raffinate, int? stage, List<CascadeWarning> warnings)
    {
        string where = stage is int n ? $"Stage {n}" : "The split";
        string solute = model.System.Solute.Id;
        switch (model)
        {
            case TieLineTableModel table when table.TieLines.Count > 0:
            {
                double lowest = double.PositiveInfinity, highest = double.NegativeInfinity;
                foreach (TieLine line in table.TieLines)
                {
                    lowest = Math.Min(lowest, line.Raffinate.Solute);
                    highest = Math.Max(highest, line.Raffinate.Solute);
                }

                // A table that starts at the solute-free binary has no extrapolation below it.
                double x = raffinate.Solute;
                if (x < lowest * (1 - 1e-9))
                {
                    warnings.Add(new CascadeWarning("below-lowest-tie-line", stage,
                        $"{where}: the raffinate's {solute} fraction {F(x)} is below the lowest tie line of the data ({F(lowest)}): extrapolated."));
                }
                else if (x > highest * (1 + 1e-9))
                {
                    warnings.Add(new CascadeWarning("above-highest-tie-line", stage,
                        $"{where}: the raffinate's {solute} fraction {F(x)} is above the highest tie line of the data ({F(highest)}): extrapolated."));
                }

                break;
            }

            case DistributionModel distribution when distribution.Isotherm.Points is { Count: > 0 } points:
            {
                double lastX = points[^1].X;
                double ratio = raffinate.Diluent > 0 ? raffinate.Solute / raffinate.Diluent : double.PositiveInfinity;
                if (ratio > lastX * (1 + 1e-9))
                {
                    warnings.Add(new CascadeWarning("above-isotherm-data", stage,
                        $"{where}: the raffinate's {solute} ratio {F(ratio)} is beyond the last point of the isotherm ({F(lastX)}): extrapolated on its last slope."));
                }

                break;
            }
        }

    }

    private static double EquilibriumRaffinate(IPhaseEquilibrium model, double temperatureKelvin, double extractSolute)
    {
        try
        {
            SoluteLimits limits = model.SoluteLimits(temperatureKelvin);
            return extractSolute > limits.Extract ? double.PositiveInfinity : model.TieLineFromExtract(extractSolute, temperatureKelvin).Raffinate.Solute;
        }
        catch (EquilibriumException)
        {
            return double.NaN;
        }
    }

    private static string Unit(IPhaseEquilibrium model) => model.System.FlowUnit;

    private static string F(double x) => x.ToString("G4", CultureInfo.InvariantCulture);
}
