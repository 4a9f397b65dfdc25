using MathNet.Numerics.Interpolation;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Cascade;

/// <summary>
/// A cubic-spline stand-in for a model's envelope at one temperature, built once from tie lines spread over the
/// raffinate branch (denser towards its end). The counter-current solver uses it where models are slow (activity
/// models solve every tie line iteratively): to find a start close to the answer and for the Jacobian of the final
/// Newton steps, whose residuals always come from the model itself, so answers are the model's to the tolerance.
/// </summary>
internal sealed class EnvelopeTable : IEnvelopeBranches
{
    private const int Nodes = 160;

    private readonly CubicSpline _raffinateDiluent;
    private readonly CubicSpline _raffinateSolvent;
    private readonly CubicSpline _extractDiluent;
    private readonly CubicSpline _extractSolvent;
    private readonly CubicSpline _equilibriumRaffinate;
    private readonly CubicSpline _equilibriumExtract;
    private readonly double _yMin;

    private EnvelopeTable(double raffinateMax, double extractMax, double yMin, CubicSpline[] splines)
    {
        RaffinateMax = raffinateMax;
        ExtractMax = extractMax;
        _yMin = yMin;
        _raffinateDiluent = splines[0];
        _raffinateSolvent = splines[1];
        _extractDiluent = splines[2];
        _extractSolvent = splines[3];
        _equilibriumRaffinate = splines[4];
        _equilibriumExtract = splines[5];
    }

    public double RaffinateMax { get; }

    public double ExtractMax { get; }

    /// <summary>Builds the table, or returns null when the model's tie lines do not rise in solute at both ends together.</summary>
    public static EnvelopeTable? TryBuild(Envelope envelope)
    {
        var x = new double[Nodes + 1];
        var y = new double[Nodes + 1];
        var rd = new double[Nodes + 1];
        var rs = new double[Nodes + 1];
        var ed = new double[Nodes + 1];
        var es = new double[Nodes + 1];
        double top = envelope.RaffinateMax * (1 - 1e-6);
        int count = 0;
        for (int i = 0; i <= Nodes; i++, count++)
        {
            double u = 1 - ((double)i / Nodes);
            x[i] = top * (1 - (u * u));
            TieLine t;
            try
            {
                t = envelope.Model.TieLineFromRaffinate(x[i], envelope.TemperatureKelvin);
            }
            catch (EquilibriumException)
            {
                // Close to a plait point a model may not converge: the table then ends at the last tie line found.
                break;
            }

            y[i] = t.Extract.Solute;
            rd[i] = t.Raffinate.Diluent;
            rs[i] = t.Raffinate.Solvent;
            ed[i] = t.Extract.Diluent;
            es[i] = t.Extract.Solvent;
        }

        if (count < 16)
        {
            return null;
        }

        x = x[..count];
        y = y[..count];
        rd = rd[..count];
        rs = rs[..count];
        ed = ed[..count];
        es = es[..count];

        // Functions of the extract's solute fraction only up to its largest value along the family (past it, near a
        // plait point, the extract can get leaner again while the raffinate gets richer).
        int rising = 1;
        while (rising < count && y[rising] > y[rising - 1])
        {
            rising++;
        }

        if (rising < 16)
        {
            return null;
        }

        double[] yr = y[..rising], xr = x[..rising];
        CubicSpline[] splines =
        [
            CubicSpline.InterpolateNaturalSorted(x, rd),
            CubicSpline.InterpolateNaturalSorted(x, rs),
            CubicSpline.InterpolateNaturalSorted(yr, ed[..rising]),
            CubicSpline.InterpolateNaturalSorted(yr, es[..rising]),
            CubicSpline.InterpolateNaturalSorted(yr, xr),
            CubicSpline.InterpolateNaturalSorted(x, y),
        ];
        return new EnvelopeTable(x[^1], Math.Min(envelope.ExtractMax, yr[^1]), y[0], splines);
    }

    public Ternary Raffinate(double x)
    {
        x = Math.Clamp(x, 0, RaffinateMax);
        return new Ternary(x, _raffinateDiluent.Interpolate(x), _raffinateSolvent.Interpolate(x));
    }

    public TieLine FromExtract(double y)
    {
        y = Math.Clamp(y, _yMin, ExtractMax);
        double x = _equilibriumRaffinate.Interpolate(y);
        return new TieLine(Raffinate(x), new Ternary(y, _extractDiluent.Interpolate(y), _extractSolvent.Interpolate(y)));
    }

    /// <summary>The table's tie line through an overall composition: raffinate and extract solute fractions, or false.</summary>
    public bool TrySplit(Ternary z, out double x, out double y)
    {
        const int Cells = 64;
        if (Numerics.RootBracketing.TryScan(static (v, s) => Envelope.Det(s.Table.Raffinate(v), s.Table.ExtractAt(v), s.Z), (Table: this, Z: z), 0, RaffinateMax, Cells, 1e-13, 100, out x, out _))
        {
            y = _equilibriumExtract.Interpolate(x);
            return true;
        }

        x = y = double.NaN;
        return false;
    }

    private Ternary ExtractAt(double x)
    {
        double y = Math.Clamp(_equilibriumExtract.Interpolate(x), _yMin, ExtractMax);
        return new Ternary(y, _extractDiluent.Interpolate(y), _extractSolvent.Interpolate(y));
    }
}
