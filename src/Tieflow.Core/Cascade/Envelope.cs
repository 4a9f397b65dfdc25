using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Cascade;

/// <summary>The two branches of a model's phase envelope at one temperature, as the cascade solvers use them.</summary>
internal sealed class Envelope : IEnvelopeBranches
{
    /// <summary>Below this solute fraction the branches are interpolated linearly from the binary end (see <see cref="Raffinate"/>).</summary>
    private const double Trace = 1e-10;

    private readonly Lazy<EnvelopeTable?> _table;
    private readonly Lazy<(TieLine AtZero, TieLine AtTrace)> _raffinateEnd;
    private readonly Lazy<(TieLine AtZero, TieLine AtTrace)> _extractEnd;

    public Envelope(IPhaseEquilibrium model, double temperatureKelvin)
    {
        Model = model;
        TemperatureKelvin = temperatureKelvin;
        SoluteLimits limits = model.SoluteLimits(temperatureKelvin);

        // The distribution model accepts fractions up to 1 exclusive; keep clear of the singular end.
        RaffinateMax = Math.Min(limits.Raffinate, 1 - 1e-9);
        ExtractMax = Math.Min(limits.Extract, 1 - 1e-9);
        _table = new Lazy<EnvelopeTable?>(() => EnvelopeTable.TryBuild(this));
        _raffinateEnd = new(() => (model.TieLineFromRaffinate(0, temperatureKelvin), model.TieLineFromRaffinate(Trace, temperatureKelvin)));
        _extractEnd = new(() => (model.TieLineFromExtract(0, temperatureKelvin), model.TieLineFromExtract(Trace, temperatureKelvin)));
    }

    /// <summary>The spline stand-in of this envelope, built at first use; null when it cannot be built.</summary>
    public EnvelopeTable? Table => _table.Value;

    public IPhaseEquilibrium Model { get; }

    public double TemperatureKelvin { get; }

    public double RaffinateMax { get; }

    public double ExtractMax { get; }

    /// <summary>
    /// The raffinate-branch point with solute fraction x. Solute traces below 1e-10 (the solvent end of a long cascade
    /// reaches 1e-20) are interpolated linearly between the binary tie line and the one at 1e-10, an error of order
    /// x squared: iterative models need not converge on fractions that small.
    /// </summary>
    public Ternary Raffinate(double x)
    {
        x = Math.Clamp(x, 0, RaffinateMax);
        if (x > 0 && x < Trace)
        {
            (TieLine zero, TieLine trace) = _raffinateEnd.Value;
            return zero.Raffinate + ((x / Trace) * (trace.Raffinate - zero.Raffinate));
        }

        return Model.TieLineFromRaffinate(x, TemperatureKelvin).Raffinate;
    }

    /// <summary>The tie line whose extract has solute fraction y (traces below 1e-10 interpolated as for <see cref="Raffinate"/>).</summary>
    public TieLine FromExtract(double y)
    {
        y = Math.Clamp(y, 0, ExtractMax);
        if (y > 0 && y < Trace)
        {
            (TieLine zero, TieLine trace) = _extractEnd.Value;
            double f = y / Trace;
            return new TieLine(zero.Raffinate + (f * (trace.Raffinate - zero.Raffinate)), zero.Extract + (f * (trace.Extract - zero.Extract)));
        }

        return Model.TieLineFromExtract(y, TemperatureKelvin);
    }

    public PhaseSplit Split(Ternary overall) => Model.Split(overall, TemperatureKelvin);

    /// <summary>Determinant of three component vectors: zero when the three points are collinear in the triangle.</summary>
    public static double Det(Ternary a, Ternary b, Ternary c) =>
        (a.Solute * ((b.Diluent * c.Solvent) - (b.Solvent * c.Diluent)))
        - (a.Diluent * ((b.Solute * c.Solvent) - (b.Solvent * c.Solute)))
        + (a.Solvent * ((b.Solute * c.Diluent) - (b.Diluent * c.Solute)));

    /// <summary>Amounts (l, v) with m = l r + v e in the least-squares sense (exact when the three are collinear).</summary>
    public static (double L, double V) Lever(Ternary m, Ternary r, Ternary e)
    {
        double rr = Dot(r, r), ee = Dot(e, e), re = Dot(r, e), rm = Dot(r, m), em = Dot(e, m);
        double det = (rr * ee) - (re * re);
        return (((ee * rm) - (re * em)) / det, ((rr * em) - (re * rm)) / det);
    }

    private static double Dot(Ternary a, Ternary b) => (a.Solute * b.Solute) + (a.Diluent * b.Diluent) + (a.Solvent * b.Solvent);
}
