using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Cascade;

/// <summary>The two branches of a model's phase envelope at one temperature, as the cascade solvers use them.</summary>
internal sealed class Envelope : IEnvelopeBranches
{
    private readonly Lazy<EnvelopeTable?> _table;

    public Envelope(IPhaseEquilibrium model, double temperatureKelvin)
    {
        Model = model;
        TemperatureKelvin = temperatureKelvin;
        SoluteLimits limits = model.SoluteLimits(temperatureKelvin);

        // The distribution model accepts fractions up to 1 exclusive; keep clear of the singular end.
        RaffinateMax = Math.Min(limits.Raffinate, 1 - 1e-9);
        ExtractMax = Math.Min(limits.Extract, 1 - 1e-9);
        _table = new Lazy<EnvelopeTable?>(() => EnvelopeTable.TryBuild(this));
    }

    /// <summary>The spline stand-in of this envelope, built at first use; null when it cannot be built.</summary>
    public EnvelopeTable? Table => _table.Value;

    public IPhaseEquilibrium Model { get; }

    public double TemperatureKelvin { get; }

    public double RaffinateMax { get; }

    public double ExtractMax { get; }

    public Ternary Raffinate(double x) => Model.TieLineFromRaffinate(Math.Clamp(x, 0, RaffinateMax), TemperatureKelvin).Raffinate;

    public TieLine FromExtract(double y) => Model.TieLineFromExtract(Math.Clamp(y, 0, ExtractMax), TemperatureKelvin);

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
