using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>
/// The UNIQUAC activity-coefficient model (Abrams and Prausnitz, AIChE J. 21, 116, 1975) for a ternary system:
/// ln gamma_i = ln(Phi_i / x_i) + (z / 2) q_i ln(theta_i / Phi_i) + l_i - (Phi_i / x_i) sum_j x_j l_j
///   + q_i [1 - ln(sum_j theta_j tau_ji) - sum_j theta_j tau_ij / sum_k theta_k tau_kj],
/// with z = 10, l_i = (z / 2)(r_i - q_i) - (r_i - 1), Phi_i = r_i x_i / sum r x, theta_i = q_i x_i / sum q x and
/// tau_ij = exp(-a_ij / T) (kelvin) or exp(-a_ij / (R T)) (energy units).
/// Works in mole fractions; see <see cref="ActivityCoefficientModel"/> for the split and tie-line calculations.
/// </summary>
public sealed class UniquacModel : ActivityCoefficientModel
{
    private const double Coordination = 10.0;

    private readonly double[] _r = new double[3];
    private readonly double[] _q = new double[3];
    private readonly double[] _l = new double[3];
    private readonly double[] _a = new double[9];
    private readonly double[] _aScale = new double[9];

    /// <summary>Creates the model.</summary>
    /// <param name="system">Components and the basis of compositions exchanged with the model.</param>
    /// <param name="structure">Volume and surface parameters r and q of the three components, in role order (solute, diluent, solvent).</param>
    /// <param name="pairs">Exactly the pairs solute-diluent, solute-solvent and diluent-solvent (indices in role order).</param>
    /// <param name="validTemperatures">Temperatures (kelvin) for which the parameters were fitted.</param>
    /// <exception cref="ArgumentException">When the structure does not have three entries with r and q above zero, or a pair is missing, repeated or not finite.</exception>
    public UniquacModel(TernarySystem system, IReadOnlyList<UniquacComponent> structure, IReadOnlyList<UniquacPair> pairs, TemperatureRange validTemperatures)
        : base(system, validTemperatures)
    {
        ArgumentNullException.ThrowIfNull(structure);
        ArgumentNullException.ThrowIfNull(pairs);
        if (structure.Count != 3)
        {
            throw new ArgumentException($"Expected r and q for three components in role order (solute, diluent, solvent), got {structure.Count}.", nameof(structure));
        }

        for (int i = 0; i < 3; i++)
        {
            UniquacComponent c = structure[i] ?? throw new ArgumentException($"UNIQUAC structure of {system.Components[i].Id} is missing.", nameof(structure));
            _r[i] = Preconditions.Positive(c.R, $"UNIQUAC r of {system.Components[i].Id}");
            _q[i] = Preconditions.Positive(c.Q, $"UNIQUAC q of {system.Components[i].Id}");
            _l[i] = (0.5 * Coordination * (_r[i] - _q[i])) - (_r[i] - 1);
        }

        var seen = new bool[9];
        foreach (UniquacPair p in pairs)
        {
            ArgumentNullException.ThrowIfNull(p, nameof(pairs));
            if (p.I is < 0 or > 2 || p.J is < 0 or > 2 || p.I == p.J)
            {
                throw new ArgumentException($"UNIQUAC pair ({p.I}, {p.J}): expected two different component indices 0 (solute), 1 (diluent) or 2 (solvent).", nameof(pairs));
            }

            string name = NrtlModel.PairName(system, p.I, p.J);
            if (seen[(p.I * 3) + p.J])
            {
                throw new ArgumentException($"UNIQUAC pair {name} is given twice.", nameof(pairs));
            }

            Preconditions.Finite(p.Aij, $"aij of UNIQUAC pair {name}");
            Preconditions.Finite(p.Aji, $"aji of UNIQUAC pair {name}");
            double scale = NrtlModel.InteractionScale(p.Units);
            _a[(p.I * 3) + p.J] = p.Aij;
            _a[(p.J * 3) + p.I] = p.Aji;
            _aScale[(p.I * 3) + p.J] = scale;
            _aScale[(p.J * 3) + p.I] = scale;
            seen[(p.I * 3) + p.J] = true;
            seen[(p.J * 3) + p.I] = true;
        }

        foreach ((int i, int j) in new[] { (0, 1), (0, 2), (1, 2) })
        {
            if (!seen[(i * 3) + j])
            {
                throw new ArgumentException($"UNIQUAC pair {NrtlModel.PairName(system, i, j)} is missing; all three binary pairs are required.", nameof(pairs));
            }
        }
    }

    /// <summary>The binary interaction tau_ij = exp(-a_ij / T) at a temperature (i, j in role order), dimensionless.</summary>
    public double Tau(int i, int j, double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        int k = (i * 3) + j;
        return Math.Exp(-_a[k] * _aScale[k] / temperatureKelvin);
    }

    /// <inheritdoc />
    private protected override string ModelName => "UNIQUAC";

    /// <inheritdoc />
    private protected override void Prepare(double temperatureKelvin, Span<double> state)
    {
        for (int k = 0; k < 9; k++)
        {
            state[k] = Math.Exp(-_a[k] * _aScale[k] / temperatureKelvin);
        }
    }

    /// <inheritdoc />
    private protected override void LnGammaCore(ReadOnlySpan<double> state, ReadOnlySpan<double> x, Span<double> lnGamma)
    {
        ReadOnlySpan<double> tau = state[..9];
        double[] r = _r;
        double[] q = _q;
        double[] l = _l;
        double sumR = (r[0] * x[0]) + (r[1] * x[1]) + (r[2] * x[2]);
        double sumQ = (q[0] * x[0]) + (q[1] * x[1]) + (q[2] * x[2]);
        double sumL = (l[0] * x[0]) + (l[1] * x[1]) + (l[2] * x[2]);
        Span<double> theta = stackalloc double[3];
        Span<double> s = stackalloc double[3];
        for (int i = 0; i < 3; i++)
        {
            theta[i] = q[i] * x[i] / sumQ;
        }

        for (int j = 0; j < 3; j++)
        {
            // s_j = sum_k theta_k tau_kj
            s[j] = (theta[0] * tau[j]) + (theta[1] * tau[3 + j]) + (theta[2] * tau[6 + j]);
        }

        for (int i = 0; i < 3; i++)
        {
            // Phi_i / x_i and theta_i / Phi_i written without x_i so that a zero fraction gives the dilute limit.
            double phiOverX = r[i] / sumR;
            double thetaOverPhi = q[i] * sumR / (r[i] * sumQ);
            double combinatorial = Math.Log(phiOverX) + (0.5 * Coordination * q[i] * Math.Log(thetaOverPhi)) + l[i] - (phiOverX * sumL);
            int row = i * 3;
            double residual = q[i] * (1 - Math.Log(s[i]) - ((theta[0] * tau[row] / s[0]) + (theta[1] * tau[row + 1] / s[1]) + (theta[2] * tau[row + 2] / s[2])));
            lnGamma[i] = combinatorial + residual;
        }
    }
}
