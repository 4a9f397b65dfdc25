using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Numerics;

namespace Tieflow.Core.Cascade;

/// <summary>
/// Counter-current cascade by Newton's method on the whole profile. Unknowns per stage: the solute fractions of
/// the leaving raffinate (x) and extract (y), both on the envelope, and the two leaving flows scaled by the total
/// inflow. Equations per stage: three component balances and the Murphree relation. Envelope derivatives come from
/// forward differences of the model's tie-line functions (4 model calls per stage and step, 2 for a stage of
/// efficiency 1, whose raffinate is the other end of its extract's tie line). Steps are projected
/// onto the envelope's range and halved until the largest residual falls. The start is the equilibrium split of
/// feed plus solvent on every stage. Should Newton stall, Gauss-Seidel sweeps of single-stage solves (slow but
/// robust) bring the profile closer before Newton resumes.
/// </summary>
internal sealed class CountercurrentSolver
{
    private const double DerivativeStep = 1e-7;

    private readonly Envelope _envelope;
    private readonly CascadeSolverOptions _options;
    private readonly int _n;
    private readonly double[] _efficiency;
    private readonly Ternary _feed;
    private readonly Ternary _solvent;
    private readonly double _feedSolute;
    private readonly double _scale;

    private readonly double[] _u;
    private readonly double[] _trial;
    private readonly double[] _residual;
    private readonly double[] _trialResidual;
    private readonly double[] _step;
    private readonly BandedLinear _jacobian;
    private Curves _curves;
    private Curves _trialCurves;
    private IEnvelopeBranches _values;
    private IEnvelopeBranches _slopes;

    public CountercurrentSolver(Envelope envelope, MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies, CascadeSolverOptions options)
    {
        _envelope = envelope;
        _options = options;
        _n = efficiencies.Count;
        _efficiency = [.. efficiencies];
        _scale = feed.Flow + solvent.Flow;
        _feed = (1 / _scale) * feed.ComponentFlows;
        _solvent = (1 / _scale) * solvent.ComponentFlows;
        _feedSolute = feed.Composition.Solute;
        int size = 4 * _n;
        _u = new double[size];
        _trial = new double[size];
        _residual = new double[size];
        _trialResidual = new double[size];
        _step = new double[size];
        _jacobian = new BandedLinear(size, 7, 7);
        _curves = new Curves(_n);
        _trialCurves = new Curves(_n);
        _values = envelope;
        _slopes = envelope;
    }

    public int Iterations { get; private set; }

    public CascadeResult Solve(bool throwOnFailure, double[]? start = null, bool useTable = false)
    {
        bool converged = false;
        EnvelopeTable? table = useTable && start is null ? _envelope.Table : null;
        if (table is not null && TableStart(table))
        {
            // Residuals from the model, Jacobian from the table: the start is within the table's error of the answer.
            _values = _envelope;
            _slopes = table;
            EvaluateCurves(_u, _curves);
            Residual(_u, _curves, _residual);
            converged = Newton(_options.Tolerance, Math.Min(_options.MaxIterations, 12));
            _slopes = _envelope;
        }
        else
        {
            Start(start);
        }

        int sweepsLeft = _options.MaxIterations;
        while (!converged && Iterations < _options.MaxIterations)
        {
            if (Newton(_options.Tolerance, _options.MaxIterations))
            {
                converged = true;
                break;
            }

            // Newton stalled: a few robust sweeps, then Newton again from the better profile.
            for (int i = 0; i < 5 && Iterations < _options.MaxIterations && sweepsLeft-- > 0; i++)
            {
                Sweep();
            }
        }

        if (!converged && throwOnFailure)
        {
            throw new CascadeException($"The counter-current cascade of {_n} stages did not converge in {_options.MaxIterations} iterations (largest balance residual {MaxAbs(_residual):G3} of the total inflow). Raise MaxIterations, loosen the tolerance, or check that the solvent flow keeps every stage two-phase.");
        }

        return Result(converged ? CascadeStatus.Converged : CascadeStatus.IterationLimit);
    }

    /// <summary>Solves the cascade on the table alone, from the table's split of feed plus solvent; false when that fails.</summary>
    private bool TableStart(EnvelopeTable table)
    {
        Ternary mixture = _feed + _solvent;
        if (!table.TrySplit(mixture, out double x, out double y))
        {
            return false;
        }

        TieLine tie = table.FromExtract(y);
        (double l, double v) = Envelope.Lever(mixture, tie.Raffinate, tie.Extract);
        if (!(l > 0 && v > 0))
        {
            return false;
        }

        for (int k = 0; k < _n; k++)
        {
            _u[4 * k] = x;
            _u[(4 * k) + 1] = y;
            _u[(4 * k) + 2] = l;
            _u[(4 * k) + 3] = v;
        }

        _values = table;
        _slopes = table;
        EvaluateCurves(_u, _curves);
        Residual(_u, _curves, _residual);
        bool ok = Newton(1e-10, 50);
        _values = _envelope;
        _slopes = _envelope;
        return ok;
    }

    private void Start(double[]? start)
    {
        if (start is not null)
        {
            for (int i = 0; i < start.Length; i++)
            {
                _u[i] = i % 4 < 2 ? start[i] : start[i] / _scale;
            }

            Project(_u);
            EvaluateCurves(_u, _curves);
            Residual(_u, _curves, _residual);
            return;
        }

        Ternary mixture = _feed + _solvent;
        PhaseSplit split = _envelope.Split(mixture.Normalized());
        if (!split.IsTwoPhase)
        {
            throw StageSolver.OnePhase(_envelope, "The feed and the solvent together", _feed, _solvent);
        }

        (double l, double v) = Envelope.Lever(mixture, split.Raffinate, split.Extract);
        for (int k = 0; k < _n; k++)
        {
            _u[4 * k] = split.Raffinate.Solute;
            _u[(4 * k) + 1] = split.Extract.Solute;
            _u[(4 * k) + 2] = Math.Max(l, 1e-6);
            _u[(4 * k) + 3] = Math.Max(v, 1e-6);
        }

        EvaluateCurves(_u, _curves);
        Residual(_u, _curves, _residual);
    }

    /// <summary>Newton steps until converged (true) or stalled or out of steps (false).</summary>
    private bool Newton(double tolerance, int maxSteps)
    {
        int size = 4 * _n;
        double norm = MaxAbs(_residual);
        double[] step = _step;
        for (int taken = 0; taken < maxSteps && Iterations < _options.MaxIterations; taken++)
        {
            if (norm <= tolerance)
            {
                return true;
            }

            Iterations++;
            EvaluateDerivatives(_u, _curves);
            Jacobian(_u, _curves, _jacobian);
            for (int i = 0; i < size; i++)
            {
                step[i] = -_residual[i];
            }

            if (!_jacobian.Solve(step))
            {
                return false;
            }

            double alpha = 1;
            bool accepted = false;
            for (int halving = 0; halving < 30; halving++)
            {
                for (int i = 0; i < size; i++)
                {
                    _trial[i] = _u[i] + (alpha * step[i]);
                }

                Project(_trial);
                EvaluateCurves(_trial, _trialCurves);
                Residual(_trial, _trialCurves, _trialResidual);
                double trialNorm = MaxAbs(_trialResidual);
                if (trialNorm < (1 - (1e-4 * alpha)) * norm || trialNorm <= tolerance)
                {
                    accepted = true;
                    norm = trialNorm;
                    break;
                }

                alpha *= 0.5;
            }

            if (!accepted)
            {
                return false;
            }

            Array.Copy(_trial, _u, size);
            Array.Copy(_trialResidual, _residual, size);
            (_curves, _trialCurves) = (_trialCurves, _curves);
        }

        return norm <= tolerance;
    }

    /// <summary>One Gauss-Seidel sweep of single-stage solves from the feed end.</summary>
    private void Sweep()
    {
        Iterations++;
        for (int k = 0; k < _n; k++)
        {
            var raffinateIn = k == 0 ? MaterialStream.FromComponentFlows(_feed) : new MaterialStream(_u[(4 * (k - 1)) + 2], _curves.Raffinate[k - 1]);
            var extractIn = k == _n - 1 ? MaterialStream.FromComponentFlows(_solvent) : new MaterialStream(_u[(4 * (k + 1)) + 3], _curves.Extract[k + 1]);
            StageResult stage = StageSolver.Solve(_envelope, k + 1, raffinateIn, extractIn, _efficiency[k], _options, out _);
            _u[4 * k] = stage.Raffinate.Composition.Solute;
            _u[(4 * k) + 1] = stage.Extract.Composition.Solute;
            _u[(4 * k) + 2] = stage.Raffinate.Flow;
            _u[(4 * k) + 3] = stage.Extract.Flow;
            _curves.Raffinate[k] = stage.Raffinate.Composition;
            _curves.Extract[k] = stage.Extract.Composition;
        }

        EvaluateCurves(_u, _curves);
        Residual(_u, _curves, _residual);
    }

    private void Project(double[] u)
    {
        for (int k = 0; k < _n; k++)
        {
            u[4 * k] = Math.Clamp(u[4 * k], 0, _envelope.RaffinateMax);
            u[(4 * k) + 1] = Math.Clamp(u[(4 * k) + 1], 0, _envelope.ExtractMax);
            u[(4 * k) + 2] = Math.Max(u[(4 * k) + 2], 0);
            u[(4 * k) + 3] = Math.Max(u[(4 * k) + 3], 0);
        }
    }

    private void EvaluateCurves(double[] u, Curves c)
    {
        for (int k = 0; k < _n; k++)
        {
            // An equilibrium stage's raffinate is the other end of its extract's tie line: one model call, not two.
            TieLine tie = _values.FromExtract(u[(4 * k) + 1]);
            c.Raffinate[k] = _efficiency[k] == 1 ? tie.Raffinate : _values.Raffinate(u[4 * k]);
            c.Extract[k] = tie.Extract;
            c.EquilibriumRaffinate[k] = tie.Raffinate.Solute;
        }
    }

    private void EvaluateDerivatives(double[] u, Curves c)
    {
        bool sameSource = ReferenceEquals(_slopes, _values);
        for (int k = 0; k < _n; k++)
        {
            bool conjugate = _efficiency[k] == 1;
            double x = u[4 * k];
            if (conjugate)
            {
                c.RaffinateSlope[k] = default;
            }
            else
            {
                double hx = x + DerivativeStep <= _slopes.RaffinateMax ? DerivativeStep : -DerivativeStep;
                Ternary r0 = sameSource ? c.Raffinate[k] : _slopes.Raffinate(x);
                c.RaffinateSlope[k] = (1 / hx) * (_slopes.Raffinate(x + hx) - r0);
            }

            double y = u[(4 * k) + 1];
            double hy = y + DerivativeStep <= _slopes.ExtractMax ? DerivativeStep : -DerivativeStep;
            TieLine t0 = sameSource ? new TieLine(conjugate ? c.Raffinate[k] : new Ternary(c.EquilibriumRaffinate[k], 0, 0), c.Extract[k]) : _slopes.FromExtract(y);
            TieLine tie = _slopes.FromExtract(y + hy);
            c.ExtractSlope[k] = (1 / hy) * (tie.Extract - t0.Extract);
            c.EquilibriumRaffinateSlope[k] = (tie.Raffinate.Solute - t0.Raffinate.Solute) / hy;
            c.ConjugateSlope[k] = conjugate ? (1 / hy) * (tie.Raffinate - t0.Raffinate) : default;
        }
    }

    private void Residual(double[] u, Curves c, double[] r)
    {
        for (int k = 0; k < _n; k++)
        {
            Ternary raffinateIn = k == 0 ? _feed : u[(4 * (k - 1)) + 2] * c.Raffinate[k - 1];
            Ternary extractIn = k == _n - 1 ? _solvent : u[(4 * (k + 1)) + 3] * c.Extract[k + 1];
            Ternary balance = raffinateIn + extractIn - (u[(4 * k) + 2] * c.Raffinate[k]) - (u[(4 * k) + 3] * c.Extract[k]);
            r[4 * k] = balance.Solute;
            r[(4 * k) + 1] = balance.Diluent;
            r[(4 * k) + 2] = balance.Solvent;
            double xIn = k == 0 ? _feedSolute : u[4 * (k - 1)];
            r[(4 * k) + 3] = u[4 * k] - xIn + (_efficiency[k] * (xIn - c.EquilibriumRaffinate[k]));
        }
    }

    private void Jacobian(double[] u, Curves c, BandedLinear j)
    {
        j.Clear();
        for (int k = 0; k < _n; k++)
        {
            int col = 4 * k;
            for (int comp = 0; comp < 3; comp++)
            {
                int row = (4 * k) + comp;
                j.Set(row, col, -u[col + 2] * c.RaffinateSlope[k][comp]);
                j.Set(row, col + 1, (-u[col + 3] * c.ExtractSlope[k][comp]) - (u[col + 2] * c.ConjugateSlope[k][comp]));
                j.Set(row, col + 2, -c.Raffinate[k][comp]);
                j.Set(row, col + 3, -c.Extract[k][comp]);
                if (k > 0)
                {
                    int prev = col - 4;
                    j.Set(row, prev, u[prev + 2] * c.RaffinateSlope[k - 1][comp]);
                    j.Set(row, prev + 1, u[prev + 2] * c.ConjugateSlope[k - 1][comp]);
                    j.Set(row, prev + 2, c.Raffinate[k - 1][comp]);
                }

                if (k < _n - 1)
                {
                    int next = col + 4;
                    j.Set(row, next + 1, u[next + 3] * c.ExtractSlope[k + 1][comp]);
                    j.Set(row, next + 3, c.Extract[k + 1][comp]);
                }
            }

            int murphree = (4 * k) + 3;
            j.Set(murphree, col, 1);
            j.Set(murphree, col + 1, -_efficiency[k] * c.EquilibriumRaffinateSlope[k]);
            if (k > 0)
            {
                j.Set(murphree, col - 4, -1 + _efficiency[k]);
            }
        }
    }

    private CascadeResult Result(CascadeStatus status)
    {
        var stages = new StageResult[_n];
        for (int k = 0; k < _n; k++)
        {
            stages[k] = new StageResult(
                k + 1,
                new MaterialStream(_scale * _u[(4 * k) + 2], _curves.Raffinate[k]),
                new MaterialStream(_scale * _u[(4 * k) + 3], _curves.Extract[k]),
                _efficiency[k],
                _curves.EquilibriumRaffinate[k]);
        }

        double balance = 0;
        for (int k = 0; k < _n; k++)
        {
            balance = Math.Max(balance, Math.Max(Math.Abs(_residual[4 * k]), Math.Max(Math.Abs(_residual[(4 * k) + 1]), Math.Abs(_residual[(4 * k) + 2]))));
        }

        MaterialStream raffinate = stages[^1].Raffinate;
        double feedSolute = _scale * _feed.Solute;
        double recovery = feedSolute > 0 ? 1 - (raffinate.ComponentFlows.Solute / feedSolute) : 0;
        return new CascadeResult(CascadeArrangement.Countercurrent, status, stages, raffinate, stages[0].Extract, recovery, Iterations, balance);
    }

    private static double MaxAbs(double[] values)
    {
        double max = 0;
        foreach (double v in values)
        {
            max = Math.Max(max, Math.Abs(v));
        }

        return max;
    }

    private sealed class Curves(int n)
    {
        public Ternary[] Raffinate { get; } = new Ternary[n];

        public Ternary[] RaffinateSlope { get; } = new Ternary[n];

        /// <summary>Slope of an equilibrium stage's raffinate (the conjugate end of its extract's tie line) with y.</summary>
        public Ternary[] ConjugateSlope { get; } = new Ternary[n];

        public Ternary[] Extract { get; } = new Ternary[n];

        public Ternary[] ExtractSlope { get; } = new Ternary[n];

        public double[] EquilibriumRaffinate { get; } = new double[n];

        public double[] EquilibriumRaffinateSlope { get; } = new double[n];
    }
}
