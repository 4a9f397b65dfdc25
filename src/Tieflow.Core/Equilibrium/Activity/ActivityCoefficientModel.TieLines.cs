using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Activity;

/// <content>Tie lines with a given solute fraction at one end, and the tie-line family per temperature.</content>
public abstract partial class ActivityCoefficientModel
{
    private const double MinTieLineLength = 1e-3;

    private TieLine TieLineFrom(double soluteFraction, double temperatureKelvin, bool fromRaffinate)
    {
        Preconditions.Positive(temperatureKelvin);
        string phase = fromRaffinate ? "raffinate" : "extract";
        if (!double.IsFinite(soluteFraction) || soluteFraction < 0)
        {
            throw new ArgumentOutOfRangeException($"{phase}SoluteFraction", soluteFraction, "Expected a solute fraction of 0 or more.");
        }

        TieLineFamily family = Family(temperatureKelvin);
        double limit = fromRaffinate ? family.Limits.Raffinate : family.Limits.Extract;
        if (soluteFraction > limit + 1e-12)
        {
            throw new EquilibriumException(
                $"{ModelName}: no tie line at {F(temperatureKelvin)} K has {(fromRaffinate ? "a raffinate" : "an extract")} solute fraction of {F(soluteFraction)}; " +
                $"the largest is {F(limit)} ({(family.ReachesPlaitPoint ? "near the plait point" : "at the end of the traced tie lines")}).");
        }

        soluteFraction = Math.Min(soluteFraction, limit);
        Ternary[] fixedSide = fromRaffinate ? family.Raffinate : family.Extract;
        int k = 0;
        while (k < fixedSide.Length - 2 && !(fixedSide[k].Solute <= soluteFraction && soluteFraction <= fixedSide[k + 1].Solute))
        {
            k++;
        }

        double span = fixedSide[k + 1].Solute - fixedSide[k].Solute;
        double t = span > 0 ? Math.Clamp((soluteFraction - fixedSide[k].Solute) / span, 0, 1) : 0;
        Ternary r = ((1 - t) * family.RaffinateMole[k]) + (t * family.RaffinateMole[k + 1]);
        Ternary e = ((1 - t) * family.ExtractMole[k]) + (t * family.ExtractMole[k + 1]);
        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);
        bool ok = fromRaffinate
            ? SolveWithFixedSolute(state, soluteFraction, ref r, ref e)
            : SolveWithFixedSolute(state, soluteFraction, ref e, ref r);
        if (!ok)
        {
            throw new EquilibriumException(
                $"{ModelName}: the tie line with {phase} solute fraction {F(soluteFraction)} at {F(temperatureKelvin)} K did not converge to isoactivity " +
                $"within {Tolerance:G3} in {MaxIterations} Newton iterations.");
        }

        return new TieLine(System.FromMole(r), System.FromMole(e));
    }

    private TieLineFamily Family(double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        TieLineFamily? cached = _family;
        if (cached is not null && cached.TemperatureKelvin.Equals(temperatureKelvin))
        {
            return cached;
        }

        TieLineFamily family = TraceFamily(temperatureKelvin);
        _family = family;
        return family;
    }

    private TieLineFamily TraceFamily(double temperatureKelvin)
    {
        // The binary tie line: split diluent-solvent mixtures until one splits.
        PhaseSplit binary = default;
        foreach (double w in new[] { 0.5, 0.2, 0.8, 0.05, 0.95, 0.35, 0.65, 0.01, 0.99 })
        {
            binary = Split(new Ternary(0, 1 - w, w), temperatureKelvin);
            if (binary.IsTwoPhase)
            {
                break;
            }
        }

        if (!binary.IsTwoPhase)
        {
            throw new EquilibriumException(
                $"{ModelName}: {System.Diluent.Id} and {System.Solvent.Id} do not form two liquid phases at {F(temperatureKelvin)} K, so there are no tie lines.");
        }

        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);
        var raffinate = new List<Ternary> { binary.Raffinate };
        var extract = new List<Ternary> { binary.Extract };
        var raffinateMole = new List<Ternary> { System.ToMole(binary.Raffinate) };
        var extractMole = new List<Ternary> { System.ToMole(binary.Extract) };

        // Distribution of the solute at infinite dilution starts the extract end of the first step.
        Span<double> x = stackalloc double[3];
        Span<double> lgR = stackalloc double[3];
        Span<double> lgE = stackalloc double[3];
        Ternary r0 = raffinateMole[0];
        Ternary e0 = extractMole[0];
        x[0] = r0.Solute;
        x[1] = r0.Diluent;
        x[2] = r0.Solvent;
        LnGammaCore(state, x, lgR);
        x[0] = e0.Solute;
        x[1] = e0.Diluent;
        x[2] = e0.Solvent;
        LnGammaCore(state, x, lgE);
        double kInfinite = Math.Exp(lgR[0] - lgE[0]);

        double s = 0;
        double h = 0.01;
        bool plait = false;
        while (true)
        {
            double next = s + h;
            int n = raffinateMole.Count;
            Ternary rGuess;
            Ternary eGuess;
            if (n == 1)
            {
                Ternary rBasis = new Ternary(next, binary.Raffinate.Diluent - next, binary.Raffinate.Solvent);
                rGuess = System.ToMole(rBasis.Solute >= 0 && rBasis.Diluent > 0 ? rBasis : binary.Raffinate);
                double es = Math.Min(0.5, kInfinite * rGuess.Solute);
                eGuess = new Ternary(es, e0.Diluent * (1 - es), e0.Solvent * (1 - es));
            }
            else
            {
                // Linear extrapolation from the last two tie lines, in the raffinate solute fraction.
                double sPrev = raffinate[n - 2].Solute;
                double f = (next - s) / (s - sPrev);
                rGuess = Clip(raffinateMole[n - 1] + (f * (raffinateMole[n - 1] - raffinateMole[n - 2])));
                eGuess = Clip(extractMole[n - 1] + (f * (extractMole[n - 1] - extractMole[n - 2])));
            }

            bool ok = next < 1 && SolveWithFixedSolute(state, next, ref rGuess, ref eGuess);
            double length = ok ? Ternary.MaxDifference(rGuess, eGuess) : 0;
            if (ok && length > MinTieLineLength && !(System.FromMole(rGuess).Diluent < System.FromMole(eGuess).Diluent))
            {
                s = next;
                raffinateMole.Add(rGuess);
                extractMole.Add(eGuess);
                raffinate.Add(System.FromMole(rGuess));
                extract.Add(System.FromMole(eGuess));
                h = Math.Min(0.04, h * 1.5);
                if (rGuess.Diluent < 1e-6 || eGuess.Solvent < 1e-6)
                {
                    break; // the region reaches a side of the triangle
                }

                continue;
            }

            if (ok && length > TrivialDistance)
            {
                // Shorter than the step criterion: the plait point is within reach; keep this last one.
                s = next;
                raffinateMole.Add(rGuess);
                extractMole.Add(eGuess);
                raffinate.Add(System.FromMole(rGuess));
                extract.Add(System.FromMole(eGuess));
                plait = true;
                break;
            }

            h *= 0.5;
            if (h < 1e-7)
            {
                // No tie line a little further on: the phases have merged (or the raffinate solute passes a maximum).
                plait = Ternary.MaxDifference(raffinateMole[^1], extractMole[^1]) < 0.05;
                break;
            }
        }

        return new TieLineFamily(temperatureKelvin, raffinate.ToArray(), extract.ToArray(), raffinateMole.ToArray(), extractMole.ToArray(), plait);
    }

    private static Ternary Clip(Ternary t) =>
        new Ternary(Math.Max(t.Solute, 1e-12), Math.Max(t.Diluent, 1e-12), Math.Max(t.Solvent, 1e-12)).Normalized();

    // Newton's method on isoactivity with the solute fraction (system basis) of phase p held at value.
    // Unknowns: p's diluent fraction (system basis) and q's solute and diluent mole fractions.
    private bool SolveWithFixedSolute(ReadOnlySpan<double> state, double value, ref Ternary pMole, ref Ternary qMole)
    {
        Ternary pBasis = System.FromMole(pMole);
        Span<double> u = [pBasis.Diluent, qMole.Solute, qMole.Diluent];
        Span<double> uTrial = stackalloc double[3];
        Span<double> xp = stackalloc double[3];
        Span<double> xq = stackalloc double[3];
        Span<double> mup = stackalloc double[3];
        Span<double> muq = stackalloc double[3];
        Span<double> mupPlus = stackalloc double[3];
        Span<double> muqPlus = stackalloc double[3];
        Span<double> f = stackalloc double[3];
        Span<double> jac = stackalloc double[9];
        Span<double> step = stackalloc double[3];
        bool solute = value > 0;
        if (!solute)
        {
            u[1] = 0;
        }

        for (int it = 0; it < MaxIterations; it++)
        {
            if (!Potentials(state, value, u, xp, xq, mup, muq, solute))
            {
                return false;
            }

            double residual = 0;
            for (int i = 0; i < 3; i++)
            {
                f[i] = (i == 0 && !solute) ? 0 : mup[i] - muq[i];
                residual = Math.Max(residual, Math.Abs(f[i]));
            }

            if (residual <= Tolerance)
            {
                pMole = new Ternary(xp[0], xp[1], xp[2]);
                qMole = new Ternary(xq[0], xq[1], xq[2]);
                return Distance(xp, xq) > TrivialDistance;
            }

            for (int j = 0; j < 3; j++)
            {
                u.CopyTo(uTrial);
                double h = 1e-7 * Math.Max(Math.Abs(u[j]), 1e-6);
                uTrial[j] += h;
                if (!Potentials(state, value, uTrial, xp, xq, mupPlus, muqPlus, solute))
                {
                    uTrial[j] -= 2 * h;
                    h = -h;
                    if (!Potentials(state, value, uTrial, xp, xq, mupPlus, muqPlus, solute))
                    {
                        return false;
                    }
                }

                for (int i = 0; i < 3; i++)
                {
                    jac[(i * 3) + j] = (mupPlus[i] - muqPlus[i] - (mup[i] - muq[i])) / h;
                }
            }

            if (!solute)
            {
                // Without solute the solute equation is dropped and the other phase's solute stays at zero.
                for (int j = 0; j < 3; j++)
                {
                    jac[j] = 0;
                    jac[(j * 3) + 1] = 0;
                }

                jac[1] = 1;
            }

            if (!Solve3(jac, f, step))
            {
                return false;
            }

            // Damp the step so that every fraction stays positive.
            double lambda = 1;
            for (int attempt = 0; attempt < 40; attempt++)
            {
                for (int i = 0; i < 3; i++)
                {
                    uTrial[i] = u[i] - (lambda * step[i]);
                }

                if (Feasible(value, uTrial, solute))
                {
                    break;
                }

                lambda *= 0.5;
            }

            if (!Feasible(value, uTrial, solute))
            {
                return false;
            }

            uTrial.CopyTo(u);
        }

        return false;
    }

    private static bool Feasible(double value, ReadOnlySpan<double> u, bool solute) =>
        u[0] > 0 && 1 - value - u[0] > 0 && (u[1] > 0 || (!solute && u[1] == 0)) && u[2] > 0 && 1 - u[1] - u[2] > 0;

    private bool Potentials(ReadOnlySpan<double> state, double value, ReadOnlySpan<double> u, Span<double> xp, Span<double> xq, Span<double> mup, Span<double> muq, bool solute)
    {
        if (!Feasible(value, u, solute))
        {
            return false;
        }

        Ternary p = System.ToMole(new Ternary(value, u[0], 1 - value - u[0]));
        xp[0] = p.Solute;
        xp[1] = p.Diluent;
        xp[2] = p.Solvent;
        xq[0] = u[1];
        xq[1] = u[2];
        xq[2] = 1 - u[1] - u[2];
        LnGammaCore(state, xp, mup);
        LnGammaCore(state, xq, muq);
        for (int i = 0; i < 3; i++)
        {
            mup[i] = (i == 0 && !solute) ? 0 : mup[i] + Math.Log(xp[i]);
            muq[i] = (i == 0 && !solute) ? 0 : muq[i] + Math.Log(xq[i]);
        }

        return true;
    }
}
