namespace Tieflow.Core.Monitoring.Envelope;

/// <summary>
/// Tells a loss of solvent between the solvent meter and the unit from a solvent meter that reads high, by what moved
/// when the solvent balance opened.
/// </summary>
/// <remarks>
/// <para>Both give the same steady-state balances: the unit receives less solvent than the meter says, and a test on the
/// balance residuals alone cannot separate them (their signature vectors are the same; Narasimhan and Mah,
/// "Generalized likelihood ratio method for gross error identification", AIChE J. 33(9), 1987, 1514-1521). They differ
/// at the onset. A meter that starts to read high steps its own reading while nothing in the unit moves; a leak leaves
/// the meter's reading where it was and takes the solvent out of the unit, so that the solvent leaving in the extract
/// falls by the amount lost. Across the step of the unaccounted solvent (the largest rise between neighbouring pairs
/// of windows over the last hours) the change of the meter's reading d_m and of the extract's solvent d_e are compared
/// with the two hypotheses by their likelihood ratio, each with its size fitted (a generalized likelihood ratio for
/// jumps: Willsky and Jones, IEEE Trans. Autom. Control 21(1), 1976, 108-112): a biased meter d_m = delta, d_e = 0
/// (chi-square d_e^2 / s_e^2); a loss d_m = 0, d_e = -delta (chi-square d_m^2 / s_m^2). The sigmas are those of the
/// differences of the window means, widened by the window-to-window scatter before the onset (normal operation moves
/// the flows too).</para>
/// <para>It needs the onset in its history: a balance that was open from the start, or an onset too slow to show as a
/// step between neighbouring windows, stays undecided.</para>
/// </remarks>
public sealed class SolventOnsetTest
{
    private readonly int _capacity;
    private readonly double _decisionChiSquare;
    private readonly List<Point> _points = [];

    /// <summary>Creates the test.</summary>
    /// <param name="capacity">Windows kept (the onset must lie among them); at least 4.</param>
    /// <param name="decisionChiSquare">Difference of the two hypotheses' chi-squares that decides; above 0.</param>
    /// <exception cref="ArgumentOutOfRangeException">A setting is out of range.</exception>
    public SolventOnsetTest(int capacity = 16, double decisionChiSquare = 9)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(capacity, 4);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(decisionChiSquare);
        _capacity = capacity;
        _decisionChiSquare = decisionChiSquare;
    }

    /// <summary>
    /// Adds one window: the unaccounted solvent with its sigma, the solvent meter's window mean with its sigma, and the
    /// solvent leaving in the extract (extract meter times the extract's solvent fraction) with its sigma, all per hour.
    /// A window with a value that is not finite is skipped.
    /// </summary>
    public void Add(DateTimeOffset end, double unaccounted, double unaccountedSigma, double meter, double meterSigma, double extractSolvent, double extractSigma)
    {
        if (!double.IsFinite(unaccounted) || !double.IsFinite(meter) || !double.IsFinite(extractSolvent)
            || !(unaccountedSigma > 0) || !(meterSigma > 0) || !(extractSigma > 0))
        {
            return;
        }

        _points.Add(new Point(end, unaccounted, unaccountedSigma, meter, meterSigma, extractSolvent, extractSigma));
        if (_points.Count > _capacity)
        {
            _points.RemoveAt(0);
        }
    }

    /// <summary>The verdict on the history kept.</summary>
    public SolventOnsetVerdict Judge()
    {
        // The onset: the split with the largest normalised rise of the unaccounted solvent, two windows on each side
        // (one after the split when it is the last window).
        int best = -1;
        double bestZ = 0;
        for (int j = 2; j < _points.Count; j++)
        {
            (double du, double su) = Step(j, p => p.Unaccounted, p => p.UnaccountedSigma);
            double z = du / su;
            if (z > bestZ)
            {
                bestZ = z;
                best = j;
            }
        }

        if (best < 0 || bestZ < 3)
        {
            return new SolventOnsetVerdict(SolventOnsetKind.Undecided, double.NaN, double.NaN, double.NaN, null);
        }

        (double dm, double sm) = Step(best, p => p.Meter, p => p.MeterSigma);
        (double de, double se) = Step(best, p => p.ExtractSolvent, p => p.ExtractSigma);
        sm = Widen(sm, best, p => p.Meter);
        se = Widen(se, best, p => p.ExtractSolvent);
        double biasChi = de * de / (se * se);
        double leakChi = dm * dm / (sm * sm);
        SolventOnsetKind kind = leakChi - biasChi > _decisionChiSquare && biasChi < _decisionChiSquare ? SolventOnsetKind.MeterBias
            : biasChi - leakChi > _decisionChiSquare && leakChi < _decisionChiSquare ? SolventOnsetKind.Loss
            : SolventOnsetKind.Undecided;
        double size = kind == SolventOnsetKind.MeterBias ? dm : kind == SolventOnsetKind.Loss ? -de : double.NaN;
        return new SolventOnsetVerdict(kind, size, leakChi, biasChi, _points[best].End);
    }

    // Mean of up to two windows from j on less the mean of the two before j, and its sigma.
    private (double Difference, double Sigma) Step(int j, Func<Point, double> value, Func<Point, double> sigma)
    {
        int after = Math.Min(2, _points.Count - j);
        double a = 0, va = 0, b = 0, vb = 0;
        for (int i = 0; i < after; i++)
        {
            a += value(_points[j + i]) / after;
            va += Math.Pow(sigma(_points[j + i]) / after, 2);
        }

        for (int i = 1; i <= 2; i++)
        {
            b += value(_points[j - i]) / 2;
            vb += Math.Pow(sigma(_points[j - i]) / 2, 2);
        }

        return (a - b, Math.Sqrt(va + vb));
    }

    // The sigma of a step widened by the scatter of consecutive windows before the onset (root mean square of their
    // differences), where there are at least three of them.
    private double Widen(double sigma, int onset, Func<Point, double> value)
    {
        if (onset < 4)
        {
            return sigma;
        }

        double sum = 0;
        int n = 0;
        for (int i = 1; i < onset; i++)
        {
            double d = value(_points[i]) - value(_points[i - 1]);
            sum += d * d;
            n++;
        }

        return Math.Sqrt((sigma * sigma) + (sum / n));
    }

    private readonly record struct Point(DateTimeOffset End, double Unaccounted, double UnaccountedSigma, double Meter, double MeterSigma, double ExtractSolvent, double ExtractSigma);
}

/// <summary>What the onset of an open solvent balance says.</summary>
public enum SolventOnsetKind
{
    /// <summary>No step in the history kept, or the step does not tell the two apart.</summary>
    Undecided,

    /// <summary>Solvent lost between the meter and the unit (or out of the unit): the extract's solvent fell, the meter did not move.</summary>
    Loss,

    /// <summary>The solvent meter reads high: its reading stepped, the extract's solvent did not move.</summary>
    MeterBias,
}

/// <summary>The verdict of <see cref="SolventOnsetTest"/>.</summary>
/// <param name="Kind">What the onset says.</param>
/// <param name="Size">The fitted size of the step (kg/h or kmol/h) under the chosen hypothesis; NaN when undecided.</param>
/// <param name="LossChiSquare">Chi-square of the loss hypothesis (the meter's step against 0).</param>
/// <param name="BiasChiSquare">Chi-square of the bias hypothesis (the extract's solvent step against 0).</param>
/// <param name="Onset">End of the first window after the step; null without a step.</param>
public sealed record SolventOnsetVerdict(SolventOnsetKind Kind, double Size, double LossChiSquare, double BiasChiSquare, DateTimeOffset? Onset);
