using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Distribution;

/// <summary>
/// Liquid-liquid equilibrium of a solute between a diluent and a solvent that do not dissolve in each other:
/// the raffinate holds no solvent, the extract no diluent, and the solute-free ratios follow the isotherm
/// Y = f(X) (X solute per unit diluent, Y solute per unit solvent, on the system's basis).
/// </summary>
/// <remarks>
/// <para>A table isotherm is interpolated by monotone cubic Hermite interpolation (Fritsch and Carlson, 1980) through
/// the origin (added when the first point has X above zero) and extrapolated linearly beyond its last point along the
/// chord of its last segment, so that every solute fraction below one has a tie line. Extrapolated tie lines are as
/// good as the straight continuation of the data; check <see cref="DistributionIsotherm.Points"/> when that matters.</para>
/// <para>Every mixture holding both diluent and solvent is two-phase; a mixture missing one of them is one phase.
/// The isotherm belongs to one temperature: the temperature arguments of the methods are not used, and
/// <see cref="ValidTemperatures"/> is that temperature plus or minus 5 K.</para>
/// </remarks>
public sealed class DistributionModel : IPhaseEquilibrium
{
    private readonly double _k;
    private readonly MonotoneCubic? _curve;

    /// <summary>Creates the model.</summary>
    /// <param name="system">The components and basis; X and Y are ratios on this basis.</param>
    /// <param name="temperatureKelvin">Temperature of the isotherm, kelvin, above zero.</param>
    /// <param name="isotherm">Constant coefficient or table; a table must pass through the origin if it starts at X = 0.</param>
    /// <exception cref="ArgumentException">When a table starts at X = 0 with Y above zero.</exception>
    public DistributionModel(TernarySystem system, double temperatureKelvin, DistributionIsotherm isotherm)
    {
        ArgumentNullException.ThrowIfNull(system);
        ArgumentNullException.ThrowIfNull(isotherm);
        Preconditions.Positive(temperatureKelvin);
        System = system;
        Isotherm = isotherm;
        TemperatureKelvin = temperatureKelvin;
        ValidTemperatures = TemperatureRange.Around(temperatureKelvin, 5);
        if (isotherm.ConstantCoefficient is double k)
        {
            _k = k;
            return;
        }

        IReadOnlyList<(double X, double Y)> points = isotherm.Points!;
        if (points[0].X == 0 && points[0].Y > 0)
        {
            throw new ArgumentException($"isotherm[0] is (0, {points[0].Y}): a solute-free diluent must be in equilibrium with a solute-free solvent (Y = 0 at X = 0).", nameof(isotherm));
        }

        int offset = points[0].X > 0 ? 1 : 0;
        var x = new double[points.Count + offset];
        var y = new double[points.Count + offset];
        for (int i = 0; i < points.Count; i++)
        {
            x[i + offset] = points[i].X;
            y[i + offset] = points[i].Y;
        }

        _curve = new MonotoneCubic(x, y);
    }

    /// <inheritdoc />
    public TernarySystem System { get; }

    /// <summary>The isotherm given at construction.</summary>
    public DistributionIsotherm Isotherm { get; }

    /// <summary>Temperature of the isotherm, kelvin.</summary>
    public double TemperatureKelvin { get; }

    /// <inheritdoc />
    public TemperatureRange ValidTemperatures { get; }

    /// <summary>Y in equilibrium with X (solute-free ratios, X zero or more).</summary>
    public double ExtractRatio(double raffinateRatio) => _curve is null ? _k * raffinateRatio : _curve.Evaluate(raffinateRatio);

    /// <summary>X in equilibrium with Y (solute-free ratios, Y zero or more).</summary>
    public double RaffinateRatio(double extractRatio) => _curve is null ? extractRatio / _k : _curve.Inverse(extractRatio);

    /// <inheritdoc />
    /// <remarks>Solves the solute balance A = D X + S f(X) for X: in closed form for a constant k, otherwise by
    /// safeguarded Newton steps on the monotone balance.</remarks>
    public PhaseSplit Split(Ternary overall, double temperatureKelvin)
    {
        double a = overall.Solute, d = overall.Diluent, s = overall.Solvent;
        if (!(d > 0) || !(s > 0) || !(a >= 0))
        {
            return PhaseSplit.OnePhase(overall);
        }

        double x;
        int iterations = 0;
        if (_curve is null)
        {
            x = a / (d + (_k * s));
        }
        else
        {
            // h(X) = D X + S f(X) - A rises from -A at X = 0; A / D is an upper bound.
            double lo = 0, hi = a / d;
            x = a / (d + s);
            for (; iterations < 200 && hi - lo > 1e-16 * (1 + hi); iterations++)
            {
                double h = (d * x) + (s * _curve.Evaluate(x)) - a;
                if (h == 0)
                {
                    break;
                }

                if (h > 0)
                {
                    hi = x;
                }
                else
                {
                    lo = x;
                }

                double step = 1e-7 * Math.Max(x, 1e-6);
                double slope = d + (s * (_curve.Evaluate(x + step) - _curve.Evaluate(x)) / step);
                double next = x - (h / slope);
                x = next > lo && next < hi ? next : 0.5 * (lo + hi);
            }
        }

        double yRatio = ExtractRatio(x);
        var raffinate = new Ternary(x / (1 + x), 1 / (1 + x), 0);
        var extract = new Ternary(yRatio / (1 + yRatio), 0, 1 / (1 + yRatio));
        double total = a + d + s;
        double extractAmount = s * (1 + yRatio);
        return new PhaseSplit(true, raffinate, extract, Math.Clamp(extractAmount / total, 0, 1), iterations);
    }

    /// <inheritdoc />
    public PhaseSplit Split(Ternary overall, double temperatureKelvin, in PhaseSplit warmStart) => Split(overall, temperatureKelvin);

    /// <inheritdoc />
    /// <exception cref="ArgumentOutOfRangeException">When the fraction is not in [0, 1).</exception>
    public TieLine TieLineFromRaffinate(double raffinateSoluteFraction, double temperatureKelvin)
    {
        CheckBelowOne(raffinateSoluteFraction, nameof(raffinateSoluteFraction));
        double x = raffinateSoluteFraction / (1 - raffinateSoluteFraction);
        double y = ExtractRatio(x);
        return new TieLine(new Ternary(raffinateSoluteFraction, 1 - raffinateSoluteFraction, 0), new Ternary(y / (1 + y), 0, 1 / (1 + y)));
    }

    /// <inheritdoc />
    /// <exception cref="ArgumentOutOfRangeException">When the fraction is not in [0, 1).</exception>
    public TieLine TieLineFromExtract(double extractSoluteFraction, double temperatureKelvin)
    {
        CheckBelowOne(extractSoluteFraction, nameof(extractSoluteFraction));
        double y = extractSoluteFraction / (1 - extractSoluteFraction);
        double x = RaffinateRatio(y);
        return new TieLine(new Ternary(x / (1 + x), 1 / (1 + x), 0), new Ternary(extractSoluteFraction, 0, 1 - extractSoluteFraction));
    }

    /// <inheritdoc />
    /// <remarks>Both limits are 1, exclusive: every solute fraction below one has a tie line (extrapolated beyond a table).</remarks>
    public SoluteLimits SoluteLimits(double temperatureKelvin) => new(1, 1);

    private static void CheckBelowOne(double fraction, string name)
    {
        if (!double.IsFinite(fraction) || fraction < 0 || fraction >= 1)
        {
            throw new ArgumentOutOfRangeException(name, fraction, "Expected a solute fraction of at least 0 and below 1.");
        }
    }
}
