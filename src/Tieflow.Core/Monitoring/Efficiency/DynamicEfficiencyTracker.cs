using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Dynamics;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Numerics;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Core.Monitoring.Efficiency;

/// <summary>
/// Stage efficiencies while a mixer-settler train is not steady, from the unit's dynamic model (mixers and settler
/// layers of the plant file's hold-ups, <see cref="UnitDynamics"/>) run through the last few windows with the
/// reconciled feed and solvent, and fitted to the stage analyzers.
/// </summary>
/// <remarks>
/// <para>Why. A steady window compares each stage's raffinate with the equilibrium at its own extract; while the train
/// settles the settler layers delay every stage's answer by hours (the demo train's slowest mode is about 7 h), so a
/// failing stage is seen only once the whole train has settled again. The model knows those delays: given the inlets,
/// a lower efficiency of stage k raises the raffinate leaving k first and most, within one mixer and one layer time
/// constant.</para>
/// <para>Method: a moving-horizon fit (Rao, Rawlings and Mayne, "Constrained state estimation for nonlinear
/// discrete-time systems", IEEE Trans. Autom. Control 48(2), 2003), simplified to parameters: the model's state at
/// the start of the horizon is its own trajectory (advanced window by window with the efficiencies then estimated),
/// the efficiencies are held constant over the horizon and moved by one Gauss-Newton step a window from the last
/// estimate (finite-difference sensitivities), with a weak prior at that estimate. Residuals are the window means of each stage's raffinate analyzer and of
/// the final extract's analyzer against the model's window means, with the analyzer's sigma and a model sigma added in
/// quadrature; the covariance is the inverse of the Gauss-Newton matrix, scaled up when the fit is worse than its
/// sigmas say (chi-square over its degrees of freedom above 1).</para>
/// <para>The simulated plant runs the same model at one-second steps with the true inputs, so against it the fit is
/// optimistic about model error; on a real unit the hold-ups of the plant file and the model sigma carry that.</para>
/// </remarks>
public sealed class DynamicEfficiencyTracker
{
    private const double Step = 0.02;
    private const int Iterations = 1;
    private const double Lowest = 0.05;

    private readonly UnitDescription _unit;
    private readonly int _n;
    private readonly int _horizon;
    private readonly int _substeps;
    private readonly double _substepSeconds;
    private readonly double _modelSigma;
    private readonly double _priorSigma;
    private readonly bool _shared;
    private readonly List<TrackerWindow> _windows = [];
    private readonly double[] _theta;
    private readonly UnitInputs _inputs;
    private UnitDynamics? _anchor;
    private UnitDynamics? _work;
    private double[][] _predicted = [];
    private double[] _predictedExtract = [];

    /// <summary>Creates a tracker for one mixer-settler unit.</summary>
    /// <param name="unit">The unit (stages, hold-ups, equilibrium, arrangement).</param>
    /// <param name="windowLength">Length of one balance window.</param>
    /// <param name="horizonWindows">Windows the fit looks back over; at least 1.</param>
    /// <param name="modelSigma">Model error of a window-mean solute fraction, added to each analyzer's sigma in quadrature; at least 0.</param>
    /// <param name="priorSigma">Sigma of the prior at the last estimate (how far one window may move an efficiency); above 0.</param>
    /// <exception cref="ArgumentOutOfRangeException">A setting is out of range.</exception>
    /// <param name="shared">One efficiency for every stage (a column's theoretical stages, which have no streams of their own to measure).</param>
    public DynamicEfficiencyTracker(UnitDescription unit, TimeSpan windowLength, int horizonWindows = 2, double modelSigma = 3e-4, double priorSigma = 0.15, bool shared = false)
    {
        ArgumentNullException.ThrowIfNull(unit);
        ArgumentOutOfRangeException.ThrowIfLessThan(horizonWindows, 1);
        ArgumentOutOfRangeException.ThrowIfNegative(modelSigma);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(priorSigma);
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(windowLength, TimeSpan.Zero);
        _unit = unit;
        _n = unit.Stages;
        _horizon = horizonWindows;
        _modelSigma = modelSigma;
        _priorSigma = priorSigma;
        _shared = shared;

        // Steps of at most 6 minutes, a fifth of the demo train's mixer time constant (a choice of ours): against the
        // simulated train at 5 s steps its errors were those of 3-minute steps (measured with its tests), at half the cost.
        _substeps = Math.Max(1, (int)Math.Ceiling(windowLength.TotalSeconds / 360));
        _substepSeconds = windowLength.TotalSeconds / _substeps;
        _theta = [.. unit.Nominal.Efficiencies];
        _inputs = new UnitInputs(_n);
    }

    /// <summary>True once a steady window has given the model its starting state.</summary>
    public bool Anchored => _anchor is not null;

    /// <summary>The current efficiency per stage (the last fit, or the last steady window's).</summary>
    public IReadOnlyList<double> Efficiencies => _theta;

    /// <summary>Forgets the state: the next steady window starts the model again.</summary>
    public void Reset()
    {
        _anchor = null;
        _windows.Clear();
    }

    /// <summary>
    /// Adds a window the steady-state estimate has judged: its efficiencies (clamped to (0, 1]) become the current ones,
    /// without a fit. The first such window starts the model at the steady state of its inputs.
    /// </summary>
    /// <exception cref="CascadeException">The first window's operating point cannot be solved.</exception>
    public void AddSteady(TrackerWindow window, IReadOnlyList<double> efficiencies)
    {
        ArgumentNullException.ThrowIfNull(window);
        ArgumentNullException.ThrowIfNull(efficiencies);
        for (int k = 0; k < _n; k++)
        {
            _theta[k] = Math.Clamp(efficiencies[k], Lowest, 1);
        }

        if (_anchor is null)
        {
            Fill(window, _theta);
            _anchor = new UnitDynamics(_unit, _inputs);
            _work = new UnitDynamics(_unit, _inputs);
            _windows.Clear();
            return;
        }

        try
        {
            Push(window);
        }
        catch (Exception e) when (e is SimulationException or CascadeException or EquilibriumException or ArithmeticException)
        {
            Reset();
        }
    }

    /// <summary>
    /// Adds a window that is not steady and fits the efficiencies over the horizon; null before the model has a
    /// starting state, or when the model cannot follow the inputs (it then starts again at the next steady window).
    /// </summary>
    public DynamicFit? Add(TrackerWindow window)
    {
        ArgumentNullException.ThrowIfNull(window);
        if (_anchor is null)
        {
            return null;
        }

        try
        {
            Push(window);
            return Fit();
        }
        catch (Exception e) when (e is SimulationException or CascadeException or EquilibriumException or ArithmeticException)
        {
            Reset();
            return null;
        }
    }

    private void Push(TrackerWindow window)
    {
        _windows.Add(window);
        if (_windows.Count > _horizon)
        {
            // The oldest window leaves the horizon: the starting state moves on through it with today's efficiencies.
            Run(_anchor!, _windows[0], _theta, null, 0);
            _windows.RemoveAt(0);
        }
    }

    private DynamicFit? Fit()
    {
        // The stages whose own raffinate is measured in the horizon are fitted; the others keep their efficiency. A
        // shared efficiency (a column's theoretical stages) is one parameter for every stage.
        var groups = new List<int[]>();
        if (_shared)
        {
            if (_windows.Any(w => w.ExtractSolute is not null || w.RaffinateSolute.Any(x => x is not null)))
            {
                groups.Add([.. Enumerable.Range(0, _n)]);
            }
        }
        else
        {
            for (int k = 0; k < _n; k++)
            {
                if (_windows.Any(w => w.RaffinateSolute[k] is not null))
                {
                    groups.Add([k]);
                }
            }
        }

        if (groups.Count == 0)
        {
            return null;
        }

        int[] fitted = [.. groups.Select(g => g[0])];

        int p = fitted.Length;
        double[] prior = [.. _theta];
        double[] theta = [.. _theta];
        double[] trial = new double[_n];
        var g = new double[p * p];
        var b = new double[p];
        for (int iteration = 0; iteration < Iterations; iteration++)
        {
            (double[] r0, double[] s0) = Residuals(theta);
            var jacobian = new double[p][];
            for (int j = 0; j < p; j++)
            {
                int k = fitted[j];
                theta.CopyTo(trial, 0);
                double h = theta[k] + Step <= 1 ? Step : -Step;
                foreach (int m in groups[j])
                {
                    trial[m] = theta[k] + h;
                }

                (double[] r1, _) = Residuals(trial);
                jacobian[j] = new double[r0.Length];
                for (int i = 0; i < r0.Length; i++)
                {
                    // Residual = measured - predicted, so d(predicted)/d(theta) = -(r1 - r0) / h.
                    jacobian[j][i] = -(r1[i] - r0[i]) / h;
                }
            }

            Array.Clear(g);
            for (int a = 0; a < p; a++)
            {
                b[a] = (prior[fitted[a]] - theta[fitted[a]]) / (_priorSigma * _priorSigma);
                for (int i = 0; i < r0.Length; i++)
                {
                    double w = 1 / (s0[i] * s0[i]);
                    b[a] += jacobian[a][i] * w * r0[i];
                    for (int c = 0; c <= a; c++)
                    {
                        g[(a * p) + c] += jacobian[a][i] * w * jacobian[c][i];
                    }
                }

                g[(a * p) + a] += 1 / (_priorSigma * _priorSigma);
            }

            for (int a = 0; a < p; a++)
            {
                for (int c = a + 1; c < p; c++)
                {
                    g[(a * p) + c] = g[(c * p) + a];
                }
            }

            if (!DenseCholesky.Factor(g, p))
            {
                return null;
            }

            DenseCholesky.Solve(g, p, b);
            for (int a = 0; a < p; a++)
            {
                double moved = Math.Clamp(theta[fitted[a]] + b[a], Lowest, 1);
                foreach (int m in groups[a])
                {
                    theta[m] = moved;
                }

            }
        }

        // The fit's chi-square at the answer; the sensitivities of the last step stand for those at the answer (the
        // efficiencies move little within one window, and the model is nearly linear in them over such a step).
        (double[] rf, double[] sf) = Residuals(theta);
        double chi = 0;
        for (int i = 0; i < rf.Length; i++)
        {
            chi += rf[i] * rf[i] / (sf[i] * sf[i]);
        }

        int residuals = rf.Length;
        // Covariance: the inverse of the last Gauss-Newton matrix, column by column from its factor.
        int dof = Math.Max(1, residuals - p);
        double scale = Math.Max(1, chi / dof);
        var estimates = new EstimatedValue?[_n];
        var unit = new double[p];
        for (int a = 0; a < p; a++)
        {
            Array.Clear(unit);
            unit[a] = 1;
            DenseCholesky.Solve(g, p, unit);
            foreach (int m in groups[a])
            {
                estimates[m] = new EstimatedValue(theta[m], Math.Sqrt(unit[a] * scale));
            }
        }

        theta.CopyTo(_theta, 0);
        return new DynamicFit(estimates, chi, dof, _windows.Count);
    }

    // Measured minus predicted window means over the horizon, with their sigmas.
    private (double[] Residuals, double[] Sigmas) Residuals(double[] theta)
    {
        if (_predicted.Length < _windows.Count)
        {
            _predicted = [.. Enumerable.Range(0, _horizon).Select(_ => new double[_n])];
            _predictedExtract = new double[_horizon];
        }

        _work!.CopyStateFrom(_anchor!);
        for (int w = 0; w < _windows.Count; w++)
        {
            Run(_work, _windows[w], theta, _predicted[w], w);
        }

        var r = new List<double>();
        var s = new List<double>();
        for (int w = 0; w < _windows.Count; w++)
        {
            TrackerWindow tw = _windows[w];
            for (int k = 0; k < _n; k++)
            {
                if (tw.RaffinateSolute[k] is EstimatedValue m)
                {
                    r.Add(m.Value - _predicted[w][k]);
                    s.Add(Math.Sqrt((m.Sigma * m.Sigma) + (_modelSigma * _modelSigma)));
                }
            }

            if (tw.ExtractSolute is EstimatedValue e)
            {
                r.Add(e.Value - _predictedExtract[w]);
                s.Add(Math.Sqrt((e.Sigma * e.Sigma) + (_modelSigma * _modelSigma)));
            }
        }

        return ([.. r], [.. s]);
    }

    // Runs the model through one window; with a target, the window means (trapezoidal over the steps) of each stage's
    // raffinate solute and of the final extract's.
    private void Run(UnitDynamics model, TrackerWindow window, double[] theta, double[]? raffinate, int w)
    {
        Fill(window, theta);
        if (raffinate is not null)
        {
            Array.Clear(raffinate);
            _predictedExtract[w] = 0;
        }

        for (int step = 0; step <= _substeps; step++)
        {
            model.Evaluate(_inputs);
            if (raffinate is not null)
            {
                double weight = (step == 0 || step == _substeps ? 0.5 : 1) / _substeps;
                for (int k = 0; k < _n; k++)
                {
                    raffinate[k] += weight * model.Raffinate(k + 1).Composition.Solute;
                }

                _predictedExtract[w] += weight * model.FinalExtract.Composition.Solute;
            }

            if (step < _substeps)
            {
                model.Advance(_substepSeconds);
            }
        }
    }

    private void Fill(TrackerWindow window, IReadOnlyList<double> theta)
    {
        _inputs.Feed = window.Feed;
        _inputs.Solvent = window.Solvent;
        _inputs.TemperatureKelvin = window.TemperatureKelvin;
        for (int k = 0; k < _n; k++)
        {
            _inputs.Efficiencies[k] = theta[k];
            _inputs.Entrainment[k] = 0;
            _inputs.Carried[k] = EntrainedPhase.Raffinate;
        }
    }
}

/// <summary>What the dynamic model sees of one balance window.</summary>
/// <param name="Feed">Reconciled feed (flow and fractions on the system's basis).</param>
/// <param name="Solvent">Reconciled solvent reaching the unit.</param>
/// <param name="TemperatureKelvin">Stage temperature.</param>
/// <param name="RaffinateSolute">Per stage, the window mean of its raffinate analyzer's solute fraction with its sigma; null where not measured.</param>
/// <param name="ExtractSolute">The final extract analyzer's window mean solute fraction, or null.</param>
public sealed record TrackerWindow(MaterialStream Feed, MaterialStream Solvent, double TemperatureKelvin, EstimatedValue?[] RaffinateSolute, EstimatedValue? ExtractSolute);

/// <summary>One fit of the efficiencies over the horizon.</summary>
/// <param name="Efficiencies">Per stage the fitted efficiency with its sigma; null for a stage not fitted.</param>
/// <param name="ChiSquare">Sum of squared normalised residuals.</param>
/// <param name="DegreesOfFreedom">Residuals less fitted efficiencies (at least 1).</param>
/// <param name="Windows">Windows in the horizon.</param>
public sealed record DynamicFit(EstimatedValue?[] Efficiencies, double ChiSquare, int DegreesOfFreedom, int Windows);
