using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Activity;

/// <content>Tie lines with a given solute fraction at one end, and the tie-line family per temperature.</content>
public abstract partial class ActivityCoefficientModel
{
    private const double MinTieLineLength = 1e-3;
    private const int SoluteIndex = 0;
    private const int DiluentIndex = 1;

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
        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);

        // The family is ordered from the binary end to the plait point; the solute may pass a maximum before the
        // plait point, so take the first stretch of the family that reaches this fraction, the one nearer the binary end.
        for (int k = 0; k < fixedSide.Length - 1; k++)
        {
            double a = fixedSide[k].Solute;
            double b = fixedSide[k + 1].Solute;
            if (!(Math.Min(a, b) <= soluteFraction && soluteFraction <= Math.Max(a, b)))
            {
                continue;
            }

            double t = b != a ? Math.Clamp((soluteFraction - a) / (b - a), 0, 1) : 0;
            for (int attempt = 0; attempt < 4; attempt++)
            {
                Ternary r;
                Ternary e;
                bool ok;
                if (attempt < 3)
                {
                    double w = attempt switch { 0 => t, 1 => 0, _ => 1 };
                    r = ((1 - w) * family.RaffinateMole[k]) + (w * family.RaffinateMole[k + 1]);
                    e = ((1 - w) * family.ExtractMole[k]) + (w * family.ExtractMole[k + 1]);
                    ok = fromRaffinate
                        ? SolveFixed(state, SoluteIndex, soluteFraction, pIsRaffinate: true, ref r, ref e)
                        : SolveFixed(state, SoluteIndex, soluteFraction, pIsRaffinate: false, ref e, ref r);
                }
                else
                {
                    // Near the plait point holding the solute is ill-conditioned; holding the raffinate diluent, as
                    // the tracing did, is not: search along the family for the solute fraction instead.
                    double target = soluteFraction;
                    ok = fromRaffinate
                        ? SolveAlongFamily(state, family, k, (rb, _) => rb.Solute - target, out r, out e)
                        : SolveAlongFamily(state, family, k, (_, eb) => eb.Solute - target, out r, out e);
                    if (ok)
                    {
                        return new TieLine(r, e);
                    }
                }

                if (ok)
                {
                    return new TieLine(System.FromMole(r), System.FromMole(e));
                }
            }
        }

        throw new EquilibriumException(
            $"{ModelName}: the tie line with {phase} solute fraction {F(soluteFraction)} at {F(temperatureKelvin)} K did not converge to isoactivity " +
            $"within {Tolerance:G3} in {MaxIterations} Newton iterations.");
    }

    // A start for Newton from the traced tie lines: the two that bracket z, interpolated to pass near it.
    private bool FamilyStart(ReadOnlySpan<double> state, TieLineFamily family, ReadOnlySpan<double> z, Span<double> xa, Span<double> xb, out double beta, ref int iterations)
    {
        beta = 0;
        var zt = new Ternary(z[0], z[1], z[2]);
        Ternary[] rs = family.RaffinateMole;
        Ternary[] es = family.ExtractMole;
        double cLo = Collinearity(rs[0], es[0], zt);
        for (int i = 0; i < rs.Length - 1; i++)
        {
            double cHi = Collinearity(rs[i + 1], es[i + 1], zt);
            if (((cLo <= 0 && cHi >= 0) || (cLo >= 0 && cHi <= 0)) && Lever(rs[i], es[i], zt) is > 0 and < 1)
            {
                double t = cLo != cHi ? cLo / (cLo - cHi) : 0;
                Ternary r = ((1 - t) * rs[i]) + (t * rs[i + 1]);
                Ternary e = ((1 - t) * es[i]) + (t * es[i + 1]);
                Span<double> lnK = [SafeLnRatio(e.Solute, r.Solute), SafeLnRatio(e.Diluent, r.Diluent), SafeLnRatio(e.Solvent, r.Solvent)];
                return TryTwoPhase(state, z, lnK, xa, xb, out beta, ref iterations, substitutionSteps: 1);
            }

            cLo = cHi;
        }

        return false;
    }

    // The tie line through z among those traced for this temperature: regula falsi (Illinois) on the raffinate diluent
    // fraction for collinearity of z with the tie line's ends, each tie line solved by Newton; then polished by the
    // two-phase Newton. False when z lies on no traced tie line.
    private bool FamilySplit(ReadOnlySpan<double> state, double temperatureKelvin, ReadOnlySpan<double> z, Span<double> xa, Span<double> xb, out double beta, ref int iterations)
    {
        beta = 0;
        if (FamilyOrNull(temperatureKelvin) is not { } family)
        {
            return false; // no tie lines at this temperature
        }

        var zt = new Ternary(z[0], z[1], z[2]);
        Ternary[] rs = family.RaffinateMole;
        Ternary[] es = family.ExtractMole;
        int k = -1;
        double cLo = Collinearity(rs[0], es[0], zt);
        for (int i = 0; i < rs.Length - 1; i++)
        {
            double cHi = Collinearity(rs[i + 1], es[i + 1], zt);
            if (((cLo <= 0 && cHi >= 0) || (cLo >= 0 && cHi <= 0)) && Lever(rs[i], es[i], zt) is > -0.05 and < 1.05)
            {
                k = i;
                break;
            }

            cLo = cHi;
        }

        if (k < 0)
        {
            return false;
        }

        if (!SolveAlongFamily(state, family, k, (rb, eb) => Collinearity(System.ToMole(rb), System.ToMole(eb), zt), out Ternary rs0, out Ternary es0))
        {
            return false;
        }

        Ternary r = System.ToMole(rs0);
        Ternary e = System.ToMole(es0);
        iterations += 20;
        beta = Lever(r, e, zt);
        if (!(beta > 0 && beta < 1))
        {
            return false;
        }

        // Polish to the exact balance from this excellent start; keep the tie line found if that fails.
        Span<double> lnK = [SafeLnRatio(e.Solute, r.Solute), SafeLnRatio(e.Diluent, r.Diluent), SafeLnRatio(e.Solvent, r.Solvent)];
        if (TryTwoPhase(state, z, lnK, xa, xb, out double polished, ref iterations, substitutionSteps: 1))
        {
            beta = polished;
            return true;
        }

        xa[0] = r.Solute;
        xa[1] = r.Diluent;
        xa[2] = r.Solvent;
        xb[0] = e.Solute;
        xb[1] = e.Diluent;
        xb[2] = e.Solvent;
        return true;
    }

    // Regula falsi (Illinois) on the raffinate diluent fraction between family tie lines k and k + 1 for a root of
    // g(raffinate, extract) (system basis), each tie line solved by Newton with that diluent fraction held.
    private bool SolveAlongFamily(ReadOnlySpan<double> state, TieLineFamily family, int k, Func<Ternary, Ternary, double> g, out Ternary raffinate, out Ternary extract)
    {
        raffinate = family.Raffinate[k];
        extract = family.Extract[k];
        double dLo = family.Raffinate[k].Diluent;
        double dHi = family.Raffinate[k + 1].Diluent;
        double fLo = g(family.Raffinate[k], family.Extract[k]);
        double fHi = g(family.Raffinate[k + 1], family.Extract[k + 1]);
        if (fLo == 0)
        {
            return true;
        }

        if (fHi == 0)
        {
            raffinate = family.Raffinate[k + 1];
            extract = family.Extract[k + 1];
            return true;
        }

        if ((fLo < 0) == (fHi < 0))
        {
            return false;
        }

        int side = 0;
        for (int it = 0; it < 100; it++)
        {
            double d = dHi - (fHi * (dHi - dLo) / (fHi - fLo));
            if (!(d > Math.Min(dLo, dHi) && d < Math.Max(dLo, dHi)))
            {
                d = 0.5 * (dLo + dHi);
            }

            double t = Math.Clamp((family.Raffinate[k].Diluent - d) / (family.Raffinate[k].Diluent - family.Raffinate[k + 1].Diluent), 0, 1);
            Ternary r = ((1 - t) * family.RaffinateMole[k]) + (t * family.RaffinateMole[k + 1]);
            Ternary e = ((1 - t) * family.ExtractMole[k]) + (t * family.ExtractMole[k + 1]);
            if (!SolveFixed(state, DiluentIndex, d, pIsRaffinate: true, ref r, ref e))
            {
                return false;
            }

            raffinate = System.FromMole(r);
            extract = System.FromMole(e);
            double f = g(raffinate, extract);
            if (Math.Abs(f) < 1e-15 || Math.Abs(dHi - dLo) < 1e-15)
            {
                return true;
            }

            if ((f < 0) == (fLo < 0))
            {
                dLo = d;
                fLo = f;
                if (side == -1)
                {
                    fHi *= 0.5;
                }

                side = -1;
            }
            else
            {
                dHi = d;
                fHi = f;
                if (side == 1)
                {
                    fLo *= 0.5;
                }

                side = 1;
            }
        }

        return false;
    }

    // Signed distance of z from the line through r and e in the (solute, solvent) plane of mole fractions.
    private static double Collinearity(in Ternary r, in Ternary e, in Ternary z)
    {
        double ds = e.Solute - r.Solute;
        double dv = e.Solvent - r.Solvent;
        return ((ds * (z.Solvent - r.Solvent)) - (dv * (z.Solute - r.Solute))) / Math.Sqrt((ds * ds) + (dv * dv));
    }

    // Share of e in z by projection on the tie line.
    private static double Lever(in Ternary r, in Ternary e, in Ternary z)
    {
        Ternary de = e - r;
        Ternary dz = z - r;
        return ((dz.Solute * de.Solute) + (dz.Diluent * de.Diluent) + (dz.Solvent * de.Solvent)) /
            ((de.Solute * de.Solute) + (de.Diluent * de.Diluent) + (de.Solvent * de.Solvent));
    }

    // Tie lines from the binary end to the plait point, stepping down the raffinate's diluent fraction: that falls
    // steadily along the raffinate branch up to the plait point, where the solute fraction may already have passed a maximum.
    private TieLineFamily TraceFamily(double temperatureKelvin)
    {
        PhaseSplit binary = default;
        foreach (double w in new[] { 0.5, 0.2, 0.8, 0.05, 0.95, 0.35, 0.65, 0.01, 0.99 })
        {
            var feed = new Ternary(0, 1 - w, w);
            binary = SplitMole(feed, System.ToMole(feed), temperatureKelvin, false, default, default, useFamily: false);
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

        double d = binary.Raffinate.Diluent;
        double h = 0.01;
        bool plait = false;
        while (true)
        {
            double next = d - h;
            if (next <= 1e-9)
            {
                break; // the two-phase region reaches the solute-solvent side
            }

            int n = raffinateMole.Count;
            Ternary rGuess;
            Ternary eGuess;
            if (n == 1)
            {
                double sGuess = 0.9 * (binary.Raffinate.Diluent - next);
                rGuess = System.ToMole(new Ternary(sGuess, next, 1 - next - sGuess));
                double es = Math.Min(0.5, kInfinite * rGuess.Solute);
                eGuess = new Ternary(es, e0.Diluent * (1 - es), e0.Solvent * (1 - es));
            }
            else
            {
                double dPrev = raffinate[n - 2].Diluent;
                double f = (next - d) / (d - dPrev);
                rGuess = Clip(raffinateMole[n - 1] + (f * (raffinateMole[n - 1] - raffinateMole[n - 2])));
                eGuess = Clip(extractMole[n - 1] + (f * (extractMole[n - 1] - extractMole[n - 2])));
            }

            bool ok = SolveFixed(state, DiluentIndex, next, pIsRaffinate: true, ref rGuess, ref eGuess);
            double length = ok ? Ternary.MaxDifference(rGuess, eGuess) : 0;
            if (ok && length > MinTieLineLength)
            {
                d = next;
                Add(rGuess, eGuess);
                h = Math.Min(0.03, h * 1.5);
                continue;
            }

            // Tie lines shorter than MinTieLineLength are left out: that close to the plait point the isoactivity
            // equations are too ill-conditioned to solve reliably from a given solute fraction.
            h *= 0.5;
            if (h < 1e-6)
            {
                plait = Ternary.MaxDifference(raffinateMole[^1], extractMole[^1]) < 0.02;
                break;
            }
        }

        return new TieLineFamily(temperatureKelvin, raffinate.ToArray(), extract.ToArray(), raffinateMole.ToArray(), extractMole.ToArray(), plait);

        void Add(Ternary r, Ternary e)
        {
            raffinateMole.Add(r);
            extractMole.Add(e);
            raffinate.Add(System.FromMole(r));
            extract.Add(System.FromMole(e));
        }
    }

    private static Ternary Clip(Ternary t) =>
        new Ternary(Math.Max(t.Solute, 1e-12), Math.Max(t.Diluent, 1e-12), Math.Max(t.Solvent, 1e-12)).Normalized();

    // Newton's method on isoactivity with one fraction (system basis) of phase p held at value: the solute
    // (component 0) or the diluent (component 1). Unknowns: p's other free fraction (system basis) and q's solute and
    // diluent mole fractions. The answer must keep the roles: the raffinate holds more diluent than the extract.
    private bool SolveFixed(ReadOnlySpan<double> state, int component, double value, bool pIsRaffinate, ref Ternary pMole, ref Ternary qMole)
    {
        Ternary pBasis = System.FromMole(pMole);
        Span<double> u = [component == SoluteIndex ? pBasis.Diluent : pBasis.Solute, qMole.Solute, qMole.Diluent];
        Span<double> uTrial = stackalloc double[3];
        Span<double> xp = stackalloc double[3];
        Span<double> xq = stackalloc double[3];
        Span<double> mup = stackalloc double[3];
        Span<double> muq = stackalloc double[3];
        Span<double> mupPlus = stackalloc double[3];
        Span<double> muqPlus = stackalloc double[3];
        Span<double> f = stackalloc double[3];
        Span<double> fTrial = stackalloc double[3];
        Span<double> jac = stackalloc double[9];
        Span<double> step = stackalloc double[3];
        bool solute = !(component == SoluteIndex && value == 0);
        if (!solute)
        {
            u[1] = 0;
        }

        if (!Potentials(state, component, value, u, xp, xq, mup, muq, solute))
        {
            return false;
        }

        double residual = Residuals(mup, muq, f, solute);
        for (int it = 0; it < MaxIterations; it++)
        {
            if (residual <= Tolerance)
            {
                pMole = new Ternary(xp[0], xp[1], xp[2]);
                qMole = new Ternary(xq[0], xq[1], xq[2]);
                double pDiluent = System.FromMole(pMole).Diluent;
                double qDiluent = System.FromMole(qMole).Diluent;
                return Distance(xp, xq) > TrivialDistance && (pIsRaffinate ? pDiluent > qDiluent : qDiluent > pDiluent);
            }

            for (int j = 0; j < 3; j++)
            {
                u.CopyTo(uTrial);
                double h = 1e-7 * Math.Max(Math.Abs(u[j]), 1e-6);
                uTrial[j] += h;
                if (!Potentials(state, component, value, uTrial, xp, xq, mupPlus, muqPlus, solute))
                {
                    uTrial[j] -= 2 * h;
                    h = -h;
                    if (!Potentials(state, component, value, uTrial, xp, xq, mupPlus, muqPlus, solute))
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

            // Halve the step until every fraction stays positive and the residual falls.
            double lambda = 1;
            bool accepted = false;
            for (int attempt = 0; attempt < 30 && !accepted; attempt++, lambda *= 0.5)
            {
                for (int i = 0; i < 3; i++)
                {
                    uTrial[i] = u[i] - (lambda * step[i]);
                }

                if (Potentials(state, component, value, uTrial, xp, xq, mupPlus, muqPlus, solute))
                {
                    double trial = Residuals(mupPlus, muqPlus, fTrial, solute);
                    if (trial < residual)
                    {
                        accepted = true;
                        residual = trial;
                        uTrial.CopyTo(u);
                        mupPlus.CopyTo(mup);
                        muqPlus.CopyTo(muq);
                        fTrial.CopyTo(f);
                    }
                }
            }

            if (!accepted)
            {
                return false;
            }
        }

        return false;
    }

    private static double Residuals(ReadOnlySpan<double> mup, ReadOnlySpan<double> muq, Span<double> f, bool solute)
    {
        double residual = 0;
        for (int i = 0; i < 3; i++)
        {
            f[i] = (i == 0 && !solute) ? 0 : mup[i] - muq[i];
            residual = Math.Max(residual, Math.Abs(f[i]));
        }

        return residual;
    }

    private bool Potentials(ReadOnlySpan<double> state, int component, double value, ReadOnlySpan<double> u, Span<double> xp, Span<double> xq, Span<double> mup, Span<double> muq, bool solute)
    {
        double third = 1 - value - u[0];
        bool feasible = u[0] > (solute || component != SoluteIndex ? 0 : -1) && third > 0 && u[2] > 0 && 1 - u[1] - u[2] > 0 && (solute ? u[1] > 0 : u[1] == 0);
        if (!feasible)
        {
            return false;
        }

        Ternary p = System.ToMole(component == SoluteIndex ? new Ternary(value, u[0], third) : new Ternary(u[0], value, third));
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
