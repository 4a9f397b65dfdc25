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
/// component, then from trial phases near the mixture along the principal directions of the curvature of the Gibbs
/// energy of mixing (a negative curvature, inside the spinodal, proves instability by itself), finds whether the
/// mixture splits and gives a trial phase; successive substitution of the distribution
/// ratios with the Rachford-Rice equation for the phase fraction follows (with dominant-eigenvalue acceleration every
/// fifth step), then Newton's method on the mole numbers of one phase (analytic Jacobian where the model has one,
/// finite differences otherwise; step halving on the residual) polishes to isoactivity within <see cref="Tolerance"/>.
/// Near the plait point, where substitution crawls and Newton may not converge from its start, the tie lines traced
/// for the temperature locate the tie line through the mixture, and a mixture that passes every trial phase is
/// checked against them too (a metastable mixture near the plait point), so the answer never depends on what the
/// model computed before; as a last resort a Newton descent on the Gibbs energy itself finds the split of an unstable
/// mixture whose tie line is too short to have been traced. When those tie lines are already traced and
/// <see cref="ColdStartFromTieLines"/> is set, a cold start begins with Newton from the two traced tie lines that
/// bracket the mixture instead (same answer, far less work). A converged answer whose phases coincide (the trivial
/// solution) is never returned as two phases. A warm start skips the stability test and starts from the given phases,
/// falling back to a cold start if that does not give a proper split. The raffinate is the diluent-richer phase.
/// </para>
/// <para>
/// Tie lines with a given solute fraction at one end are found by Newton's method on isoactivity with that fraction
/// held, started from the tie-line family traced once per temperature from the binary end toward the plait point (a
/// few milliseconds; the families of the last eight temperatures used are kept; the model is safe to use from several
/// threads).
/// </para>
/// </remarks>
public abstract partial class ActivityCoefficientModel : IPhaseEquilibrium
{
    private const int N = 3;
    private const int StateCapacity = 32;
    private const double TrivialDistance = 1e-6;

    // Tuned on the reference system over its two-phase region: hand over to Newton once substitution changes ln K by
    // less than this; leave a stability trial once it is proven unstable and changes by less than this.
    private const double NewtonSwitch = 1e-3;
    private const double TrialExit = 1e-2;

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

    /// <summary>
    /// Whether a split without a warm start may start from the tie lines already traced for that temperature (by a
    /// tie-line or solute-limit call, or by an earlier split) instead of running the stability test first. The answer
    /// is the same to the tolerance; only the work differs. Default true.
    /// </summary>
    public bool ColdStartFromTieLines { get; init; } = true;

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
    /// each component present, from trial phases near the mixture along the principal directions of the curvature of
    /// the Gibbs energy of mixing (negative curvature alone proves instability), and from the ends of the traced tie
    /// line nearest the mixture (traced for the temperature when needed). A test that finds no negative distance is
    /// strong evidence, not proof, of stability; <see cref="Split(Ternary, double)"/> also checks the mixture against
    /// the traced tie lines.
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
        bool unstable = FindUnstableTrial(state, zs, trial, out double tm, ref iterations, stopAtFirst: false)
            || FindUnstableNearFeed(state, zs, trial, out tm, ref iterations)
            || FindUnstableFromFamily(state, temperatureKelvin, zs, trial, out tm, ref iterations);
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
    /// (its ends differ by a few thousandths in mole fraction when a plait point exists: tracing stops at tie lines
    /// shorter than 0.001).
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

    /// <summary>
    /// ln gamma and its derivatives d ln gamma_i / d n_j (row-major 3 x 3) with respect to the mole numbers of one mole of
    /// mixture of composition <paramref name="x"/>; false when the model has no analytic derivatives (finite
    /// differences are used then).
    /// </summary>
    private protected virtual bool LnGammaDerivatives(ReadOnlySpan<double> state, ReadOnlySpan<double> x, Span<double> lnGamma, Span<double> derivatives) => false;

    /// <summary>For tests: the analytic derivatives at a temperature, or false when the model has none.</summary>
    internal bool TryLnGammaDerivatives(double temperatureKelvin, ReadOnlySpan<double> x, Span<double> lnGamma, Span<double> derivatives)
    {
        Span<double> state = stackalloc double[StateCapacity];
        Prepare(temperatureKelvin, state);
        return LnGammaDerivatives(state, x, lnGamma, derivatives);
    }

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

    private PhaseSplit SplitMole(Ternary overall, Ternary zMole, double temperatureKelvin, bool hasWarmStart, Ternary warmA, Ternary warmB, bool useFamily = true)
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
        if (useFamily && ColdStartFromTieLines && CachedFamily(temperatureKelvin) is { } cached
            && FamilyStart(state, cached, zCopy, xa, xb, out beta, ref iterations))
        {
            return ToSplit(overall, xa, xb, beta, iterations);
        }

        bool unstable = FindUnstableTrial(state, zCopy, trial, out _, ref iterations, stopAtFirst: true)
            || FindUnstableNearFeed(state, zCopy, trial, out _, ref iterations);
        if (unstable)
        {
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
        }

        // Near the plait point a metastable mixture can pass every trial phase, and substitution crawls: there the
        // tie lines traced for this temperature locate the one through the mixture. They are consulted for every
        // mixture that is not split otherwise (traced once per temperature, a few milliseconds, and kept for the last
        // few temperatures), so that the answer never depends on what the model computed before.
        if (useFamily && FamilySplit(state, temperatureKelvin, zCopy, xa, xb, out beta, ref iterations))
        {
            return ToSplit(overall, xa, xb, beta, iterations);
        }

        if (!unstable)
        {
            return PhaseSplit.OnePhase(overall, iterations);
        }

        if (MinimiseGibbs(state, zCopy, trial, xa, xb, out beta, ref iterations))
        {
            return ToSplit(overall, xa, xb, beta, iterations);
        }

        throw new EquilibriumException(
            $"{ModelName} phase split of {F(overall)} at {F(temperatureKelvin)} K: the mixture is unstable but the two-phase " +
            $"calculation did not converge to isoactivity within {Tolerance:G3} in {MaxIterations} iterations.");
    }

    // Near the plait point the trial phases rich in one component can all fall back to the mixture itself although
    // it splits. The tie lines traced for this temperature (when there are) then give two more trial phases: the ends
    // of the tie line nearest the mixture.
    private bool FindUnstableFromFamily(ReadOnlySpan<double> state, double temperatureKelvin, ReadOnlySpan<double> z, Span<double> trial, out double minTm, ref int iterations)
    {
        minTm = 0;
        if (FamilyOrNull(temperatureKelvin) is not { } family)
        {
            return false;
        }

        var zt = new Ternary(z[0], z[1], z[2]);
        double bestDistance = double.PositiveInfinity;
        int best = -1;
        for (int k = 0; k < family.RaffinateMole.Length; k++)
        {
            Ternary r = family.RaffinateMole[k];
            Ternary e = family.ExtractMole[k];
            Ternary de = e - r;
            double length2 = (de.Solute * de.Solute) + (de.Diluent * de.Diluent) + (de.Solvent * de.Solvent);
            Ternary dz = zt - r;
            double t = length2 > 0 ? Math.Clamp(((dz.Solute * de.Solute) + (dz.Diluent * de.Diluent) + (dz.Solvent * de.Solvent)) / length2, 0, 1) : 0;
            double distance = Ternary.MaxDifference(zt, r + (t * de));
            if (distance < bestDistance)
            {
                bestDistance = distance;
                best = k;
            }
        }

        if (best < 0 || bestDistance > 0.05)
        {
            return false;
        }

        Ternary rb = family.RaffinateMole[best];
        Ternary eb = family.ExtractMole[best];
        Span<double> starts = [rb.Solute, rb.Diluent, rb.Solvent, eb.Solute, eb.Diluent, eb.Solvent];
        return FindUnstableTrial(state, z, starts, trial, out minTm, ref iterations, stopAtFirst: false);
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
        // Trial phases rich in the diluent, the solvent, then the solute (the usual order of a split's phases).
        int presentCount = 0;
        for (int i = 0; i < N; i++)
        {
            if (z[i] > 0)
            {
                presentCount++;
            }
        }

        Span<double> starts = stackalloc double[3 * N];
        int count = 0;
        ReadOnlySpan<int> order = [1, 2, 0];
        foreach (int k in order)
        {
            if (!(z[k] > 0))
            {
                continue;
            }

            for (int i = 0; i < N; i++)
            {
                starts[(count * N) + i] = z[i] > 0 ? (i == k ? 0.98 : 0.02 / (presentCount - 1)) : 0;
            }

            count++;
        }

        return FindUnstableTrial(state, z, starts[..(count * N)], trial, out minTm, ref iterations, stopAtFirst);
    }

    // Tangent plane distance from each start (mole fractions, three per start): true with the (unnormalised) trial
    // phase W of the most negative distance found.
    private bool FindUnstableTrial(ReadOnlySpan<double> state, ReadOnlySpan<double> z, ReadOnlySpan<double> starts, Span<double> trial, out double minTm, ref int iterations, bool stopAtFirst, double threshold = -1e-10)
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

        for (int start = 0; start < starts.Length / N; start++)
        {
            for (int i = 0; i < N; i++)
            {
                w[i] = z[i] > 0 ? Math.Max(starts[(start * N) + i], 1e-12) : 0;
            }

            double tm = double.NaN;
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

                // Converged, or already proven unstable with a trial phase good enough to start the split from.
                if (change < 1e-10 || (stopAtFirst && tm < -1e-6 && change < TrialExit))
                {
                    break;
                }
            }

            // A negative distance anywhere proves instability, converged or not (substitution lowers it step by
            // step, slowly near the plait point).
            if (tm < threshold && tm < minTm)
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

    // Substitution with Rachford-Rice, then Newton on the moles of phase B; phase compositions out, beta = moles of B
    // per mole of feed. Substitution lowers the Gibbs energy at every step but slows down near the plait point; Newton
    // takes over once the ratios settle, and if Newton fails substitution carries on to the tolerance.
    private bool TryTwoPhase(ReadOnlySpan<double> state, ReadOnlySpan<double> z, Span<double> lnK, Span<double> xa, Span<double> xb, out double beta, ref int iterations, int substitutionSteps)
    {
        Span<double> lga = stackalloc double[N];
        Span<double> lgb = stackalloc double[N];
        Span<double> previousStep = stackalloc double[N];
        Span<double> stepK = stackalloc double[N];
        beta = 0.5;
        double change = double.PositiveInfinity;
        int done = 0;
        int attempts = 0;
        double switchAt = NewtonSwitch;
        while (true)
        {
            for (; done < substitutionSteps; done++)
            {
                iterations++;
                if (!RachfordRice(z, lnK, ref beta))
                {
                    return false;
                }

                PhasesFromK(z, lnK, beta, xa, xb);
                LnGammaCore(state, xa, lga);
                LnGammaCore(state, xb, lgb);
                change = 0;
                double spread = 0;
                double dot = 0;
                double previousNorm = 0;
                for (int i = 0; i < N; i++)
                {
                    if (z[i] > 0)
                    {
                        double next = lga[i] - lgb[i];
                        stepK[i] = next - lnK[i];
                        change = Math.Max(change, Math.Abs(stepK[i]));
                        dot += stepK[i] * previousStep[i];
                        previousNorm += previousStep[i] * previousStep[i];
                        lnK[i] = next;
                        spread = Math.Max(spread, Math.Abs(next));
                    }
                }

                if (spread < 1e-4)
                {
                    return false; // drifting to the trivial solution
                }

                if (change <= Tolerance)
                {
                    // Converged by substitution alone.
                    if (!RachfordRice(z, lnK, ref beta) || !(beta > 0 && beta < 1))
                    {
                        return false;
                    }

                    PhasesFromK(z, lnK, beta, xa, xb);
                    return Distance(xa, xb) > TrivialDistance;
                }

                // Every fifth step, extrapolate along the dominant eigenvalue of the substitution (Crowe and Nishio,
                // AIChE J. 21, 528, 1975), which is what makes substitution slow near the plait point.
                if (done % 5 == 4 && previousNorm > 0)
                {
                    double lambda = dot / previousNorm;
                    if (lambda > 0 && lambda < 0.95)
                    {
                        for (int i = 0; i < N; i++)
                        {
                            lnK[i] += stepK[i] * lambda / (1 - lambda);
                        }
                    }
                }

                stepK.CopyTo(previousStep);
                if (change < switchAt && done >= 2 && beta > 0 && beta < 1)
                {
                    done++;
                    break;
                }
            }

            if (!RachfordRice(z, lnK, ref beta) || !(beta > 0 && beta < 1))
            {
                return false;
            }

            PhasesFromK(z, lnK, beta, xa, xb);
            if (Newton(state, z, xa, xb, ref beta, ref iterations))
            {
                return true;
            }

            // Newton stopped early: substitute closer, then try once more; after that the caller falls back on the
            // traced tie lines.
            attempts++;
            if (attempts >= 2 || done >= substitutionSteps)
            {
                return false;
            }

            switchAt *= 0.01;
            if (!RachfordRice(z, lnK, ref beta))
            {
                return false;
            }
        }
    }

    private bool Newton(ReadOnlySpan<double> state, ReadOnlySpan<double> z, Span<double> xa, Span<double> xb, ref double beta, ref int iterations)
    {
        Span<double> nb = stackalloc double[N];
        Span<double> na = stackalloc double[N];
        Span<double> nbTrial = stackalloc double[N];
        Span<double> f = stackalloc double[N];
        Span<double> fTrial = stackalloc double[N];
        Span<double> jac = stackalloc double[N * N];
        Span<double> ja = stackalloc double[N * N];
        Span<double> jb = stackalloc double[N * N];
        Span<double> step = stackalloc double[N];
        for (int i = 0; i < N; i++)
        {
            nb[i] = z[i] > 0 ? beta * xb[i] : 0;
            na[i] = z[i] - nb[i];
        }

        double previousResidual = double.PositiveInfinity;
        int slow = 0;
        for (int it = 0; it < MaxIterations; it++)
        {
            iterations++;
            if (!ChemicalPotentialJacobian(state, na, z, xa, f, ja, sign: 1) || !ChemicalPotentialJacobian(state, nb, z, xb, f, jb, sign: -1, accumulate: true))
            {
                return false;
            }

            double residual = MaxAbs(f);
            if (residual <= Tolerance)
            {
                beta = nb[0] + nb[1] + nb[2];
                return beta > 0 && beta < 1 && Distance(xa, xb) > TrivialDistance;
            }

            // Newton converges fast or not at all: three steps in a row that do not halve the residual mean it is
            // headed for a phase that vanishes or a start too far off (substitution near the plait point), so stop early.
            slow = residual > 0.5 * previousResidual ? slow + 1 : 0;
            if (slow >= 3)
            {
                return false;
            }

            previousResidual = residual;

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

            // Newton step on nb (step solves J s = f, so nb -= s), cut back to keep both phases' moles positive,
            // then halved until the residual falls.
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

            bool accepted = false;
            for (int attempt = 0; attempt < 12 && !accepted; attempt++, lambda *= 0.5)
            {
                for (int i = 0; i < N; i++)
                {
                    nbTrial[i] = z[i] > 0 ? nb[i] - (lambda * step[i]) : 0;
                }

                if (Residual(state, z, nbTrial, xa, xb, fTrial) && MaxAbs(fTrial) < residual)
                {
                    accepted = true;
                }
            }

            if (!accepted)
            {
                return false;
            }

            for (int i = 0; i < N; i++)
            {
                nb[i] = nbTrial[i];
                na[i] = z[i] - nb[i];
            }

            if (Distance(xa, xb) < 1e-9)
            {
                return false;
            }
        }

        return false;
    }

    // f = mu(a) - mu(b) for phase B moles nb (phase A = z - nb); phase compositions out.
    private bool Residual(ReadOnlySpan<double> state, ReadOnlySpan<double> z, ReadOnlySpan<double> nb, Span<double> xa, Span<double> xb, Span<double> f)
    {
        double ta = 0;
        double tb = 0;
        for (int i = 0; i < N; i++)
        {
            ta += z[i] - nb[i];
            tb += nb[i];
        }

        if (!(ta > 0 && tb > 0))
        {
            return false;
        }

        for (int i = 0; i < N; i++)
        {
            xa[i] = (z[i] - nb[i]) / ta;
            xb[i] = nb[i] / tb;
        }

        Span<double> lga = stackalloc double[N];
        Span<double> lgb = stackalloc double[N];
        LnGammaCore(state, xa, lga);
        LnGammaCore(state, xb, lgb);
        for (int i = 0; i < N; i++)
        {
            f[i] = z[i] > 0 ? Math.Log(xa[i]) + lga[i] - Math.Log(xb[i]) - lgb[i] : 0;
        }

        return true;
    }

    private static double MaxAbs(ReadOnlySpan<double> v) => Math.Max(Math.Abs(v[0]), Math.Max(Math.Abs(v[1]), Math.Abs(v[2])));

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
        Span<double> dn = stackalloc double[N * N];
        bool analytic = LnGammaDerivatives(state, x, lg, dn);
        if (!analytic)
        {
            LnGammaCore(state, x, lg);
        }

        for (int i = 0; i < N; i++)
        {
            double mu = z[i] > 0 ? Math.Log(x[i]) + lg[i] : 0;
            f[i] = accumulate ? f[i] + (sign * mu) : sign * mu;
        }

        if (analytic)
        {
            for (int i = 0; i < N; i++)
            {
                for (int j = 0; j < N; j++)
                {
                    double ideal = (i == j && z[i] > 0 ? 1 / n[i] : 0) - (1 / total);
                    jac[(i * N) + j] = z[j] > 0 ? ideal + (dn[(i * N) + j] / total) : 0;
                }
            }

            return true;
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
