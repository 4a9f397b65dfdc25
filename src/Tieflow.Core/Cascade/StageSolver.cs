using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Numerics;

namespace Tieflow.Core.Cascade;

/// <summary>
/// One stage with a Murphree raffinate efficiency: the leaving extract is parametrised by its solute fraction y on
/// the extract branch, x* is the raffinate end of its tie line, the leaving raffinate is the raffinate-branch point
/// with x_out = x_in - E (x_in - x*), and y is the root of the condition that the mixture lies on the line through
/// the two leaving phases (Brent's method on a sign-changing bracket). The lever rule then gives both flows.
/// </summary>
internal static class StageSolver
{
    public static StageResult Solve(Envelope envelope, int stage, MaterialStream raffinateIn, MaterialStream extractIn, double efficiency, CascadeSolverOptions options, out int iterations)
    {
        Ternary m = raffinateIn.ComponentFlows + extractIn.ComponentFlows;
        double total = m.Sum;
        if (!(total > 0))
        {
            throw new CascadeException($"Stage {stage}: nothing enters the stage (raffinate-side {raffinateIn.Flow}, extract-side {extractIn.Flow}); give it a feed and a solvent flow above zero.");
        }

        Ternary z = (1 / total) * m;
        PhaseSplit split = Split(envelope, stage, z);
        if (!split.IsTwoPhase)
        {
            throw OnePhase(envelope, $"Stage {stage}: the mixture of the entering streams", raffinateIn.ComponentFlows, extractIn.ComponentFlows);
        }

        double xIn = raffinateIn.Flow > 0 ? raffinateIn.Composition.Solute : split.Raffinate.Solute;
        Ternary r, e;
        double xStar;
        iterations = 0;
        if (efficiency == 1 || z.Solute == 0)
        {
            r = split.Raffinate;
            e = split.Extract;
            xStar = r.Solute;
        }
        else
        {
            var state = new StageFunction(envelope, z, xIn, efficiency);
            double y = FindExtract(state, split.Extract.Solute, stage, options, out iterations);
            TieLine tie = envelope.FromExtract(y);
            xStar = tie.Raffinate.Solute;
            double xOut = state.RaffinateSolute(xStar);
            if (xOut < 0 || xOut > envelope.RaffinateMax)
            {
                throw new CascadeException($"Stage {stage}: with efficiency {efficiency} the raffinate would leave with solute fraction {xOut:G6}, outside the model's raffinate branch [0, {envelope.RaffinateMax:G6}]. Raise the stage efficiency or lower the solute content of the entering raffinate.");
            }

            r = envelope.Raffinate(xOut);
            e = tie.Extract;
        }

        (double l, double v) = Envelope.Lever(m, r, e);
        if (l < -1e-12 * total || v < -1e-12 * total)
        {
            throw new CascadeException($"Stage {stage}: the mixture does not lie between the leaving raffinate and extract (raffinate {l:G6}, extract {v:G6}); the stage is outside the model's two-phase data. Raise the solvent flow or check the equilibrium data.");
        }

        return new StageResult(stage, new MaterialStream(Math.Max(l, 0), r), new MaterialStream(Math.Max(v, 0), e), efficiency, xStar);
    }

    internal static CascadeException OnePhase(Envelope envelope, string where, Ternary raffinateSide, Ternary extractSide)
    {
        Ternary z = (raffinateSide + extractSide).Normalized();
        TernarySystem system = envelope.Model.System;
        return new CascadeException($"{where} ({system.Solute.Id} {z.Solute:G4}, {system.Diluent.Id} {z.Diluent:G4}, {system.Solvent.Id} {z.Solvent:G4}) is one liquid phase, so it cannot be separated. {OnePhaseAdvice(envelope, raffinateSide, extractSide)}");
    }

    /// <summary>Which way the solvent-to-feed ratio must move for the mixture to split (only on the error path).</summary>
    internal static string OnePhaseAdvice(Envelope envelope, Ternary raffinateSide, Ternary extractSide)
    {
        foreach (double factor in (ReadOnlySpan<double>)[2, 5, 20])
        {
            if (TwoPhase(envelope, raffinateSide + (factor * extractSide)))
            {
                return "Raise the solvent flow (the solvent-to-feed ratio) so that the mixture splits into two phases.";
            }
        }

        foreach (double factor in (ReadOnlySpan<double>)[0.5, 0.2, 0.05])
        {
            if (TwoPhase(envelope, raffinateSide + (factor * extractSide)))
            {
                return "Lower the solvent flow (the solvent-to-feed ratio): with this much solvent the feed dissolves in it.";
            }
        }

        return "No solvent-to-feed ratio splits these streams at this temperature: check the solvent, the feed's solute content and the temperature.";
    }

    private static bool TwoPhase(Envelope envelope, Ternary mixture)
    {
        try
        {
            return mixture.Sum > 0 && envelope.Split(mixture.Normalized()).IsTwoPhase;
        }
        catch (EquilibriumException)
        {
            return false;
        }
    }

    private static PhaseSplit Split(Envelope envelope, int stage, Ternary z)
    {
        try
        {
            return envelope.Split(z);
        }
        catch (EquilibriumException ex)
        {
            throw new CascadeException($"Stage {stage}: the phase split of the stage mixture failed: {ex.Message}", ex);
        }
    }

    private static double FindExtract(StageFunction f, double yEquilibrium, int stage, CascadeSolverOptions options, out int iterations)
    {
        double yMax = f.Envelope.ExtractMax;
        double yEq = Math.Clamp(yEquilibrium, 0, yMax);
        double gEq = f.Evaluate(yEq);
        double g0 = f.Evaluate(0);
        double tolerance = options.Tolerance * Math.Max(yEq, 1e-3);

        // Less transfer than at equilibrium usually puts the leaving extract between solute-free and equilibrium.
        if (g0 * gEq <= 0 && BracketedRoot.TryFind(static (y, s) => s.Evaluate(y), f, 0, yEq, g0, gEq, tolerance, options.MaxStageIterations, out double root, out iterations))
        {
            return root;
        }

        // Otherwise (back-transfer into the raffinate, extract-side inlet rich in solute) scan the whole branch.
        const int Cells = 32;
        if (RootBracketing.TryScan(static (y, s) => s.Evaluate(y), f, 0, yMax, Cells, tolerance, options.MaxStageIterations, out root, out iterations, fFrom: g0))
        {
            return root;
        }

        throw new CascadeException($"Stage {stage}: no extract on the model's extract branch closes the stage balance with efficiency {f.Efficiency}. "
            + "A low efficiency can ask for a raffinate that carries more solute than enters the stage (an entering raffinate that is not saturated with solvent takes some up): raise the stage efficiency, "
            + "or check that the stage mixture lies within the model's two-phase data.");
    }

    private sealed class StageFunction(Envelope envelope, Ternary z, double xIn, double efficiency)
    {
        public Envelope Envelope { get; } = envelope;

        public double Efficiency { get; } = efficiency;

        public double RaffinateSolute(double xStar) => xIn - (Efficiency * (xIn - xStar));

        public double Evaluate(double y)
        {
            TieLine tie = Envelope.FromExtract(y);
            Ternary r = Envelope.Raffinate(RaffinateSolute(tie.Raffinate.Solute));
            return Envelope.Det(r, tie.Extract, z);
        }
    }
}
