using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// The NRTL activity-coefficient model (Renon and Prausnitz, AIChE J. 14, 135, 1968) for a ternary system:
/// ln gamma_i = sum_j x_j tau_ji G_ji / sum_k x_k G_ki
///   + sum_j [x_j G_ij / sum_k x_k G_kj] (tau_ij - sum_m x_m tau_mj G_mj / sum_k x_k G_kj),
/// with tau_ij = a_ij + g_ij / T (kelvin) or a_ij + g_ij / (R T) (energy units), G_ij = exp(-alpha_ij tau_ij).
/// Works in mole fractions; see <see cref="ActivityCoefficientModel"/> for the split and tie-line calculations.
/// </summary>
public sealed class NrtlModel : ActivityCoefficientModel
{
    // Parameters in row-major 3x3 arrays (index i * 3 + j); diagonal entries are zero.
    private readonly double[] _a = new double[9];
    private readonly double[] _g = new double[9];
    private readonly double[] _alpha = new double[9];
    private readonly double[] _gScale = new double[9];

    /// <summary>Creates the model from the three binary pairs (any order, each pair once).</summary>
    /// <param name="system">Components and the basis of compositions exchanged with the model.</param>
    /// <param name="pairs">Exactly the pairs solute-diluent, solute-solvent and diluent-solvent (indices in role order).</param>
    /// <param name="validTemperatures">Temperatures (kelvin) for which the parameters were fitted.</param>
    /// <exception cref="ArgumentException">When a pair is missing or repeated, an index is out of range, or a number is not finite (alpha must be above zero).</exception>
    public NrtlModel(TernarySystem system, IReadOnlyList<NrtlPair> pairs, TemperatureRange validTemperatures)
        : base(system, validTemperatures)
    {
        ArgumentNullException.ThrowIfNull(pairs);
        var seen = new bool[9];
        foreach (NrtlPair p in pairs)
        {
            ArgumentNullException.ThrowIfNull(p, nameof(pairs));
            if (p.I is < 0 or > 2 || p.J is < 0 or > 2 || p.I == p.J)
            {
                throw new ArgumentException($"NRTL pair ({p.I}, {p.J}): expected two different component indices 0 (solute), 1 (diluent) or 2 (solvent).", nameof(pairs));
            }

            string name = PairName(system, p.I, p.J);
            if (seen[(p.I * 3) + p.J])
            {
                throw new ArgumentException($"NRTL pair {name} is given twice.", nameof(pairs));
            }

            Preconditions.Positive(p.Alpha, $"alpha of NRTL pair {name}");
            Preconditions.Finite(p.Aij, $"aij of NRTL pair {name}");
            Preconditions.Finite(p.Aji, $"aji of NRTL pair {name}");
            Preconditions.Finite(p.Gij, $"gij of NRTL pair {name}");
            Preconditions.Finite(p.Gji, $"gji of NRTL pair {name}");
            double scale = InteractionScale(p.Units);
            Set(p.I, p.J, p.Aij, p.Gij, p.Alpha, scale);
            Set(p.J, p.I, p.Aji, p.Gji, p.Alpha, scale);
            seen[(p.I * 3) + p.J] = true;
            seen[(p.J * 3) + p.I] = true;
        }

        foreach ((int i, int j) in new[] { (0, 1), (0, 2), (1, 2) })
        {
            if (!seen[(i * 3) + j])
            {
                throw new ArgumentException($"NRTL pair {PairName(system, i, j)} is missing; all three binary pairs are required.", nameof(pairs));
            }
        }
    }

    /// <summary>The binary interaction tau_ij at a temperature (i, j in role order), dimensionless.</summary>
    public double Tau(int i, int j, double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        int k = (i * 3) + j;
        return _a[k] + (_g[k] * _gScale[k] / temperatureKelvin);
    }

    /// <inheritdoc />
    private protected override string ModelName => "NRTL";

    /// <summary>Gas constant in J/(mol K) (CODATA 2018, exact).</summary>
    internal const double GasConstantJoule = 8.314462618;

    /// <summary>Gas constant in cal/(mol K), thermochemical calorie.</summary>
    internal const double GasConstantCalorie = 1.98720425864;

    /// <summary>Factor turning a parameter of these units into kelvin (1, or 1/R).</summary>
    internal static double InteractionScale(InteractionUnits units) => units switch
    {
        InteractionUnits.Kelvin => 1.0,
        InteractionUnits.JoulePerMole => 1.0 / GasConstantJoule,
        InteractionUnits.CaloriePerMole => 1.0 / GasConstantCalorie,
        _ => throw new ArgumentOutOfRangeException(nameof(units), units, "Expected kelvin, J/mol or cal/mol."),
    };

    internal static string PairName(TernarySystem system, int i, int j) => $"{system.Components[i].Id}-{system.Components[j].Id}";

    /// <inheritdoc />
    private protected override void Prepare(double temperatureKelvin, Span<double> state)
    {
        // state[0..9) tau_ij, state[9..18) G_ij.
        for (int k = 0; k < 9; k++)
        {
            double tau = _a[k] + (_g[k] * _gScale[k] / temperatureKelvin);
            state[k] = tau;
            state[9 + k] = Math.Exp(-_alpha[k] * tau);
        }

        state[9] = 1;
        state[13] = 1;
        state[17] = 1;
    }

    /// <inheritdoc />
    private protected override void LnGammaCore(ReadOnlySpan<double> state, ReadOnlySpan<double> x, Span<double> lnGamma)
    {
        Span<double> sums = stackalloc double[3];
        Span<double> eps = stackalloc double[3];
        LnGammaWithSums(state, x, lnGamma, sums, eps);
    }

    // ln gamma_i = e_i + sum_j x_j G_ij (tau_ij - e_j) / S_j, with S_j = sum_k x_k G_kj and e_j = sum_m x_m tau_mj G_mj / S_j;
    // S and e are returned too, for the derivatives.
    private static void LnGammaWithSums(ReadOnlySpan<double> state, ReadOnlySpan<double> x, Span<double> lnGamma, Span<double> sums, Span<double> eps)
    {
        ReadOnlySpan<double> tau = state[..9];
        ReadOnlySpan<double> g = state.Slice(9, 9);
        for (int j = 0; j < 3; j++)
        {
            double d = 0;
            double n = 0;
            for (int k = 0; k < 3; k++)
            {
                double xg = x[k] * g[(k * 3) + j];
                d += xg;
                n += xg * tau[(k * 3) + j];
            }

            sums[j] = d;
            eps[j] = n / d;
        }

        for (int i = 0; i < 3; i++)
        {
            double sum = eps[i];
            for (int j = 0; j < 3; j++)
            {
                int ij = (i * 3) + j;
                sum += x[j] * g[ij] / sums[j] * (tau[ij] - eps[j]);
            }

            lnGamma[i] = sum;
        }
    }

    /// <inheritdoc />
    /// <remarks>
    /// NRTL's ln gamma is homogeneous of degree zero in the mole numbers, so d ln gamma_i / d n_k at one mole equals the
    /// derivative with the fractions taken as independent:
    /// G_ki (tau_ki - e_i) / S_i + G_ik (tau_ik - e_k) / S_k - sum_j x_j G_ij G_kj (tau_ij + tau_kj - 2 e_j) / S_j^2,
    /// with S_j = sum_m x_m G_mj and e_j = sum_m x_m tau_mj G_mj / S_j.
    /// </remarks>
    private protected override bool LnGammaDerivatives(ReadOnlySpan<double> state, ReadOnlySpan<double> x, Span<double> lnGamma, Span<double> derivatives)
    {
        ReadOnlySpan<double> tau = state[..9];
        ReadOnlySpan<double> g = state.Slice(9, 9);
        Span<double> sums = stackalloc double[3];
        Span<double> eps = stackalloc double[3];
        LnGammaWithSums(state, x, lnGamma, sums, eps);
        for (int i = 0; i < 3; i++)
        {
            for (int k = i; k < 3; k++)
            {
                int ik = (i * 3) + k;
                int ki = (k * 3) + i;
                double value = (g[ki] * (tau[ki] - eps[i]) / sums[i]) + (g[ik] * (tau[ik] - eps[k]) / sums[k]);
                for (int j = 0; j < 3; j++)
                {
                    int ij = (i * 3) + j;
                    int kj = (k * 3) + j;
                    value -= x[j] * g[ij] * g[kj] * (tau[ij] + tau[kj] - (2 * eps[j])) / (sums[j] * sums[j]);
                }

                derivatives[ik] = value;
                derivatives[ki] = value;
            }
        }

        return true;
    }

    private void Set(int i, int j, double a, double g, double alpha, double scale)
    {
        int k = (i * 3) + j;
        _a[k] = a;
        _g[k] = g;
        _alpha[k] = alpha;
        _gScale[k] = scale;
    }
}
