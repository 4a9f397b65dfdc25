using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Numerics;

namespace Tieflow.Core.Cascade;

/// <summary>
/// Design of counter-current cascades on any equilibrium model: stages for a target, solvent flow for a target with a
/// given number of stages, and minimum solvent flow. Flows are on the system's basis (kg/h with mass fractions, kmol/h
/// with mole fractions); temperatures kelvin.
/// </summary>
/// <remarks>
/// <para>The target fixes the overall balance: the final raffinate lies on the raffinate branch at the target solute
/// fraction (a recovery target is first turned into that fraction), the extract leaving stage 1 on the extract branch on
/// the line through that raffinate and the mixture of feed and solvent. The net flow D = feed - extract = raffinate
/// leaving stage n - extract entering it is the same for every stage (the difference point).</para>
/// <para>Stages are counted from the feed end: the extract leaving stage n gives x* by its tie line, the Murphree
/// relation gives the raffinate leaving, and the extract entering is where the line through that raffinate and D meets
/// the extract branch; the last stage counts by the fraction of its solute change needed.</para>
/// <para>The minimum solvent flow is where, between the final raffinate and the raffinate in equilibrium with the
/// extract leaving stage 1, a tie line first passes through D (a pinch: infinitely many stages, for any efficiency
/// above zero). It is found by bisection on the solvent flow with a scan of tie lines over that range (64 intervals
/// plus both ends exactly, every sampled local minimum refined by golden-section search), so a tangent pinch between
/// samples is found as well.</para>
/// </remarks>
public sealed class CascadeDesign
{
    private const int PinchScanIntervals = 64;
    private const int BranchScanIntervals = 48;

    private readonly CascadeSolver _solver;
    private readonly Envelope _envelope;
    private readonly CascadeSolverOptions _options;

    /// <summary>Creates a design calculator for one model at one temperature.</summary>
    /// <param name="model">The equilibrium model.</param>
    /// <param name="temperatureKelvin">Temperature of every stage, kelvin.</param>
    /// <param name="options">Tolerance and iteration limits of the cascade solves; defaults when null.</param>
    /// <param name="maxStages">Largest stage count a design may return, 1 or more; default 500.</param>
    public CascadeDesign(IPhaseEquilibrium model, double temperatureKelvin, CascadeSolverOptions? options = null, int maxStages = 500)
    {
        _solver = new CascadeSolver(model, temperatureKelvin, options);
        _envelope = _solver.Envelope;
        _options = _solver.Options;
        ArgumentOutOfRangeException.ThrowIfLessThan(maxStages, 1);
        MaxStages = maxStages;
    }

    /// <summary>Largest stage count a design may return.</summary>
    public int MaxStages { get; }

    private string FlowUnit => _envelope.Model.System.FlowUnit;

    /// <summary>Stages of a counter-current cascade for a target at the given solvent flow.</summary>
    /// <param name="feed">Feed to stage 1; flow above zero.</param>
    /// <param name="solvent">Solvent to the last stage; flow above zero.</param>
    /// <param name="target">Final raffinate solute fraction or recovery.</param>
    /// <param name="efficiencies">Murphree raffinate efficiencies above zero, stage 1 first; stages beyond the list use its last value.</param>
    /// <returns>Whole and fractional stages, the minimum solvent flow, and the cascade of the whole number of stages.</returns>
    /// <exception cref="InfeasibleSpecificationException">When the target is above the feed's content, or beyond what infinitely many stages reach at this solvent flow, or needs more than <see cref="MaxStages"/> stages.</exception>
    public DesignResult FindStages(MaterialStream feed, MaterialStream solvent, DesignTarget target, IReadOnlyList<double> efficiencies)
    {
        CheckDesignInputs(feed, solvent, efficiencies, target);
        Ternary zS = solvent.Composition;
        double flow = solvent.Flow;
        MinimumSolventResult minimum = FindMinimumSolvent(feed, zS, target);
        if (!Feasible(feed, zS, flow, target, out _, out _))
        {
            string relaxed = Relaxed(feed, zS, flow, target);
            throw new InfeasibleSpecificationException($"The {target} cannot be reached at a solvent flow of {flow:G6} {FlowUnit}, even with infinitely many stages: raise the solvent flow above {minimum.MinimumSolventFlow:G6} {FlowUnit} or relax the target to {relaxed}.");
        }

        double xt = RaffinateTarget(feed, zS, flow, target);
        var profile = new List<double>();
        double fractional = CountStages(feed, zS, flow, xt, efficiencies, profile);
        int whole = Math.Max(1, (int)Math.Ceiling(fractional - 1e-9));

        // The stepped profile starts the cascade solve: it is close to the answer, which matters for long cascades.
        double[] start = [.. profile.Take(4 * whole)];
        CascadeResult cascade = _solver.SolveCountercurrent(feed, solvent, StageEfficiencies(efficiencies, whole), start.Length == 4 * whole ? start : null);
        return new DesignResult(whole, fractional, flow, minimum.MinimumSolventFlow, cascade);
    }

    /// <summary>
    /// The fractional stage count of <see cref="FindStages(MaterialStream, MaterialStream, DesignTarget, IReadOnlyList{double})"/>
    /// alone, without the minimum solvent flow and the cascade of the whole number of stages (the same number).
    /// </summary>
    /// <inheritdoc cref="FindStages(MaterialStream, MaterialStream, DesignTarget, IReadOnlyList{double})"/>
    internal double FindFractionalStages(MaterialStream feed, MaterialStream solvent, DesignTarget target, IReadOnlyList<double> efficiencies)
    {
        CheckDesignInputs(feed, solvent, efficiencies, target);
        Ternary zS = solvent.Composition;
        double flow = solvent.Flow;
        if (!Feasible(feed, zS, flow, target, out _, out _))
        {
            // The full design states why.
            return FindStages(feed, solvent, target, efficiencies).FractionalStages;
        }

        return CountStages(feed, zS, flow, RaffinateTarget(feed, zS, flow, target), efficiencies, null);
    }

    /// <summary>Stages for a target with the same efficiency on every stage.</summary>
    /// <inheritdoc cref="FindStages(MaterialStream, MaterialStream, DesignTarget, IReadOnlyList{double})"/>
    public DesignResult FindStages(MaterialStream feed, MaterialStream solvent, DesignTarget target, double efficiency = 1) =>
        FindStages(feed, solvent, target, [efficiency]);

    /// <summary>Solvent flow with which a counter-current cascade of <paramref name="stages"/> stages just meets the target.</summary>
    /// <param name="feed">Feed to stage 1; flow above zero.</param>
    /// <param name="solventComposition">Composition of the solvent (fractions summing to one).</param>
    /// <param name="stages">Number of stages, 1 or more.</param>
    /// <param name="target">Final raffinate solute fraction or recovery.</param>
    /// <param name="efficiencies">Murphree raffinate efficiencies above zero, stage 1 first; stages beyond the list use its last value.</param>
    /// <exception cref="InfeasibleSpecificationException">When no solvent flow meets the target (target above the feed's content, or below what the solvent's own solute allows).</exception>
    public DesignResult FindSolvent(MaterialStream feed, Ternary solventComposition, int stages, DesignTarget target, IReadOnlyList<double> efficiencies)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(stages, 1);
        CheckDesignInputs(feed, new MaterialStream(1, solventComposition), efficiencies, target);
        MinimumSolventResult minimum = FindMinimumSolvent(feed, solventComposition, target);
        double[] perStage = StageEfficiencies(efficiencies, stages);

        // Shortfall of the target: above zero when the cascade does not meet it; falls as the solvent flow rises. NaN
        // where the cascade cannot be solved (so much solvent that feed and solvent together are one phase).
        double Shortfall(double flow)
        {
            CascadeResult? r = TrySolve(feed, new MaterialStream(flow, solventComposition), perStage);
            return r is null ? double.NaN : ShortfallOf(r, target);
        }

        double lo = minimum.MinimumSolventFlow;
        double fLo = Shortfall(lo);
        for (int i = 0; i < 40 && double.IsNaN(fLo); i++)
        {
            lo *= 1.05; // just above the minimum the cascade may still be one phase in a stage
            fLo = Shortfall(lo);
        }

        double unsolvable = double.NaN;
        for (int i = 0; i < 60 && fLo <= 0; i++)
        {
            // Met already at this flow (the limit there is the solvent needed for two phases, not a pinch): look lower.
            double lower = 0.5 * lo;
            double f = Shortfall(lower);
            if (double.IsNaN(f))
            {
                unsolvable = lower;
                break;
            }

            lo = lower;
            fLo = f;
        }

        for (int i = 0; i < 40 && fLo <= 0 && !double.IsNaN(unsolvable); i++)
        {
            // Between a flow too small to solve and one that meets the target: the target's flow, or the smallest
            // flow that can be solved.
            double mid = 0.5 * (unsolvable + lo);
            double f = Shortfall(mid);
            if (double.IsNaN(f))
            {
                unsolvable = mid;
            }
            else if (f > 0)
            {
                // A bracket [mid, lo] for the root below.
                double hiFlow = lo, fHiFlow = fLo;
                lo = mid;
                fLo = f;
                if (!BracketedRoot.TryFind(static (s, g) => g(s), Shortfall, lo, hiFlow, fLo, fHiFlow, 1e-10 * hiFlow, _options.MaxIterations, out double root, out _) || double.IsNaN(root))
                {
                    throw new CascadeException($"The solvent flow for {stages} stages and the {target} did not converge between {lo:G6} and {hiFlow:G6} {FlowUnit}.");
                }

                return Finish(root);
            }
            else
            {
                lo = mid;
                fLo = f;
            }
        }

        if (double.IsNaN(fLo))
        {
            throw new CascadeException($"A counter-current cascade of {stages} stages cannot be solved near the minimum solvent flow of {minimum.MinimumSolventFlow:G6} {FlowUnit} for the {target}.");
        }

        double hi = lo, fHi = fLo, lastValid = lo;
        for (int i = 0; fHi > 0 && i < 60; i++)
        {
            hi = 2 * hi;
            fHi = Shortfall(hi);
            if (double.IsNaN(fHi))
            {
                break;
            }

            lastValid = hi;
            if (fHi > 0)
            {
                lo = hi;
                fLo = fHi;
            }
        }

        if (!(fHi <= 0))
        {
            throw new InfeasibleSpecificationException(Unreachable(feed, solventComposition, stages, target, perStage, lastValid, double.IsNaN(fHi) ? hi : double.NaN));
        }

        double flowFound;
        if (fLo <= 0)
        {
            flowFound = lo; // met at the smallest flow that can be solved
        }
        else if (!BracketedRoot.TryFind(static (s, f) => f(s), Shortfall, lo, hi, fLo, fHi, 1e-10 * hi, _options.MaxIterations, out flowFound, out _) || double.IsNaN(flowFound))
        {
            throw new CascadeException($"The solvent flow for {stages} stages and the {target} did not converge between {lo:G6} and {hi:G6} {FlowUnit}.");
        }

        return Finish(flowFound);

        DesignResult Finish(double flow)
        {
            CascadeResult cascade = _solver.SolveCountercurrent(feed, new MaterialStream(flow, solventComposition), perStage);
            double xt = RaffinateTarget(feed, solventComposition, flow, target);
            double fractional = CountStages(feed, solventComposition, flow, xt, efficiencies);
            return new DesignResult(stages, fractional, flow, Math.Min(minimum.MinimumSolventFlow, flow), cascade);
        }
    }

    private static double ShortfallOf(CascadeResult r, DesignTarget target) =>
        target.Kind == DesignTargetKind.RaffinateFraction ? r.Raffinate.Composition.Solute - target.Value : target.Value - r.Recovery;

    private CascadeResult? TrySolve(MaterialStream feed, MaterialStream solvent, double[] perStage)
    {
        try
        {
            return _solver.TrySolveCountercurrent(feed, solvent, perStage, out CascadeResult r) ? r : null;
        }
        catch (CascadeException)
        {
            return null;
        }
        catch (EquilibriumException)
        {
            return null;
        }
    }

    /// <summary>
    /// The message for a target that a given number of stages reaches at no solvent flow: the best target they reach
    /// (the lowest shortfall over the solvent flows that can be solved, from a log-spaced scan refined by golden-section
    /// search) and at which flow.
    /// </summary>
    private string Unreachable(MaterialStream feed, Ternary zS, int stages, DesignTarget target, double[] perStage, double lastValid, double firstInvalid)
    {
        double top = lastValid;
        if (!double.IsNaN(firstInvalid))
        {
            // The largest flow that can be solved: more solvent makes feed and solvent one phase.
            double invalid = firstInvalid;
            for (int i = 0; i < 40 && invalid - top > 1e-6 * top; i++)
            {
                double mid = 0.5 * (top + invalid);
                if (TrySolve(feed, new MaterialStream(mid, zS), perStage) is null)
                {
                    invalid = mid;
                }
                else
                {
                    top = mid;
                }
            }
        }

        double bottom = Math.Max(top * 1e-6, feed.Flow * 1e-6);
        double Objective(double logFlow) => TrySolve(feed, new MaterialStream(Math.Exp(logFlow), zS), perStage) is { } r ? ShortfallOf(r, target) : double.PositiveInfinity;
        const int Samples = 48;
        double a = Math.Log(bottom), b = Math.Log(top);
        int best = Samples;
        double bestValue = Objective(b);
        for (int k = 0; k < Samples; k++)
        {
            double v = Objective(a + ((b - a) * k / Samples));
            if (v < bestValue)
            {
                bestValue = v;
                best = k;
            }
        }

        double center = a + ((b - a) * best / Samples);
        double step = (b - a) / Samples;
        double logBest = GoldenSectionMinimizer.Minimize(Objective, Math.Max(a, center - step), Math.Min(b, center + step), 1e-6, 200, out _);
        double flow = Math.Exp(logBest);
        CascadeResult? bestCascade = TrySolve(feed, new MaterialStream(flow, zS), perStage);
        string reached = bestCascade is null
            ? "none could be solved"
            : $"the best they reach is a recovery of {bestCascade.Recovery:G6} (a final raffinate solute fraction of {bestCascade.Raffinate.Composition.Solute:G6}) at a solvent flow of about {flow:G4} {FlowUnit}";
        string beyond = double.IsNaN(firstInvalid)
            ? string.Empty
            : $"; above {top:G4} {FlowUnit} the feed dissolves in the solvent";
        return $"{stages} stage{(stages == 1 ? string.Empty : "s")} cannot reach the {target} with any solvent flow: {reached}{beyond}. Add stages or relax the target to that.";
    }

    /// <summary>Solvent flow for a target with the same efficiency on every stage.</summary>
    /// <inheritdoc cref="FindSolvent(MaterialStream, Ternary, int, DesignTarget, IReadOnlyList{double})"/>
    public DesignResult FindSolvent(MaterialStream feed, Ternary solventComposition, int stages, DesignTarget target, double efficiency = 1) =>
        FindSolvent(feed, solventComposition, stages, target, [efficiency]);

    /// <summary>Minimum solvent flow of a counter-current cascade for a target (the flow at which a pinch appears).</summary>
    /// <param name="feed">Feed to stage 1; flow above zero.</param>
    /// <param name="solventComposition">Composition of the solvent (fractions summing to one).</param>
    /// <param name="target">Final raffinate solute fraction or recovery.</param>
    /// <exception cref="InfeasibleSpecificationException">When no solvent flow reaches the target.</exception>
    public MinimumSolventResult FindMinimumSolvent(MaterialStream feed, Ternary solventComposition, DesignTarget target)
    {
        CheckDesignInputs(feed, new MaterialStream(1, solventComposition), [1.0], target);
        double hi = feed.Flow;
        int doublings = 0;
        while (!Feasible(feed, solventComposition, hi, target, out _, out _))
        {
            hi *= 2;
            if (++doublings > 40)
            {
                throw new InfeasibleSpecificationException($"No solvent flow up to {hi:G6} {FlowUnit} of this solvent reaches the {target}, even with infinitely many stages: relax the target{SolventLimitHint(solventComposition)} or use a solvent with less solute.");
            }
        }

        double lo = 0;
        int iterations = 0;
        while (hi - lo > 1e-11 * hi && iterations < 200)
        {
            iterations++;
            double mid = 0.5 * (lo + hi);
            if (Feasible(feed, solventComposition, mid, target, out _, out _))
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        // The pinch location: where the infeasible side first fails.
        Feasible(feed, solventComposition, lo, target, out double pinch, out double xt);
        if (double.IsNaN(pinch))
        {
            xt = RaffinateTarget(feed, solventComposition, hi, target);
        }

        return new MinimumSolventResult(hi, pinch, xt, iterations);
    }

    internal static double[] StageEfficiencies(IReadOnlyList<double> efficiencies, int stages)
    {
        var list = new double[stages];
        for (int n = 0; n < stages; n++)
        {
            list[n] = efficiencies[Math.Min(n, efficiencies.Count - 1)];
        }

        return list;
    }

    /// <summary>Fractional stages counted from the feed end with the end points fixed by the raffinate target.</summary>
    internal double CountStages(MaterialStream feed, Ternary zS, double flow, double xt, IReadOnlyList<double> efficiencies) =>
        CountStages(feed, zS, flow, xt, efficiencies, null);

    /// <summary>As above; when <paramref name="profile"/> is given, adds the stepped stages' (x, y, raffinate flow, extract flow).</summary>
    private double CountStages(MaterialStream feed, Ternary zS, double flow, double xt, IReadOnlyList<double> efficiencies, List<double>? profile)
    {
        if (!TryOverall(feed, zS, flow, xt, out Overall overall))
        {
            throw new InfeasibleSpecificationException($"No overall balance gives a final raffinate with solute fraction {xt:G6} at a solvent flow of {flow:G6} {FlowUnit}: raise the solvent flow.");
        }

        double y = overall.ExtractSolute;
        double extractFlow = overall.ExtractFlow;
        double xPrevious = feed.Composition.Solute;
        for (int n = 1; n <= MaxStages; n++)
        {
            double e = efficiencies[Math.Min(n, efficiencies.Count) - 1];
            TieLine tie = _envelope.FromExtract(y);
            double x = xPrevious - (e * (xPrevious - tie.Raffinate.Solute));
            Ternary raffinate = _envelope.Raffinate(x);
            double next = double.NaN;
            bool stalled = (n > 1 && !(x < xPrevious)) || (x > xt && !TryNextExtract(raffinate, overall.Difference, y, out next));
            if (profile is not null)
            {
                // Raffinate leaving n = extract entering n + D (the last stage: the solvent entering + D).
                Ternary extractIn = x <= xt || stalled ? flow * zS : _envelope.FromExtract(next).Extract;
                (double l, double v) = Envelope.Lever(overall.Difference, raffinate, -1 * extractIn);
                profile.AddRange([x, y, x <= xt || stalled ? Math.Max(Dot(flow * zS + overall.Difference, raffinate) / Dot(raffinate, raffinate), 0) : l, extractFlow]);
                extractFlow = Math.Max(v, 0);
            }

            if (x <= xt)
            {
                return n - 1 + ((xPrevious - xt) / (xPrevious - x));
            }

            // Stage 1 may leave a raffinate richer in solute (as a fraction) than an unsaturated feed; after it the
            // raffinate must get leaner, or the steps have stalled at a pinch. A stage that lands on the target within
            // rounding (the raffinate of exactly n stages, say) has no leaner extract to step to: it is the last one.
            if (stalled && x - xt <= TargetRounding * (feed.Composition.Solute - xt))
            {
                return n;
            }

            if (stalled)
            {
                break;
            }

            y = next;
            xPrevious = x;
        }

        throw new InfeasibleSpecificationException($"The {xt:G6} raffinate target needs more than {MaxStages} stages at a solvent flow of {flow:G6} {FlowUnit} (the operating line pinches against a tie line): raise the solvent flow or relax the target.");
    }

    // Relative to the solute removed, a step that misses the target by less than this has reached it.
    private const double TargetRounding = 1e-9;

    private static double Dot(Ternary a, Ternary b) => (a.Solute * b.Solute) + (a.Diluent * b.Diluent) + (a.Solvent * b.Solvent);

    /// <summary>The raffinate solute fraction a target means at this solvent flow.</summary>
    internal double RaffinateTarget(MaterialStream feed, Ternary zS, double flow, DesignTarget target)
    {
        if (target.Kind == DesignTargetKind.RaffinateFraction)
        {
            return target.Value;
        }

        if (!TryRaffinateForRecovery(feed, zS, flow, target.Value, out double xt))
        {
            throw new InfeasibleSpecificationException($"No final raffinate gives a recovery of {target.Value:G6} at a solvent flow of {flow:G6} {FlowUnit}: raise the solvent flow or relax the target.");
        }

        return xt;
    }

    private static void CheckDesignInputs(MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies, DesignTarget target)
    {
        CascadeSolver.CheckStream(feed, nameof(feed), positive: true);
        CascadeSolver.CheckStream(solvent, nameof(solvent), positive: true);
        ArgumentNullException.ThrowIfNull(efficiencies);
        if (efficiencies.Count < 1)
        {
            throw new ArgumentException("Expected at least one stage efficiency.", nameof(efficiencies));
        }

        for (int i = 0; i < efficiencies.Count; i++)
        {
            if (!(efficiencies[i] > 0 && efficiencies[i] <= 1))
            {
                throw new ArgumentOutOfRangeException(nameof(efficiencies), efficiencies[i], $"Expected efficiencies[{i}] above 0 and at most 1 for a design (a stage of efficiency 0 transfers nothing).");
            }
        }

        if (target.Value == 0)
        {
            throw new ArgumentException("Expected a target made with DesignTarget.RaffinateFraction or DesignTarget.Recovery.", nameof(target));
        }

        double xF = feed.Composition.Solute;
        if (target.Kind == DesignTargetKind.RaffinateFraction && target.Value >= xF)
        {
            throw new InfeasibleSpecificationException($"The target raffinate solute fraction {target.Value:G6} is not below the feed's solute fraction {xF:G6}: lower the target below {xF:G6}.");
        }

        if (target.Kind == DesignTargetKind.Recovery && !(xF > 0))
        {
            throw new InfeasibleSpecificationException("The feed holds no solute, so no recovery can be reached: give a feed with solute.");
        }
    }

    private string SolventLimitHint(Ternary zS)
    {
        if (!(zS.Solute > 0) || zS.Solute > _envelope.ExtractMax)
        {
            return string.Empty;
        }

        double x = _envelope.FromExtract(zS.Solute).Raffinate.Solute;
        return $" (the solvent's own solute keeps the raffinate above about {x:G4})";
    }

    /// <summary>The nearest target that infinitely many stages reach at this solvent flow, as text.</summary>
    private string Relaxed(MaterialStream feed, Ternary zS, double flow, DesignTarget target)
    {
        if (target.Kind == DesignTargetKind.RaffinateFraction)
        {
            double lo = target.Value, hi = feed.Composition.Solute;
            for (int i = 0; i < 60; i++)
            {
                double mid = 0.5 * (lo + hi);
                if (Feasible(feed, zS, flow, DesignTarget.RaffinateFraction(mid), out _, out _))
                {
                    hi = mid;
                }
                else
                {
                    lo = mid;
                }
            }

            return $"a raffinate solute fraction of {hi:G4} or more";
        }
        else
        {
            double lo = 0, hi = target.Value;
            for (int i = 0; i < 60; i++)
            {
                double mid = 0.5 * (lo + hi);
                if (mid > 0 && Feasible(feed, zS, flow, DesignTarget.Recovery(mid), out _, out _))
                {
                    lo = mid;
                }
                else
                {
                    hi = mid;
                }
            }

            return $"a recovery of {lo:G4} or less";
        }
    }

    /// <summary>
    /// Whether infinitely many stages reach the target at this solvent flow: the overall balance exists and no tie line
    /// between the final raffinate and the stage-1 equilibrium raffinate passes through the difference point.
    /// </summary>
    private bool Feasible(MaterialStream feed, Ternary zS, double flow, DesignTarget target, out double pinch, out double xt)
    {
        pinch = double.NaN;
        xt = double.NaN;
        if (!(flow > 0))
        {
            return false;
        }

        if (target.Kind == DesignTargetKind.RaffinateFraction)
        {
            xt = target.Value;
        }
        else if (!TryRaffinateForRecovery(feed, zS, flow, target.Value, out xt))
        {
            return false;
        }

        if (!TryOverall(feed, zS, flow, xt, out Overall overall))
        {
            return false;
        }

        TieLine first = _envelope.FromExtract(overall.ExtractSolute);
        double xEnd = first.Raffinate.Solute;
        if (xEnd <= xt)
        {
            // The extract leaving stage 1 is leaner than equilibrium with the target raffinate: less than one stage.
            return true;
        }

        // q(x) = det(R, E, D) / -det(R, E, solvent): the side of each tie line on which the difference point lies,
        // relative to the side the solvent is on (where D lies for plenty of solvent). A pinch is a zero of q.
        double Q(double x)
        {
            TieLine tie = x >= xEnd ? first : _envelope.Model.TieLineFromRaffinate(Math.Min(x, _envelope.RaffinateMax), _envelope.TemperatureKelvin);
            double reference = -Envelope.Det(tie.Raffinate, tie.Extract, zS);
            return reference > 0 ? Envelope.Det(tie.Raffinate, tie.Extract, overall.Difference) / reference : double.NegativeInfinity;
        }

        Span<double> q = stackalloc double[PinchScanIntervals + 1];
        double h = (xEnd - xt) / PinchScanIntervals;
        for (int i = 0; i <= PinchScanIntervals; i++)
        {
            q[i] = Q(i == PinchScanIntervals ? xEnd : xt + (h * i));
            if (!(q[i] > 0))
            {
                pinch = xt + (h * i);
                return false;
            }
        }

        // A tangent pinch can fall between samples: refine every sampled local minimum (golden section).
        for (int i = 1; i < PinchScanIntervals; i++)
        {
            if (q[i] <= q[i - 1] && q[i] <= q[i + 1])
            {
                double xMin = GoldenSectionMinimizer.Minimize(Q, xt + (h * (i - 1)), xt + (h * (i + 1)), 1e-10 * Math.Max(xEnd, 1e-6), 200, out double qMin, stopAtOrBelow: 0);
                if (!(qMin > 0))
                {
                    pinch = xMin;
                    return false;
                }
            }
        }

        return true;
    }

    private bool TryRaffinateForRecovery(MaterialStream feed, Ternary zS, double flow, double recovery, out double xt)
    {
        double feedSolute = feed.ComponentFlows.Solute;
        double Excess(double x) => TryOverall(feed, zS, flow, x, out Overall o) ? (1 - (o.RaffinateFlow * x / feedSolute)) - recovery : double.NaN;

        double hi = Math.Min(feed.Composition.Solute, _envelope.RaffinateMax);
        double fHi = Excess(hi);
        if (double.IsNaN(fHi))
        {
            // No overall balance with a raffinate that rich: find the richest raffinate that has one.
            double invalid = hi, valid = double.NaN;
            for (int k = 1; k <= 64 && double.IsNaN(valid); k++)
            {
                double x = hi * (1 - (k / 64.0));
                if (!double.IsNaN(Excess(x)))
                {
                    valid = x;
                }
                else
                {
                    invalid = x;
                }
            }

            if (double.IsNaN(valid))
            {
                xt = double.NaN;
                return false;
            }

            for (int i = 0; i < 50; i++)
            {
                double mid = 0.5 * (valid + invalid);
                if (double.IsNaN(Excess(mid)))
                {
                    invalid = mid;
                }
                else
                {
                    valid = mid;
                }
            }

            hi = valid;
            fHi = Excess(hi);
        }

        if (fHi >= 0)
        {
            // Even the richest final raffinate the balance allows recovers at least this much: the target is met there.
            xt = hi;
            return true;
        }

        double lo = 1e-12 * hi;
        double fLo = Excess(lo);
        if (double.IsNaN(fLo) && !double.IsNaN(fHi))
        {
            // No overall balance with a raffinate that lean (the extract would have to hold more solute than any
            // extract can, as with little solvent): find the leanest raffinate that has one. Its recovery is the most
            // this solvent flow can give.
            double invalid = lo, valid = hi;
            for (int k = 1; k < 64; k++)
            {
                double x = hi * k / 64.0;
                if (!double.IsNaN(Excess(x)))
                {
                    valid = x;
                    break;
                }

                invalid = x;
            }

            for (int i = 0; i < 50; i++)
            {
                double mid = 0.5 * (valid + invalid);
                if (double.IsNaN(Excess(mid)))
                {
                    invalid = mid;
                }
                else
                {
                    valid = mid;
                }
            }

            lo = valid;
            fLo = Excess(lo);
        }

        if (double.IsNaN(fHi) || double.IsNaN(fLo) || fLo * fHi > 0)
        {
            xt = double.NaN;
            return false;
        }

        return BracketedRoot.TryFind(static (x, f) => f(x), Excess, lo, hi, fLo, fHi, 1e-15, _options.MaxStageIterations, out xt, out _) && !double.IsNaN(xt);
    }

    /// <summary>Overall balance: feed + solvent = final raffinate (at xt on the raffinate branch) + extract leaving stage 1.</summary>
    private bool TryOverall(MaterialStream feed, Ternary zS, double flow, double xt, out Overall overall)
    {
        overall = default;
        Ternary m = feed.ComponentFlows + (flow * zS);
        Ternary z = (1 / m.Sum) * m;
        Ternary rN = _envelope.Raffinate(xt);
        double G(double y) => Envelope.Det(rN, _envelope.FromExtract(y).Extract, z);

        Overall found = default;
        bool Balanced(double root)
        {
            Ternary e = _envelope.FromExtract(root).Extract;
            (double l, double v) = Envelope.Lever(m, rN, e);
            found = new Overall(root, l, v, feed.ComponentFlows - (v * e));
            return l > 0 && v > 0;
        }

        if (RootBracketing.TryScan(static (y, g) => g(y), G, 0, _envelope.ExtractMax, BranchScanIntervals, _options.Tolerance * 1e-3, _options.MaxStageIterations, out _, out _, accept: Balanced))
        {
            overall = found;
            return true;
        }

        return false;
    }

    /// <summary>The extract entering the stage whose raffinate leaves at <paramref name="raffinate"/>: on the line through it and the difference point.</summary>
    private bool TryNextExtract(Ternary raffinate, Ternary difference, double yAbove, out double y)
    {
        double G(double v) => Envelope.Det(_envelope.FromExtract(v).Extract, raffinate, difference);
        const int Cells = 32;
        double tolerance = _options.Tolerance * 1e-3;
        if (RootBracketing.TryScan(static (v, g) => g(v), G, yAbove, 0, Cells, tolerance, _options.MaxStageIterations, out y, out _))
        {
            return true;
        }

        // Near a pinch, a stage of efficiency below 1 can be fed an extract a little richer than the one it sends on.
        return RootBracketing.TryScan(static (v, g) => g(v), G, yAbove, _envelope.ExtractMax, Cells, tolerance, _options.MaxStageIterations, out y, out _);
    }

    /// <param name="ExtractSolute">Solute fraction of the extract leaving stage 1.</param>
    /// <param name="RaffinateFlow">Final raffinate flow.</param>
    /// <param name="ExtractFlow">Flow of the extract leaving stage 1.</param>
    /// <param name="Difference">Net flow feed - extract (component flows), the same for every stage.</param>
    private readonly record struct Overall(double ExtractSolute, double RaffinateFlow, double ExtractFlow, Ternary Difference);
}
