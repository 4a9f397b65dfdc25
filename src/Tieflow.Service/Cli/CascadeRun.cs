using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Files;

namespace Tieflow.Service.Cli;

/// <summary>Solves the cascade of a case: the arrangement as given, or a cross-current train with its own fresh solvent flow per stage.</summary>
internal static class CascadeRun
{
    public static CascadeResult Solve(CascadeCase c)
    {
        var solver = new CascadeSolver(c.System.Model, c.TemperatureKelvin);
        return c.SolventFlows is { } flows
            ? SolveCrosscurrent(solver, c.Feed, c.Solvent.Composition, flows, c.Efficiencies)
            : solver.Solve(c.Arrangement, c.Feed, c.Solvent, c.Efficiencies);
    }

    /// <summary>Cross-current, stage k fed with <paramref name="flows"/>[k] of fresh solvent; the extracts are combined.</summary>
    public static CascadeResult SolveCrosscurrent(CascadeSolver solver, MaterialStream feed, Ternary solventComposition, IReadOnlyList<double> flows, IReadOnlyList<double> efficiencies)
    {
        var stages = new StageResult[flows.Count];
        MaterialStream raffinate = feed;
        Ternary extract = default;
        double balance = 0;
        for (int k = 0; k < flows.Count; k++)
        {
            var solvent = new MaterialStream(flows[k], solventComposition);
            stages[k] = solver.SolveStage(raffinate, solvent, efficiencies[k]) with { Stage = k + 1 };
            Ternary residual = raffinate.ComponentFlows + solvent.ComponentFlows - stages[k].Raffinate.ComponentFlows - stages[k].Extract.ComponentFlows;
            balance = Math.Max(balance, Ternary.MaxDifference(residual, default) / (raffinate.Flow + solvent.Flow));
            raffinate = stages[k].Raffinate;
            extract += stages[k].Extract.ComponentFlows;
        }

        double feedSolute = feed.ComponentFlows.Solute;
        double recovery = feedSolute > 0 ? 1 - (raffinate.ComponentFlows.Solute / feedSolute) : 0;
        return new CascadeResult(CascadeArrangement.Crosscurrent, CascadeStatus.Converged, stages, raffinate,
            MaterialStream.FromComponentFlows(extract, solventComposition), recovery, flows.Count, balance);
    }
}
