using System.Globalization;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Numerics;

namespace Tieflow.Core.Equilibrium.TieLines;

/// <summary>
/// Liquid-liquid equilibrium from a table of experimental tie lines measured at one temperature.
/// </summary>
/// <remarks>
/// <para>
/// Each branch of the binodal (raffinate and extract) is a curve through the tie-line ends, parametrised by its chord
/// length in the (solute, solvent) plane and interpolated with shape-preserving monotone cubics (Fritsch-Carlson):
/// solute and solvent fractions are monotone between table rows when the rows are, and the diluent fraction is
/// one minus the others. Chord length copes both with the steep raffinate branch near the binary end (solute grows
/// while the solvent hardly changes) and with its bend near the plait point. Tie lines between table rows come from
/// the conjugate relation: the extract branch position as a monotone cubic function of the raffinate branch position.
/// </para>
/// <para>
/// When the table does not start at zero solute, the binary ends (mutual solubilities of diluent and solvent) are
/// extrapolated linearly in solute from the first two rows. Past the last row the plait point is estimated with the
/// conjugate-curve method (Sherwood; see Treybal, Mass-Transfer Operations, ch. 10): the conjugate points
/// (extract solvent, raffinate solute) are extrapolated (a parabola through the last three) until they meet the
/// binodal closed between the last tie line's ends by a cubic that continues both branches. When found, the model
/// reaches up to it; otherwise it ends at the last tie line and points beyond it throw.
/// </para>
/// <para>
/// The table is used as measured whatever temperature a caller passes; <see cref="ValidTemperatures"/>
/// (data temperature plus or minus 5 K) says where that is reasonable, and callers check it.
/// A split needs no iteration state, so warm starts are ignored; it does not allocate.
/// </para>
/// </remarks>
public sealed class TieLineTableModel : IPhaseEquilibrium
{
    /// <summary>Half-width of <see cref="ValidTemperatures"/> around the data temperature, kelvin.</summary>
    public const double TemperatureToleranceKelvin = 5.0;

    private const int Solute = 0;
    private const int Solvent = 1;

    private readonly TieLine[] _tieLines;

    // Raffinate branch over tau (its chord length): channels solute, solvent.
    private readonly MonotoneCubic _raffinate;

    // Conjugate relation over tau: the extract branch position sigma of the tie line's other end.
    private readonly MonotoneCubic _conjugate;

    // Extract branch over sigma (its chord length): channels solute, solvent.
    private readonly MonotoneCubic _extract;

    // Where the collinearity function is sampled to bracket a root: the tau nodes, the last pulled back from a
    // degenerate plait point.
    private readonly double[] _bracketTau;
    private readonly Ternary[] _bracketRaffinate;
    private readonly Ternary[] _bracketExtract;
    private readonly (double S, double V)[] _bracketUnit;
    private readonly (double S, double V)[]? _uncoveredRegion;
    private readonly SoluteLimits _limits;

    /// <summary>Creates the model from tie lines in ascending solute order.</summary>
    /// <param name="system">Components and basis; the tie-line fractions are on this basis.</param>
    /// <param name="temperatureKelvin">Temperature of the measurements, kelvin.</param>
    /// <param name="tieLines">At least two tie lines, raffinate solute ascending, each phase's fractions summing to 1
    /// within 0.001 (they are renormalised).</param>
    /// <exception cref="ArgumentException">With the first problem <see cref="FindProblems"/> reports.</exception>
    public TieLineTableModel(TernarySystem system, double temperatureKelvin, IReadOnlyList<TieLine> tieLines)
    {
        ArgumentNullException.ThrowIfNull(system);
        ArgumentNullException.ThrowIfNull(tieLines);
        Preconditions.Positive(temperatureKelvin);
        IReadOnlyList<TieLineProblem> problems = FindProblems(tieLines);
        if (problems.Count > 0)
        {
            throw new ArgumentException(problems[0].Message, nameof(tieLines));
        }

        System = system;
        TemperatureKelvin = temperatureKelvin;
        ValidTemperatures = TemperatureRange.Around(temperatureKelvin, TemperatureToleranceKelvin);
        _tieLines = tieLines.Select(t => new TieLine(t.Raffinate.Normalized(), t.Extract.Normalized())).ToArray();

        PlaitPoint = EstimatePlaitPoint(_tieLines, out (double S, double V)[] gapCurve);

        var raffinate = new List<Ternary>();
        var extract = new List<Ternary>();
        if (_tieLines[0].Raffinate.Solute > 0)
        {
            (Ternary r0, Ternary e0) = ExtrapolateBinaryEnds(_tieLines[0], _tieLines[1]);
            raffinate.Add(r0);
            extract.Add(e0);
        }

        foreach (TieLine t in _tieLines)
        {
            raffinate.Add(t.Raffinate);
            extract.Add(t.Extract);
        }

        if (PlaitPoint.Found)
        {
            raffinate.Add(PlaitPoint.Composition);
            extract.Add(PlaitPoint.Composition);
        }
        else
        {
            _uncoveredRegion = gapCurve;
        }

        double[] tau = ChordLengths(raffinate);
        double[] sigma = ChordLengths(extract);
        bool binaryExtrapolated = _tieLines[0].Raffinate.Solute > 0;
        // The extrapolated ends are kept from bending the interpolation between measured rows, except that the plait
        // point, a point of the binodal, may shape the branches' last measured interval (leave-one-out on the
        // published tables is better that way; it is worse when the plait point also shapes the conjugate relation).
        _raffinate = new MonotoneCubic(tau, binaryExtrapolated, false, raffinate.Select(p => p.Solute).ToArray(), raffinate.Select(p => p.Solvent).ToArray());
        _conjugate = new MonotoneCubic(tau, binaryExtrapolated, PlaitPoint.Found, sigma);
        _extract = new MonotoneCubic(sigma, binaryExtrapolated, false, extract.Select(p => p.Solute).ToArray(), extract.Select(p => p.Solvent).ToArray());

        int m = tau.Length;
        _bracketTau = (double[])tau.Clone();
        _bracketRaffinate = raffinate.ToArray();
        _bracketExtract = extract.ToArray();
        if (PlaitPoint.Found)
        {
            // The plait point is a degenerate tie line (no direction): sample just before it.
            _bracketTau[m - 1] = tau[m - 1] - (1e-9 * (tau[m - 1] - tau[m - 2]));
            Evaluate(_bracketTau[m - 1], out _bracketRaffinate[m - 1], out _bracketExtract[m - 1]);
        }

        // Unit directions of the sampled tie lines, so that bracketing needs no square roots.
        _bracketUnit = new (double S, double V)[m];
        for (int k = 0; k < m; k++)
        {
            _bracketUnit[k] = Unit(_bracketExtract[k].Solute - _bracketRaffinate[k].Solute, _bracketExtract[k].Solvent - _bracketRaffinate[k].Solvent);
        }

        double maxRaffinate = 0;
        double maxExtract = 0;
        for (int i = 0; i < _raffinate.Count; i++)
        {
            maxRaffinate = Math.Max(maxRaffinate, _raffinate.NodeValue(Solute, i));
        }

        for (int i = 0; i < _extract.Count; i++)
        {
            maxExtract = Math.Max(maxExtract, _extract.NodeValue(Solute, i));
        }

        _limits = new SoluteLimits(maxRaffinate, maxExtract);
    }

    /// <inheritdoc />
    public TernarySystem System { get; }

    /// <summary>Temperature of the measurements, kelvin.</summary>
    public double TemperatureKelvin { get; }

    /// <inheritdoc />
    /// <remarks>The data temperature plus or minus <see cref="TemperatureToleranceKelvin"/>.</remarks>
    public TemperatureRange ValidTemperatures { get; }

    /// <summary>The tie lines of the table, each phase renormalised to sum to one.</summary>
    public IReadOnlyList<TieLine> TieLines => _tieLines;

    /// <summary>The plait point estimate made at construction (see <see cref="EstimatePlaitPoint()"/>).</summary>
    public PlaitPointEstimate PlaitPoint { get; }

    /// <summary>
    /// Every problem of a tie-line table at once: fewer than two lines, fractions negative or not finite or not summing
    /// to 1 within 0.001, raffinate and extract inverted, solute in one phase only, raffinate solute not ascending,
    /// tie lines that cross. An empty list means the table can be used.
    /// </summary>
    public static IReadOnlyList<TieLineProblem> FindProblems(IReadOnlyList<TieLine> tieLines)
    {
        ArgumentNullException.ThrowIfNull(tieLines);
        var problems = new List<TieLineProblem>();
        if (tieLines.Count < 2)
        {
            problems.Add(new TieLineProblem(-1, $"Expected at least 2 tie lines, got {tieLines.Count}."));
        }

        var usable = new bool[tieLines.Count];
        for (int i = 0; i < tieLines.Count; i++)
        {
            TieLine t = tieLines[i];
            int before = problems.Count;
            CheckPhase(problems, i, "raffinate", t.Raffinate);
            CheckPhase(problems, i, "extract", t.Extract);
            if (problems.Count > before)
            {
                continue;
            }

            usable[i] = true;
            if (!(t.Extract.Solvent > t.Raffinate.Solvent))
            {
                problems.Add(new TieLineProblem(i, $"Tie line {i + 1}: raffinate and extract are inverted: the extract must hold more solvent than the raffinate (extract {F(t.Extract.Solvent)}, raffinate {F(t.Raffinate.Solvent)})."));
                usable[i] = false;
            }
            else if (!(t.Raffinate.Diluent > t.Extract.Diluent))
            {
                problems.Add(new TieLineProblem(i, $"Tie line {i + 1}: raffinate and extract are inverted: the raffinate must hold more diluent than the extract (raffinate {F(t.Raffinate.Diluent)}, extract {F(t.Extract.Diluent)})."));
                usable[i] = false;
            }

            if ((t.Raffinate.Solute > 0) != (t.Extract.Solute > 0))
            {
                problems.Add(new TieLineProblem(i, $"Tie line {i + 1}: the solute fraction is zero in one phase only (raffinate {F(t.Raffinate.Solute)}, extract {F(t.Extract.Solute)}); a tie line without solute has none in either phase."));
                usable[i] = false;
            }
        }

        int previous = -1;
        for (int i = 0; i < tieLines.Count; i++)
        {
            if (!usable[i])
            {
                continue;
            }

            if (previous >= 0 && !(tieLines[i].Raffinate.Solute > tieLines[previous].Raffinate.Solute))
            {
                problems.Add(new TieLineProblem(i, $"Tie line {i + 1}: solute not ascending: its raffinate solute fraction {F(tieLines[i].Raffinate.Solute)} is not above that of tie line {previous + 1} ({F(tieLines[previous].Raffinate.Solute)}); list tie lines in ascending solute."));
            }

            if (previous >= 0 && Ternary.MaxDifference(tieLines[i].Extract, tieLines[previous].Extract) == 0)
            {
                problems.Add(new TieLineProblem(i, $"Tie line {i + 1}: its extract is the same as that of tie line {previous + 1}; two tie lines cannot share an end."));
            }

            previous = i;
        }

        for (int i = 0; i < tieLines.Count; i++)
        {
            for (int j = i + 1; j < tieLines.Count; j++)
            {
                if (usable[i] && usable[j] && SegmentsIntersect(tieLines[i], tieLines[j]))
                {
                    problems.Add(new TieLineProblem(i, $"Tie line {i + 1} crosses tie line {j + 1}; tie lines of one temperature never cross."));
                }
            }
        }

        return problems;
    }

    /// <summary>
    /// The plait point estimate of this table: the conjugate curve (points made of each tie line's extract solvent and
    /// raffinate solute) extrapolated past the last tie line until it meets the binodal. Rough: an extrapolation.
    /// </summary>
    public PlaitPointEstimate EstimatePlaitPoint() => PlaitPoint;

    /// <inheritdoc />
    /// <exception cref="ArgumentException">When the overall fractions are not finite, negative, or do not sum to one within 1e-6.</exception>
    /// <exception cref="EquilibriumException">When the point lies beyond the last tie line and no plait point could be estimated.</exception>
    public PhaseSplit Split(Ternary overall, double temperatureKelvin)
    {
        CheckOverall(overall);
        Preconditions.Positive(temperatureKelvin);
        double zs = overall.Solute;
        double zv = overall.Solvent;

        double[] taus = _bracketTau;
        Ternary[] rs = _bracketRaffinate;
        Ternary[] es = _bracketExtract;
        (double S, double V)[] units = _bracketUnit;
        double cPrev = (units[0].S * (zv - rs[0].Solvent)) - (units[0].V * (zs - rs[0].Solute));
        for (int k = 0; k < taus.Length - 1; k++)
        {
            double cNext = (units[k + 1].S * (zv - rs[k + 1].Solvent)) - (units[k + 1].V * (zs - rs[k + 1].Solute));
            bool bracket = cPrev == 0 || (cPrev < 0 && cNext > 0) || (cPrev > 0 && cNext < 0);
            if (bracket)
            {
                double tau;
                int iterations = 0;
                if (cPrev == 0)
                {
                    tau = taus[k];
                }
                else
                {
                    tau = SolveCollinear(taus[k], taus[k + 1], cPrev, cNext, zs, zv, out iterations);
                }

                Evaluate(tau, out Ternary r, out Ternary e);
                double ds = e.Solute - r.Solute;
                double dv = e.Solvent - r.Solvent;
                double beta = (((zs - r.Solute) * ds) + ((zv - r.Solvent) * dv)) / ((ds * ds) + (dv * dv));
                if (beta > 1e-12 && beta < 1 - 1e-12)
                {
                    return new PhaseSplit(true, r, e, beta, iterations);
                }

                if (beta >= -1e-12 && beta <= 1 + 1e-12)
                {
                    // On the binodal itself: a saturated single phase.
                    return PhaseSplit.OnePhase(overall, iterations);
                }
            }

            cPrev = cNext;
        }

        if (_uncoveredRegion is not null && InsidePolygon(_uncoveredRegion, zs, zv))
        {
            throw new EquilibriumException(
                $"Tie-line table: the point (solute {F(zs)}, solvent {F(zv)}) lies beyond the last tie line (raffinate solute {F(_tieLines[^1].Raffinate.Solute)}) " +
                "and no plait point could be estimated from the table; add tie lines nearer the plait point.");
        }

        return PhaseSplit.OnePhase(overall);
    }

    /// <inheritdoc />
    public PhaseSplit Split(Ternary overall, double temperatureKelvin, in PhaseSplit warmStart) => Split(overall, temperatureKelvin);

    /// <inheritdoc />
    public TieLine TieLineFromRaffinate(double raffinateSoluteFraction, double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        CheckSolute(raffinateSoluteFraction, _limits.Raffinate, "raffinate");
        double tau = _raffinate.FirstCrossing(Solute, Math.Min(raffinateSoluteFraction, _limits.Raffinate));
        if (double.IsNaN(tau))
        {
            throw new EquilibriumException($"Tie-line table: no tie line has a raffinate solute fraction of {F(raffinateSoluteFraction)}.");
        }

        Evaluate(tau, out Ternary r, out Ternary e);
        return new TieLine(r, e);
    }

    /// <inheritdoc />
    public TieLine TieLineFromExtract(double extractSoluteFraction, double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        CheckSolute(extractSoluteFraction, _limits.Extract, "extract");
        double sigma = _extract.FirstCrossing(Solute, Math.Min(extractSoluteFraction, _limits.Extract));
        double tau = double.IsNaN(sigma) ? double.NaN : _conjugate.FirstCrossing(0, sigma);
        if (double.IsNaN(tau))
        {
            throw new EquilibriumException($"Tie-line table: no tie line has an extract solute fraction of {F(extractSoluteFraction)}.");
        }

        Evaluate(tau, out Ternary r, out Ternary e);
        return new TieLine(r, e);
    }

    /// <inheritdoc />
    /// <remarks>The largest solute fractions on either branch: at the plait point estimate, or the last tie line.</remarks>
    public SoluteLimits SoluteLimits(double temperatureKelvin) => _limits;

    /// <summary>The two ends of the tie line at raffinate branch position tau (chord length from the binary end).</summary>
    internal void Evaluate(double tau, out Ternary raffinate, out Ternary extract)
    {
        MonotoneCubic rc = _raffinate;
        int i = rc.Locate(tau);
        double rs = rc.Value(Solute, i, tau);
        double rv = rc.Value(Solvent, i, tau);
        double sigma = _conjugate.Value(0, i, tau);
        MonotoneCubic ec = _extract;
        int j = ec.Locate(sigma);
        double es = ec.Value(Solute, j, sigma);
        double ev = ec.Value(Solvent, j, sigma);
        raffinate = InTriangle(rs, rv);
        extract = InTriangle(es, ev);
    }

    // A branch point from its solute and solvent fractions, kept in the triangle: with few rows the two channels are
    // interpolated independently and their sum can pass 1 (a negative diluent), or one can dip below 0; such a point
    // is moved to the nearest side (see SparseTableAdvice, which reports where).
    private static Ternary InTriangle(double s, double v)
    {
        s = Math.Clamp(s, 0, 1);
        v = Math.Clamp(v, 0, 1);
        double d = 1 - s - v;
        if (d < 0)
        {
            double sum = s + v;
            return new Ternary(s / sum, 0, v / sum);
        }

        return new Ternary(s, d, v);
    }

    /// <summary>
    /// Why this table is too sparse to interpolate safely, one line per finding (empty when it is not): fewer than
    /// three tie lines, or stretches where the interpolated branches leave the triangle and are held on its side.
    /// </summary>
    public IReadOnlyList<string> SparseTableAdvice()
    {
        var advice = new List<string>();
        if (_tieLines.Length < 3)
        {
            advice.Add($"Only {_tieLines.Length} tie lines: the binodal between and beyond them is guessed from too few points; add tie lines (five or more over the range of use is common practice).");
        }

        double[] taus = _bracketTau;
        for (int k = 0; k < taus.Length - 1; k++)
        {
            bool outside = false;
            for (int i = 1; i < 40 && !outside; i++)
            {
                double tau = taus[k] + ((taus[k + 1] - taus[k]) * i / 40.0);
                int a = _raffinate.Locate(tau);
                double sigma = _conjugate.Value(0, a, tau);
                int b = _extract.Locate(sigma);
                outside = Outside(_raffinate.Value(Solute, a, tau), _raffinate.Value(Solvent, a, tau))
                    || Outside(_extract.Value(Solute, b, sigma), _extract.Value(Solvent, b, sigma));
            }

            if (outside)
            {
                Evaluate(taus[k], out Ternary from, out _);
                Evaluate(taus[k + 1], out Ternary to, out _);
                advice.Add($"Between raffinate solute fractions {F(from.Solute)} and {F(to.Solute)} the interpolated tie lines leave the triangle (held on its side): the table is too sparse there; add tie lines.");
            }
        }

        return advice;

        static bool Outside(double s, double v) => s < -1e-9 || v < -1e-9 || s + v > 1 + 1e-9;
    }

    // Signed distance of (zs, zv) from the line through the tie line's ends, in the (solute, solvent) plane.
    private static double Collinearity(in Ternary r, in Ternary e, double zs, double zv)
    {
        double ds = e.Solute - r.Solute;
        double dv = e.Solvent - r.Solvent;
        return ((ds * (zv - r.Solvent)) - (dv * (zs - r.Solute))) / Math.Sqrt((ds * ds) + (dv * dv));
    }

    private double CollinearityAt(double tau, double zs, double zv)
    {
        Evaluate(tau, out Ternary r, out Ternary e);
        return Collinearity(r, e, zs, zv);
    }

    // Brent's method on the bracketing interval; |f| is the point's distance from the tie line, so 1e-15 is far inside
    // the balance the callers need and saves the last iterations.
    private double SolveCollinear(double a, double b, double fa, double fb, double zs, double zv, out int iterations)
    {
        const int MaxIterations = 100;
        if (BracketedRoot.TryFind(
            static (tau, s) => s.Model.CollinearityAt(tau, s.Zs, s.Zv),
            (Model: this, Zs: zs, Zv: zv),
            a,
            b,
            fa,
            fb,
            tolerance: 0,
            MaxIterations,
            out double root,
            out iterations,
            functionTolerance: 1e-15))
        {
            return root;
        }

        throw new EquilibriumException($"Tie-line table: the search for the tie line through the point (solute {F(zs)}, solvent {F(zv)}) did not converge in {MaxIterations} iterations.");
    }

    private static double[] ChordLengths(List<Ternary> points)
    {
        var t = new double[points.Count];
        for (int i = 1; i < points.Count; i++)
        {
            double ds = points[i].Solute - points[i - 1].Solute;
            double dv = points[i].Solvent - points[i - 1].Solvent;
            t[i] = t[i - 1] + Math.Sqrt((ds * ds) + (dv * dv));
        }

        return t;
    }

    // Mutual solubilities of diluent and solvent by linear extrapolation in solute of the first two rows.
    private static (Ternary Raffinate, Ternary Extract) ExtrapolateBinaryEnds(TieLine first, TieLine second)
    {
        double rSlope = (second.Raffinate.Solvent - first.Raffinate.Solvent) / (second.Raffinate.Solute - first.Raffinate.Solute);
        double rv = Math.Clamp(first.Raffinate.Solvent - (rSlope * first.Raffinate.Solute), 0, first.Raffinate.Solvent + first.Raffinate.Solute);
        double eSpan = second.Extract.Solute - first.Extract.Solute;
        double eSlope = eSpan > 0 ? (second.Extract.Diluent - first.Extract.Diluent) / eSpan : 0;
        double ed = Math.Clamp(first.Extract.Diluent - (eSlope * first.Extract.Solute), 0, first.Extract.Diluent + first.Extract.Solute);
        return (new Ternary(0, 1 - rv, rv), new Ternary(0, ed, 1 - ed));
    }

    private static PlaitPointEstimate EstimatePlaitPoint(TieLine[] lines, out (double S, double V)[] gapCurve)
    {
        int n = lines.Length;
        TieLine last = lines[n - 1];
        TieLine before = lines[n - 2];
        Ternary rn = last.Raffinate;
        Ternary en = last.Extract;

        // Binodal between the last tie line's ends: a cubic Hermite leaving the raffinate end along the raffinate branch
        // and arriving at the extract end along the extract branch, both tangents scaled by the gap's chord.
        double length = Math.Sqrt(Sq(en.Solute - rn.Solute) + Sq(en.Solvent - rn.Solvent));
        (double ts, double tv) = Unit(rn.Solute - before.Raffinate.Solute, rn.Solvent - before.Raffinate.Solvent);
        (double us, double uv) = Unit(en.Solute - before.Extract.Solute, en.Solvent - before.Extract.Solvent);
        (double S, double V) Gap(double t)
        {
            double t2 = t * t;
            double t3 = t2 * t;
            double h00 = (2 * t3) - (3 * t2) + 1;
            double h10 = t3 - (2 * t2) + t;
            double h01 = (-2 * t3) + (3 * t2);
            double h11 = t3 - t2;
            return (
                (h00 * rn.Solute) + (h10 * length * ts) + (h01 * en.Solute) - (h11 * length * us),
                (h00 * rn.Solvent) + (h10 * length * tv) + (h01 * en.Solvent) - (h11 * length * uv));
        }

        const int Samples = 200;
        gapCurve = new (double S, double V)[Samples + 1];
        for (int k = 0; k <= Samples; k++)
        {
            gapCurve[k] = Gap((double)k / Samples);
        }

        // Conjugate curve: raffinate solute as a function of extract solvent, parabola through the last three points.
        var cv = new List<double>();
        var cs = new List<double>();
        for (int i = Math.Max(0, n - 3); i < n; i++)
        {
            cv.Add(lines[i].Extract.Solvent);
            cs.Add(lines[i].Raffinate.Solute);
        }

        Func<double, double>? conjugate = Conjugate(cv, cs);
        if (conjugate is null)
        {
            return new PlaitPointEstimate(PlaitPointStatus.NotFound, rn);
        }

        // Search from the extract end, where the conjugate curve leaves the data, toward the raffinate end.
        double G(double t)
        {
            (double s, double v) = Gap(t);
            return s - conjugate(v);
        }

        double hi = 1;
        double gHi = G(hi);
        for (int k = Samples - 1; k >= 1; k--)
        {
            double lo = (double)k / Samples;
            double gLo = G(lo);
            if ((gLo <= 0) != (gHi <= 0))
            {
                for (int iteration = 0; iteration < 60; iteration++)
                {
                    double mid = 0.5 * (lo + hi);
                    double gMid = G(mid);
                    if ((gMid <= 0) == (gLo <= 0))
                    {
                        lo = mid;
                        gLo = gMid;
                    }
                    else
                    {
                        hi = mid;
                    }
                }

                (double ps, double pv) = Gap(0.5 * (lo + hi));
                double pd = 1 - ps - pv;
                if (ps > 0 && pv > 0 && pd > 0)
                {
                    return new PlaitPointEstimate(PlaitPointStatus.Estimated, new Ternary(ps, pd, pv));
                }

                break;
            }

            hi = lo;
            gHi = gLo;
        }

        return new PlaitPointEstimate(PlaitPointStatus.NotFound, rn);
    }

    private static Func<double, double>? Conjugate(List<double> v, List<double> s)
    {
        if (v.Count == 3 && Math.Abs(v[0] - v[1]) > 1e-9 && Math.Abs(v[1] - v[2]) > 1e-9 && Math.Abs(v[0] - v[2]) > 1e-9)
        {
            double v0 = v[0];
            double v1 = v[1];
            double v2 = v[2];
            double s0 = s[0];
            double s1 = s[1];
            double s2 = s[2];
            return x =>
                (s0 * (x - v1) * (x - v2) / ((v0 - v1) * (v0 - v2))) +
                (s1 * (x - v0) * (x - v2) / ((v1 - v0) * (v1 - v2))) +
                (s2 * (x - v0) * (x - v1) / ((v2 - v0) * (v2 - v1)));
        }

        int a = v.Count - 2;
        int b = v.Count - 1;
        if (Math.Abs(v[b] - v[a]) <= 1e-9)
        {
            return null;
        }

        double slope = (s[b] - s[a]) / (v[b] - v[a]);
        double vb = v[b];
        double sb = s[b];
        return x => sb + (slope * (x - vb));
    }

    private static bool InsidePolygon((double S, double V)[] curve, double zs, double zv)
    {
        // The gap curve runs from the last raffinate to the last extract; the last tie line closes the polygon.
        bool inside = false;
        int n = curve.Length;
        for (int i = 0, j = n - 1; i < n; j = i++)
        {
            (double si, double vi) = curve[i];
            (double sj, double vj) = curve[j];
            if ((vi > zv) != (vj > zv) && zs < ((sj - si) * (zv - vi) / (vj - vi)) + si)
            {
                inside = !inside;
            }
        }

        return inside;
    }

    private static bool SegmentsIntersect(TieLine a, TieLine b)
    {
        static double Orientation(double ps, double pv, double qs, double qv, double rs, double rv) =>
            ((qs - ps) * (rv - pv)) - ((qv - pv) * (rs - ps));

        double o1 = Orientation(a.Raffinate.Solute, a.Raffinate.Solvent, a.Extract.Solute, a.Extract.Solvent, b.Raffinate.Solute, b.Raffinate.Solvent);
        double o2 = Orientation(a.Raffinate.Solute, a.Raffinate.Solvent, a.Extract.Solute, a.Extract.Solvent, b.Extract.Solute, b.Extract.Solvent);
        double o3 = Orientation(b.Raffinate.Solute, b.Raffinate.Solvent, b.Extract.Solute, b.Extract.Solvent, a.Raffinate.Solute, a.Raffinate.Solvent);
        double o4 = Orientation(b.Raffinate.Solute, b.Raffinate.Solvent, b.Extract.Solute, b.Extract.Solvent, a.Extract.Solute, a.Extract.Solvent);
        return ((o1 > 0 && o2 < 0) || (o1 < 0 && o2 > 0)) && ((o3 > 0 && o4 < 0) || (o3 < 0 && o4 > 0));
    }

    private static void CheckPhase(List<TieLineProblem> problems, int index, string phase, Ternary fractions)
    {
        string[] names = ["solute", "diluent", "solvent"];
        for (int c = 0; c < 3; c++)
        {
            double f = fractions[c];
            if (!double.IsFinite(f) || f < 0)
            {
                problems.Add(new TieLineProblem(index, $"Tie line {index + 1}: the {phase} {names[c]} fraction is {F(f)}; expected a finite number of 0 or more."));
                return;
            }
        }

        double sum = fractions.Sum;
        if (Math.Abs(sum - 1) > 0.001)
        {
            problems.Add(new TieLineProblem(index, $"Tie line {index + 1}: the {phase} fractions sum to {F(sum)}; expected 1 within 0.001."));
        }
    }

    private static void CheckOverall(in Ternary z)
    {
        if (!(z.Solute >= 0 && z.Diluent >= 0 && z.Solvent >= 0) || !double.IsFinite(z.Sum) || Math.Abs(z.Sum - 1) > 1e-6)
        {
            throw new ArgumentException($"Expected overall fractions of 0 or more summing to 1 within 1e-6, got {z}.", "overall");
        }
    }

    private static void CheckSolute(double value, double limit, string phase)
    {
        if (!double.IsFinite(value) || value < 0)
        {
            throw new ArgumentOutOfRangeException($"{phase}SoluteFraction", value, "Expected a solute fraction of 0 or more.");
        }

        if (value > limit + 1e-12)
        {
            throw new EquilibriumException($"Tie-line table: no tie line has {(phase == "raffinate" ? "a raffinate" : "an extract")} solute fraction of {F(value)}; the largest is {F(limit)} (at the plait point estimate or the last tie line).");
        }
    }

    private static (double S, double V) Unit(double s, double v)
    {
        double norm = Math.Sqrt((s * s) + (v * v));
        return norm > 0 ? (s / norm, v / norm) : (0, 0);
    }

    private static double Sq(double x) => x * x;

    private static string F(double x) => x.ToString("G6", CultureInfo.InvariantCulture);
}
