using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Monitoring.Efficiency;

/// <summary>
/// The Murphree raffinate efficiency of one stage from reconciled solute fractions (Murphree, Ind. Eng. Chem. 17(7), 1925,
/// 747-750, applied to the raffinate phase): E = (x_in - x_out) / (x_in - x*), x* the raffinate in equilibrium with the
/// leaving extract y. Its sigma by the delta method: the gradient of E with respect to (x_in, x_out, y), with dx*/dy
/// from the equilibrium model by a central difference, against the covariance of the three estimates.
/// </summary>
public static class StageEfficiencyEstimator
{
    /// <summary>Estimates the efficiency of a stage.</summary>
    /// <param name="model">The equilibrium model.</param>
    /// <param name="temperatureKelvin">Stage temperature, kelvin.</param>
    /// <param name="stage">1-based stage.</param>
    /// <param name="xIn">Solute fraction of the raffinate-side stream entering.</param>
    /// <param name="xOut">Solute fraction of the raffinate leaving.</param>
    /// <param name="yOut">Solute fraction of the extract leaving.</param>
    /// <param name="covariance">Covariance of (x_in, x_out, y), row-major 3x3.</param>
    /// <param name="maxSigma">Above this sigma the efficiency is "not determinable" (a pinched stage).</param>
    public static StageEfficiency Estimate(IPhaseEquilibrium model, double temperatureKelvin, int stage, double xIn, double xOut, double yOut, ReadOnlySpan<double> covariance, double maxSigma)
    {
        ArgumentNullException.ThrowIfNull(model);
        if (covariance.Length != 9)
        {
            throw new ArgumentException("Expected a 3x3 covariance, row-major.", nameof(covariance));
        }

        double limit = model.SoluteLimits(temperatureKelvin).Extract;
        double y = Math.Clamp(yOut, 0, limit);
        double xStar;
        double slope;
        try
        {
            xStar = model.TieLineFromExtract(y, temperatureKelvin).Raffinate.Solute;
            double h = Math.Max(1e-6, 1e-4 * y);
            double lo = Math.Max(0, y - h), hi = Math.Min(limit, y + h);
            slope = (model.TieLineFromExtract(hi, temperatureKelvin).Raffinate.Solute - model.TieLineFromExtract(lo, temperatureKelvin).Raffinate.Solute) / (hi - lo);
        }
        catch (EquilibriumException)
        {
            return new StageEfficiency(stage, EfficiencyStatus.NotDeterminable, double.NaN, double.PositiveInfinity, double.NaN);
        }

        double d = xIn - xStar;
        double e = (xIn - xOut) / d;
        Span<double> g = [(xOut - xStar) / (d * d), -1 / d, (xIn - xOut) / (d * d) * slope];
        double variance = 0;
        for (int i = 0; i < 3; i++)
        {
            for (int j = 0; j < 3; j++)
            {
                variance += g[i] * covariance[(3 * i) + j] * g[j];
            }
        }

        double sigma = Math.Sqrt(Math.Max(variance, 0));
        bool determinable = double.IsFinite(e) && double.IsFinite(sigma) && sigma <= maxSigma && Math.Abs(d) > 0;
        return determinable
            ? new StageEfficiency(stage, EfficiencyStatus.Determined, e, sigma, d)
            : new StageEfficiency(stage, EfficiencyStatus.NotDeterminable, double.NaN, sigma, d);
    }
}
