using System.Globalization;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium.TieLines;

namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// Liquid-liquid equilibrium from an activity-coefficient model (NRTL, UNIQUAC): the stability test, phase split and
/// tie-line calculations shared by the models, which only supply the activity coefficients.
/// </summary>
/// <remarks>
/// <para>
/// Internally everything is in mole fractions; compositions exchanged with callers are on the system's basis and are
/// converted exactly, and <see cref="PhaseSplit.ExtractFraction"/> is the extract's share of the mixture on that basis.
/// </para>
/// <para>
/// Split from a cold start: a tangent-plane-distance stability test (Michelsen 1982) from trial phases rich in each
/// component finds whether the mixture splits and gives a trial phase; successive substitution of the distribution
/// ratios with the Rachford-Rice equation for the phase fraction follows, then Newton's method on the mole numbers of
/// one phase (Jacobian of the activity coefficients by finite differences) polishes to isoactivity within
/// <see cref="Tolerance"/>. A converged answer whose phases coincide (the trivial solution) is never returned as two
/// phases. A warm start skips the stability test and starts from the given phases, falling back to a cold start if
/// that does not give a proper split. The raffinate is the diluent-richer phase.
/// </para>
/// <para>
/// Tie lines with a given solute fraction at one end are found by Newton's method on isoactivity with that fraction
/// held, started from the tie-line family traced once per temperature from the binary end toward the plait point (the
/// family is cached for the last temperature used; the model is safe to use from several threads).
/// </para>
/// </remarks>
public abstract partial class ActivityCoefficientModel : IPhaseEquilibrium
{
    private const int N = 3;
    private const int StateCapacity = 32;
    private const double TrivialDistance = 1e-6;

    private volatile TieLineFamily? _family;

    private protected ActivityCoefficientModel(TernarySystem system, TemperatureRange validTemperatures)
    {
        ArgumentNullException.ThrowIfNull(system);
        Preconditions.Positive(validTemperatures.MinKelvin, "validTemperatures.MinKelvin");
        if (!(validTemperatures.MaxKelvin >= validTemperatures.MinKelvin) || !double.IsFinite(validTemperatures.MaxKelvin))
        {
            throw new ArgumentException($"Expected a temperature range with the maximum ({validTemperatures.MaxKelvin} K) not below the minimum ({validTemperatures.MinKelvin} K).", nameof(validTemperatures));
        }

        System = system;
        ValidTemperatures = validTemperatures;
    }

    /// <inheritdoc />
    public TernarySystem System { get; }

    /// <inheritdoc />
    public TemperatureRange ValidTemperatures { get; }

    /// <summary>Convergence tolerance on the isoactivity residuals (differences of ln(x gamma) between phases). Default 1e-12.</summary>
    public double Tolerance { get; init; } = 1e-12;

    /// <summary>Iteration limit of each iterative stage (stability test trial, substitution, Newton). Default 200.</summary>
    public int MaxIterations { get; init; } = 200;

    /// <summary>Short model name used in messages (for example "NRTL").</summary>
    private protected abstract string ModelName { get; }

    /// <summary>
    /// Natural logarithms of the activity coefficients at a temperature and mole fractions (role order: solute,
    /// diluent, solvent). Fractions must be zero or more and sum to one; a zero fraction gives the infinite-dilution value.
    /// </summary>
    /// <param name="temperatureKelvin">Temperature in kelvin, above zero.</param>
    /// <param name="moleFractions">Three mole fractions in role order.</param>
    /// <param name="lnGamma">Receives the three ln gamma values.</param>
    /// <exception cref="ArgumentException">When the spans do not have three items or the fractions are invalid.</exception>
    public void LnGamma(double temperatureKelvin, ReadOnlySpan<double> moleFractions, Span<double> lnGamma)
    {
        Preconditions.Positive(temperatureKelvin);
        Preconditions.SameLength(moleFractions.Length, N);
        Preconditions.SameLength(lnGamma.Length, N);
        double sum = 0;
        for (int i = 0; i < N; i++)
        {
            if (!(moleFractions[i] >= 0) || !double.IsFinite(moleFractions[i]))
            {
                throw new ArgumentException($"Mole fraction {i} is {moleFractions[i]}; expected a finite number of 0 or more.", nameof(moleFractions));
            }

            sum += moleFractions[i];
        }

        if (Math.Abs(sum - 1) > 1e-9)
        {
            throw new ArgumentException($"Mole fractions sum to {sum}; expected 1.", nameof(moleFractions));
        }

        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);
        LnGammaCore(state, moleFractions, lnGamma);
    }

    /// <summary>Activity coefficients (not logarithms) of a mixture given on the system's basis.</summary>
    public Ternary ActivityCoefficients(Ternary fractions, double temperatureKelvin)
    {
        Ternary x = System.ToMole(fractions);
        Span<double> xs = [x.Solute, x.Diluent, x.Solvent];
        Span<double> lg = stackalloc double[N];
        LnGamma(temperatureKelvin, xs, lg);
        return new Ternary(Math.Exp(lg[0]), Math.Exp(lg[1]), Math.Exp(lg[2]));
    }

    /// <summary>
    /// Tangent-plane-distance stability test of a mixture (fractions on the system's basis) from trial phases rich in
    /// each component present.
    /// </summary>
    /// <exception cref="ArgumentException">When the fractions are invalid.</exception>
    public StabilityTestResult TestStability(Ternary overall, double temperatureKelvin)
    {
        Ternary z = CheckedMole(overall, temperatureKelvin);
        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);
        Span<double> zs = [z.Solute, z.Diluent, z.Solvent];
        Span<double> trial = stackalloc double[N];
        int iterations = 0;
        bool unstable = FindUnstableTrial(state, zs, trial, out double tm, ref iterations, stopAtFirst: false);
        Ternary w = unstable ? new Ternary(trial[0], trial[1], trial[2]).Normalized() : z;
        return new StabilityTestResult(!unstable, tm, System.FromMole(w), iterations);
    }

    /// <inheritdoc />
    /// <exception cref="ArgumentException">When the overall fractions are not finite, negative, or do not sum to one within 1e-6.</exception>
    public PhaseSplit Split(Ternary overall, double temperatureKelvin)
    {
        Ternary z = CheckedMole(overall, temperatureKelvin);
        return SplitMole(overall, z, temperatureKelvin, hasWarmStart: false, default, default);
    }

    /// <inheritdoc />
    public PhaseSplit Split(Ternary overall, double temperatureKelvin, in PhaseSplit warmStart)
    {
        Ternary z = CheckedMole(overall, temperatureKelvin);
        bool warm = warmStart.IsTwoPhase
            && IsComposition(warmStart.Raffinate) && IsComposition(warmStart.Extract)
            && Ternary.MaxDifference(warmStart.Raffinate, warmStart.Extract) > TrivialDistance;
        return warm
            ? SplitMole(overall, z, temperatureKelvin, true, System.ToMole(warmStart.Raffinate.Normalized()), System.ToMole(warmStart.Extract.Normalized()))
            : SplitMole(overall, z, temperatureKelvin, false, default, default);
    }

    /// <inheritdoc />
    public TieLine TieLineFromRaffinate(double raffinateSoluteFraction, double temperatureKelvin) =>
        TieLineFrom(raffinateSoluteFraction, temperatureKelvin, fromRaffinate: true);

    /// <inheritdoc />
    public TieLine TieLineFromExtract(double extractSoluteFraction, double temperatureKelvin) =>
        TieLineFrom(extractSoluteFraction, temperatureKelvin, fromRaffinate: false);

    /// <inheritdoc />
    /// <remarks>Found by tracing the tie lines from the binary end until the phases meet (the plait point), or up to
    /// the last tie line found when the two-phase region reaches the solute-diluent or solute-solvent side.</remarks>
    /// <exception cref="EquilibriumException">When the diluent and solvent do not split at this temperature.</exception>
    public SoluteLimits SoluteLimits(double temperatureKelvin) => Family(temperatureKelvin).Limits;

    /// <summary>
    /// The plait point at a temperature, estimated as the middle of the shortest tie line traced from the binary end
    /// (the two ends then differ by less than about 1e-3 in mole fraction when a plait point exists).
    /// </summary>
    /// <exception cref="EquilibriumException">When the diluent and solvent do not split at this temperature.</exception>
    public PlaitPointEstimate EstimatePlaitPoint(double temperatureKelvin)
    {
        TieLineFamily family = Family(temperatureKelvin);
        if (!family.ReachesPlaitPoint)
        {
            return new PlaitPointEstimate(PlaitPointStatus.NotFound, family.Raffinate[^1]);
        }

        Ternary r = family.RaffinateMole[^1];
        Ternary e = family.ExtractMole[^1];
        return new PlaitPointEstimate(PlaitPointStatus.Estimated, System.FromMole(0.5 * (r + e)));
    }

    /// <summary>Computes the temperature-dependent parameters into <paramref name="state"/> (at most 32 values).</summary>
    private protected abstract void Prepare(double temperatureKelvin, Span<double> state);

    /// <summary>ln gamma at mole fractions <paramref name="x"/> (zero or more, summing to one) from a prepared state.</summary>
    private protected abstract void LnGammaCore(ReadOnlySpan<double> state, ReadOnlySpan<double> x, Span<double> lnGamma);

    private static bool IsComposition(in Ternary t) =>
        t.Solute >= 0 && t.Diluent >= 0 && t.Solvent >= 0 && double.IsFinite(t.Sum) && t.Sum > 0;

    private Ternary CheckedMole(Ternary overall, double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        if (!(overall.Solute >= 0 && overall.Diluent >= 0 && overall.Solvent >= 0) || !double.IsFinite(overall.Sum) || Math.Abs(overall.Sum - 1) > 1e-6)
        {
            throw new ArgumentException($"Expected overall fractions of 0 or more summing to 1 within 1e-6, got {overall}.", nameof(overall));
        }

        return System.ToMole(overall.Normalized());
    }

    private PhaseSplit SplitMole(Ternary overall, Ternary zMole, double temperatureKelvin, bool hasWarmStart, Ternary warmA, Ternary warmB)
    {
        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);
        Span<double> z = [zMole.Solute, zMole.Diluent, zMole.Solvent];
        int present = 0;
        for (int i = 0; i < N; i++)
        {
            if (z[i] > 0)
            {
                present++;
            }
        }

        if (present < 2)
        {
            return PhaseSplit.OnePhase(overall);
        }

        Span<double> xa = stackalloc double[N];
        Span<double> xb = stackalloc double[N];
        int iterations = 0;
        double beta;
        if (hasWarmStart)
        {
            Span<double> lnK = stackalloc double[N];
            lnK[0] = SafeLnRatio(warmB.Solute, warmA.Solute);
            lnK[1] = SafeLnRatio(warmB.Diluent, warmA.Diluent);
            lnK[2] = SafeLnRatio(warmB.Solvent, warmA.Solvent);
            if (TryTwoPhase(state, z, lnK, xa, xb, out beta, ref iterations, substitutionSteps: 1))
            {
                return ToSplit(overall, xa, xb, beta, iterations);
            }
        }

        Span<double> trial = stackalloc double[N];
        Span<double> zCopy = stackalloc double[N];
        z.CopyTo(zCopy);
        if (!FindUnstableTrial(state, zCopy, trial, out _, ref iterations, stopAtFirst: true))
        {
            return PhaseSplit.OnePhase(overall, iterations);
        }

        // Stationarity of the tangent plane distance gives W_i / z_i = gamma_i(z) / gamma_i(w): the starting ratios.
        Span<double> lnK0 = stackalloc double[N];
        for (int i = 0; i < N; i++)
        {
            lnK0[i] = z[i] > 0 && trial[i] > 0 ? Math.Log(trial[i] / z[i]) : 0;
        }

        if (TryTwoPhase(state, z, lnK0, xa, xb, out beta, ref iterations, substitutionSteps: MaxIterations))
        {
            return ToSplit(overall, xa, xb, beta, iterations);
        }

        throw new EquilibriumException(
            $"{ModelName} phase split of {F(overall)} at {F(temperatureKelvin)} K: the mixture is unstable but the two-phase " +
            $"calculation did not converge to isoactivity within {Tolerance:G3} in {MaxIterations} iterations.");
    }

    private PhaseSplit ToSplit(Ternary overall, ReadOnlySpan<double> xa, ReadOnlySpan<double> xb, double betaB, int iterations)
    {
        var a = new Ternary(xa[0], xa[1], xa[2]);
        var b = new Ternary(xb[0], xb[1], xb[2]);
        Ternary aBasis = System.FromMole(a);
        Ternary bBasis = System.FromMole(b);
        bool aIsRaffinate = aBasis.Diluent >= bBasis.Diluent;
        Ternary extractMole = aIsRaffinate ? b : a;
        double betaExtract = aIsRaffinate ? betaB : 1 - betaB;
        if (System.Basis == CompositionBasis.Mass)
        {
            // Share of the mass: moles of extract times its mean molar mass over the mixture's.
            Ternary m = System.MolarMasses;
            Ternary zMole = System.ToMole(overall);
            double mz = (zMole.Solute * m.Solute) + (zMole.Diluent * m.Diluent) + (zMole.Solvent * m.Solvent);
            double me = (extractMole.Solute * m.Solute) + (extractMole.Diluent * m.Diluent) + (extractMole.Solvent * m.Solvent);
            betaExtract = betaExtract * me / mz;
        }

        return new PhaseSplit(true, aIsRaffinate ? aBasis : bBasis, aIsRaffinate ? bBasis : aBasis, Math.Clamp(betaExtract, 0, 1), iterations);
    }

    // Tangent plane distance stability test. Returns true with the (unnormalised) trial phase W of negative distance.
    private bool FindUnstableTrial(ReadOnlySpan<double> state, ReadOnlySpan<double> z, Span<double> trial, out double minTm, ref int iterations, bool stopAtFirst)
    {
        Span<double> d = stackalloc double[N];
        Span<double> lg = stackalloc double[N];
        LnGammaCore(state, z, lg);
        for (int i = 0; i < N; i++)
        {
            d[i] = z[i] > 0 ? Math.Log(z[i]) + lg[i] : double.NegativeInfinity;
        }

        Span<double> w = stackalloc double[N];
        Span<double> x = stackalloc double[N];
        Span<double> best = stackalloc double[N];
        minTm = 0;
        bool found = false;

        // Trial phases rich in the diluent, the solvent, then the solute (the usual order of a split's phases).
        ReadOnlySpan<int> order = [1, 2, 0];
        foreach (int k in order)
        {
            if (!(z[k] > 0))
            {
                continue;
            }

            int presentCount = 0;
            for (int i = 0; i < N; i++)
            {
                if (z[i] > 0)
                {
                    presentCount++;
                }
            }

            for (int i = 0; i < N; i++)
            {
                w[i] = z[i] > 0 ? (i == k ? 0.98 : 0.02 / (presentCount - 1)) : 0;
            }

            double tm = double.NaN;
            bool converged = false;
            for (int it = 0; it < MaxIterations; it++)
            {
                iterations++;
                double sw = w[0] + w[1] + w[2];
                for (int i = 0; i < N; i++)
                {
                    x[i] = w[i] / sw;
                }

                LnGammaCore(state, x, lg);
                tm = 1;
                double change = 0;
                bool trivial = true;
                for (int i = 0; i < N; i++)
                {
                    if (w[i] > 0)
                    {
                        double lnW = Math.Log(w[i]);
                        tm += w[i] * (lnW + lg[i] - d[i] - 1);
                        double lnWNew = d[i] - lg[i];
                        change = Math.Max(change, Math.Abs(lnWNew - lnW));
                        w[i] = Math.Exp(lnWNew);
                    }

                    if (Math.Abs(x[i] - z[i]) > 1e-5)
                    {
                        trivial = false;
                    }
                }

                if (trivial)
                {
                    break;
                }

                if (change < 1e-10)
                {
                    converged = true;
                    break;
                }

                // Already proven unstable and the trial phase is good enough to start the split from.
                if (stopAtFirst && tm < -1e-6 && change < 1e-4)
                {
                    converged = true;
                    break;
                }
            }

            if (converged && tm < -1e-10 && tm < minTm)
            {
                minTm = tm;
                w.CopyTo(best);
                found = true;
                if (stopAtFirst)
                {
                    break;
                }
            }
        }

        if (found)
        {
            best.CopyTo(trial);
        }

        return found;
    }

    // Substitution with Rachford-Rice, then Newton on the moles of phase B. Phase A/B compositions out, beta = moles of B per mole of feed.
    private bool TryTwoPhase(ReadOnlySpan<double> state, ReadOnlySpan<double> z, Span<double> lnK, Span<double> xa, Span<double> xb, out double beta, ref int iterations, int substitutionSteps)
    {
        Span<double> lga = stackalloc double[N];
        Span<double> lgb = stackalloc double[N];
        beta = 0.5;
        for (int it = 0; it < substitutionSteps; it++)
        {
            iterations++;
            if (!RachfordRice(z, lnK, ref beta))
            {
                return false;
            }

            PhasesFromK(z, lnK, beta, xa, xb);
            LnGammaCore(state, xa, lga);
            LnGammaCore(state, xb, lgb);
            double change = 0;
            double spread = 0;
            for (int i = 0; i < N; i++)
            {
                if (z[i] > 0)
                {
                    double next = lga[i] - lgb[i];
                    change = Math.Max(change, Math.Abs(next - lnK[i]));
                    lnK[i] = next;
                    spread = Math.Max(spread, Math.Abs(next));
                }
            }

            if (spread < 1e-4)
            {
                return false; // drifting to the trivial solution
            }

            // Newton from here: substitution is slow near the plait point, Newton is not.
            if (change < 1e-3 && beta > 0 && beta < 1)
            {
                break;
            }
        }

        if (!RachfordRice(z, lnK, ref beta) || !(beta > 0 && beta < 1))
        {
            return false;
        }

        PhasesFromK(z, lnK, beta, xa, xb);
        return Newton(state, z, xa, xb, ref beta, ref iterations);
    }

    private bool Newton(ReadOnlySpan<double> state, ReadOnlySpan<double> z, Span<double> xa, Span<double> xb, ref double beta, ref int iterations)
    {
        Span<double> nb = stackalloc double[N];
        Span<double> na = stackalloc double[N];
        Span<double> f = stackalloc double[N];
        Span<double> jac = stackalloc double[N * N];
        Span<double> ja = stackalloc double[N * N];
        Span<double> jb = stackalloc double[N * N];
        Span<double> step = stackalloc double[N];
        for (int i = 0; i < N; i++)
        {
            nb[i] = z[i] > 0 ? beta * xb[i] : 0;
            na[i] = z[i] - nb[i];
        }

        for (int it = 0; it < MaxIterations; it++)
        {
            iterations++;
            if (!ChemicalPotentialJacobian(state, na, z, xa, f, ja, sign: 1) || !ChemicalPotentialJacobian(state, nb, z, xb, f, jb, sign: -1, accumulate: true))
            {
                return false;
            }

            double residual = 0;
            for (int i = 0; i < N; i++)
            {
                residual = Math.Max(residual, Math.Abs(f[i]));
            }

            if (residual <= Tolerance)
            {
                double sb = nb[0] + nb[1] + nb[2];
                beta = sb;
                return beta > 0 && beta < 1 && Distance(xa, xb) > TrivialDistance;
            }

            // d f / d nb = -(d mu_a / d na) - (d mu_b / d nb), with na = z - nb.
            for (int k = 0; k < N * N; k++)
            {
                jac[k] = -ja[k] - jb[k];
            }

            for (int i = 0; i < N; i++)
            {
                if (!(z[i] > 0))
                {
                    for (int j = 0; j < N; j++)
                    {
                        jac[(i * N) + j] = 0;
                        jac[(j * N) + i] = 0;
                    }

                    jac[(i * N) + i] = 1;
                    f[i] = 0;
                }
            }

            if (!Solve3(jac, f, step))
            {
                return false;
            }

            // Newton step on nb (step solves J s = f, so nb -= s), cut back to keep both phases' moles positive.
            double lambda = 1;
            for (int i = 0; i < N; i++)
            {
                if (z[i] > 0)
                {
                    double next = nb[i] - step[i];
                    if (next <= 0)
                    {
                        lambda = Math.Min(lambda, 0.9 * nb[i] / step[i]);
                    }
                    else if (next >= z[i])
                    {
                        lambda = Math.Min(lambda, 0.9 * (z[i] - nb[i]) / -step[i]);
                    }
                }
            }

            for (int i = 0; i < N; i++)
            {
                if (z[i] > 0)
                {
                    nb[i] -= lambda * step[i];
                    na[i] = z[i] - nb[i];
                }
            }

            if (Distance(xa, xb) < 1e-9)
            {
                return false;
            }
        }

        return false;
    }

    // mu_i = ln x_i + ln gamma_i of a phase with moles n: adds sign * mu to f and writes d mu / d n into jac.
    private bool ChemicalPotentialJacobian(ReadOnlySpan<double> state, ReadOnlySpan<double> n, ReadOnlySpan<double> z, Span<double> x, Span<double> f, Span<double> jac, int sign, bool accumulate = false)
    {
        double total = n[0] + n[1] + n[2];
        if (!(total > 0))
        {
            return false;
        }

        for (int i = 0; i < N; i++)
        {
            x[i] = n[i] / total;
        }

        Span<double> lg = stackalloc double[N];
        Span<double> lgp = stackalloc double[N];
        Span<double> np = stackalloc double[N];
        LnGammaCore(state, x, lg);
        for (int i = 0; i < N; i++)
        {
            double mu = z[i] > 0 ? Math.Log(x[i]) + lg[i] : 0;
            f[i] = accumulate ? f[i] + (sign * mu) : sign * mu;
        }

        // d ln gamma_i / d n_j by forward differences of the normalised composition.
        for (int j = 0; j < N; j++)
        {
            if (!(z[j] > 0))
            {
                for (int i = 0; i < N; i++)
                {
                    jac[(i * N) + j] = 0;
                }

                continue;
            }

            double h = 1e-7 * Math.Max(n[j], 1e-12 * total);
            n.CopyTo(np);
            np[j] += h;
            double tp = np[0] + np[1] + np[2];
            for (int i = 0; i < N; i++)
            {
                np[i] /= tp;
            }

            LnGammaCore(state, np, lgp);
            for (int i = 0; i < N; i++)
            {
                double ideal = (i == j ? 1 / n[i] : 0) - (1 / total);
                jac[(i * N) + j] = ideal + ((lgp[i] - lg[i]) / h);
            }
        }

        return true;
    }

    private static bool RachfordRice(ReadOnlySpan<double> z, ReadOnlySpan<double> lnK, ref double beta)
    {
        double kMax = double.NegativeInfinity;
        double kMin = double.PositiveInfinity;
        for (int i = 0; i < N; i++)
        {
            if (z[i] > 0)
            {
                double k = Math.Exp(lnK[i]);
                kMax = Math.Max(kMax, k);
                kMin = Math.Min(kMin, k);
            }
        }

        if (!(kMax > 1 && kMin < 1))
        {
            return false;
        }

        // f(beta) = sum z (K - 1) / (1 + beta (K - 1)) falls monotonically between its poles.
        double lo = 1 / (1 - kMax);
        double hi = 1 / (1 - kMin);
        double b = Math.Clamp(beta, lo + (1e-12 * (hi - lo)), hi - (1e-12 * (hi - lo)));
        for (int it = 0; it < 100; it++)
        {
            double f = 0;
            double df = 0;
            for (int i = 0; i < N; i++)
            {
                if (z[i] > 0)
                {
                    double km1 = Math.Exp(lnK[i]) - 1;
                    double den = 1 + (b * km1);
                    f += z[i] * km1 / den;
                    df -= z[i] * km1 * km1 / (den * den);
                }
            }

            if (f > 0)
            {
                lo = b;
            }
            else
            {
                hi = b;
            }

            double next = b - (f / df);
            if (!(next > lo && next < hi))
            {
                next = 0.5 * (lo + hi);
            }

            if (Math.Abs(next - b) <= 1e-15 * Math.Max(1, Math.Abs(b)))
            {
                beta = next;
                return true;
            }

            b = next;
        }

        beta = b;
        return true;
    }

    private static void PhasesFromK(ReadOnlySpan<double> z, ReadOnlySpan<double> lnK, double beta, Span<double> xa, Span<double> xb)
    {
        double sa = 0;
        double sb = 0;
        for (int i = 0; i < N; i++)
        {
            if (z[i] > 0)
            {
                double k = Math.Exp(lnK[i]);
                xa[i] = z[i] / (1 + (beta * (k - 1)));
                xb[i] = k * xa[i];
            }
            else
            {
                xa[i] = 0;
                xb[i] = 0;
            }

            sa += xa[i];
            sb += xb[i];
        }

        for (int i = 0; i < N; i++)
        {
            xa[i] /= sa;
            xb[i] /= sb;
        }
    }

    private static bool Solve3(ReadOnlySpan<double> a, ReadOnlySpan<double> b, Span<double> x)
    {
        double a00 = a[0], a01 = a[1], a02 = a[2];
        double a10 = a[3], a11 = a[4], a12 = a[5];
        double a20 = a[6], a21 = a[7], a22 = a[8];
        double c00 = (a11 * a22) - (a12 * a21);
        double c01 = (a12 * a20) - (a10 * a22);
        double c02 = (a10 * a21) - (a11 * a20);
        double det = (a00 * c00) + (a01 * c01) + (a02 * c02);
        if (!(Math.Abs(det) > 0) || !double.IsFinite(det))
        {
            return false;
        }

        double inv = 1 / det;
        x[0] = inv * ((c00 * b[0]) + (((a02 * a21) - (a01 * a22)) * b[1]) + (((a01 * a12) - (a02 * a11)) * b[2]));
        x[1] = inv * ((c01 * b[0]) + (((a00 * a22) - (a02 * a20)) * b[1]) + (((a02 * a10) - (a00 * a12)) * b[2]));
        x[2] = inv * ((c02 * b[0]) + (((a01 * a20) - (a00 * a21)) * b[1]) + (((a00 * a11) - (a01 * a10)) * b[2]));
        return double.IsFinite(x[0]) && double.IsFinite(x[1]) && double.IsFinite(x[2]);
    }

    private static double Distance(ReadOnlySpan<double> a, ReadOnlySpan<double> b) =>
        Math.Max(Math.Abs(a[0] - b[0]), Math.Max(Math.Abs(a[1] - b[1]), Math.Abs(a[2] - b[2])));

    private static double SafeLnRatio(double num, double den) => num > 0 && den > 0 ? Math.Log(num / den) : 0;

    private protected static string F(double x) => x.ToString("G6", CultureInfo.InvariantCulture);

    private static string F(Ternary t) => $"({F(t.Solute)}, {F(t.Diluent)}, {F(t.Solvent)})";
}
