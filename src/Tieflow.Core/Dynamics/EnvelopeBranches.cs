using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Dynamics;

/// <summary>
/// The raffinate and extract branches of a model's phase envelope at one temperature, as the stage dynamics read
/// them. Solute traces below 1e-10 are interpolated linearly between the binary tie line and the one at 1e-10
/// (the solvent end of a long train reaches far smaller fractions, where iterative models need not converge).
/// </summary>
internal sealed class EnvelopeBranches
{
    private const double Trace = 1e-10;

    private readonly IPhaseEquilibrium _model;
    private TieLine? _raffinateZero;
    private TieLine? _raffinateTrace;
    private TieLine? _extractZero;
    private TieLine? _extractTrace;

    public EnvelopeBranches(IPhaseEquilibrium model, double temperatureKelvin)
    {
        _model = model;
        TemperatureKelvin = temperatureKelvin;
        SoluteLimits limits = model.SoluteLimits(temperatureKelvin);
        RaffinateMax = Math.Min(limits.Raffinate, 1 - 1e-9);
        ExtractMax = Math.Min(limits.Extract, 1 - 1e-9);
    }

    public double TemperatureKelvin { get; }

    public double RaffinateMax { get; }

    public double ExtractMax { get; }

    /// <summary>The raffinate-branch point with solute fraction x (clamped to the branch).</summary>
    public Ternary Raffinate(double x)
    {
        x = Math.Clamp(x, 0, RaffinateMax);
        if (x > 0 && x < Trace)
        {
            _raffinateZero ??= _model.TieLineFromRaffinate(0, TemperatureKelvin);
            _raffinateTrace ??= _model.TieLineFromRaffinate(Trace, TemperatureKelvin);
            Ternary zero = _raffinateZero.Value.Raffinate;
            return zero + ((x / Trace) * (_raffinateTrace.Value.Raffinate - zero));
        }

        return _model.TieLineFromRaffinate(x, TemperatureKelvin).Raffinate;
    }

    /// <summary>The tie line whose extract end has solute fraction y (clamped to the branch).</summary>
    public TieLine FromExtract(double y)
    {
        y = Math.Clamp(y, 0, ExtractMax);
        if (y > 0 && y < Trace)
        {
            _extractZero ??= _model.TieLineFromExtract(0, TemperatureKelvin);
            _extractTrace ??= _model.TieLineFromExtract(Trace, TemperatureKelvin);
            TieLine zero = _extractZero.Value, trace = _extractTrace.Value;
            double f = y / Trace;
            return new TieLine(zero.Raffinate + (f * (trace.Raffinate - zero.Raffinate)), zero.Extract + (f * (trace.Extract - zero.Extract)));
        }

        return _model.TieLineFromExtract(y, TemperatureKelvin);
    }
}
