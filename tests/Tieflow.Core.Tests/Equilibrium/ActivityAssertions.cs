using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;

namespace Tieflow.Core.Tests.Equilibrium;

/// <summary>Checks shared by the activity-model tests.</summary>
internal static class ActivityAssertions
{
    /// <summary>Largest |x_i gamma_i (raffinate) - x_i gamma_i (extract)| of a tie line, in mole fractions.</summary>
    public static double IsoactivityResidual(ActivityCoefficientModel model, TieLine line, double temperatureKelvin)
    {
        Ternary r = model.System.ToMole(line.Raffinate);
        Ternary e = model.System.ToMole(line.Extract);
        Ternary gr = model.ActivityCoefficients(line.Raffinate, temperatureKelvin);
        Ternary ge = model.ActivityCoefficients(line.Extract, temperatureKelvin);
        double worst = 0;
        for (int i = 0; i < 3; i++)
        {
            worst = Math.Max(worst, Math.Abs((r[i] * gr[i]) - (e[i] * ge[i])));
        }

        return worst;
    }

    /// <summary>
    /// A cold-start split of <paramref name="overall"/> (mole basis) is sound and has the expected number of phases:
    /// one phase only where the model's stability test and an independent tangent-plane test on a dense grid agree;
    /// two phases isoactive to 1e-9, balanced to 1e-12, not the trivial solution, roles kept and the phase share in [0, 1].
    /// </summary>
    public static void SplitIsSound(ActivityCoefficientModel model, Ternary overall, double temperatureKelvin, bool twoPhase)
    {
        PhaseSplit split = model.Split(overall, temperatureKelvin);
        Assert.True(split.IsTwoPhase == twoPhase, $"{overall}: expected {(twoPhase ? "two phases" : "one phase")}, got {(split.IsTwoPhase ? "two" : "one")}");
        if (!split.IsTwoPhase)
        {
            Assert.True(model.TestStability(overall, temperatureKelvin).IsStable, $"{overall} one phase but unstable");
            var reference = new GibbsMinimisation(model, temperatureKelvin, divisions: 200);
            Span<double> where = stackalloc double[3];
            Assert.True(reference.GridTpd([overall.Solute, overall.Diluent, overall.Solvent], where) > -1e-12, $"{overall} one phase but the grid finds a lower tangent plane");
            return;
        }

        Assert.True(IsoactivityResidual(model, split.TieLine, temperatureKelvin) < 1e-9);
        Assert.True(BalanceResidual(split, overall) < 1e-12);
        Assert.True(Ternary.MaxDifference(split.Raffinate, split.Extract) > 1e-4, "trivial solution returned as two phases");
        Assert.True(split.Raffinate.Diluent > split.Extract.Diluent);
        Assert.InRange(split.ExtractFraction, 0, 1);
    }

    /// <summary>Largest component difference between the overall composition and the phases recombined, on the system's basis.</summary>
    public static double BalanceResidual(PhaseSplit split, Ternary overall)
    {
        Ternary recombined = ((1 - split.ExtractFraction) * split.Raffinate) + (split.ExtractFraction * split.Extract);
        return Ternary.MaxDifference(recombined, overall);
    }

    /// <summary>
    /// Gibbs-Duhem residual sum_i x_i d(ln gamma_i)/dx_k along the direction that raises x_k and lowers x_m
    /// (central differences); zero for a consistent model (exact thermodynamic identity).
    /// </summary>
    public static double GibbsDuhemResidual(ActivityCoefficientModel model, double temperatureKelvin, ReadOnlySpan<double> x, int k, int m)
    {
        const double H = 1e-6;
        Span<double> plus = stackalloc double[3];
        Span<double> minus = stackalloc double[3];
        Span<double> lgPlus = stackalloc double[3];
        Span<double> lgMinus = stackalloc double[3];
        x.CopyTo(plus);
        x.CopyTo(minus);
        plus[k] += H;
        plus[m] -= H;
        minus[k] -= H;
        minus[m] += H;
        model.LnGamma(temperatureKelvin, plus, lgPlus);
        model.LnGamma(temperatureKelvin, minus, lgMinus);
        double sum = 0;
        for (int i = 0; i < 3; i++)
        {
            sum += x[i] * (lgPlus[i] - lgMinus[i]) / (2 * H);
        }

        return sum;
    }
}
