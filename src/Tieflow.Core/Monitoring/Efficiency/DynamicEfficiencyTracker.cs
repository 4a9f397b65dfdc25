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
    private UnitDynamics? _afterFirst;
    private double[][] _predicted = [];
    private double[] _predictedExtract = [];

    // The last fit's final run, kept for the next window (see Residuals): the windows it covered, its efficiencies,
    // and whether _work and _predicted still hold its state and window means.
    private readonly List<TrackerWindow> _finalWindows = [];
    private readonly double[] _finalTheta;
    private bool _finalKept;

    // Each stage's extract solute fraction before and after every split of the base run and of the final run, per
    // window and step of the horizon: where the splits of a run with nearby efficiencies will land.
    private readonly double[] _baseBefore;
    private readonly double[] _baseAfter;
    private readonly double[] _finalBefore;
    private readonly double[] _finalAfter;

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
        _finalTheta = new double[_n];
        _inputs = new UnitInputs(_n);
        int trajectory = _horizon * (_substeps + 1) * _n;
        _baseBefore = new double[trajectory];
        _baseAfter = new double[trajectory];
        _finalBefore = new double[trajectory];
        _finalAfter = new double[trajectory];
    }

    // The runs of one fit: the base run at the current efficiencies, one with each efficiency moved (finite
    // differences), the final run at the answer; and the anchor's move through a window leaving the horizon.
    private enum Pass
    {
        Advance,
        Base,
        Perturbed,
        Final,
    }

    /// <summary>
    /// True (the default): each fit takes over from the last fit's final run what the window the horizon moved by
    /// leaves unchanged (the anchor's move through the window that left, and the base run through the windows both
    /// horizons share), and starts every split of the other runs from where the base run's split landed, moved by
    /// the difference at the step before. The answers are the same within the splitter's tolerance (about 1e-13 in
    /// each extract solute fraction); false runs every pass in full from the anchor, for the tests that say so.
    /// </summary>
    internal bool ReuseRuns { get; init; } = true;

    /// <summary>True once a steady window has given the model its starting state.</summary>
    public bool Anchored => _anchor is not null;

    /// <summary>The current efficiency per stage (the last fit, or the last steady window's).</summary>
    public IReadOnlyList<double> Efficiencies => _theta;

    /// <summary>Forgets the state: the next steady window starts the model again.</summary>
    public void Reset()
    {
        _anchor = null;
        _windows.Clear();
        _finalKept = false;
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
            _afterFirst = new UnitDynamics(_unit, _inputs);
            _windows.Clear();
            _finalKept = false;
            return;
        }

        try
        {
            Push(window);
            _finalKept = false;
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
            // The oldest window leaves the horizon: the starting state moves on through it with today's efficiencies,
            // which the last fit's final run has done already when it began with that window at these efficiencies.
            if (_finalKept && ReferenceEquals(_finalWindows[0], _windows[0]) && _finalTheta.AsSpan().SequenceEqual(_theta))
            {
                _anchor!.CopyStateFrom(_afterFirst!);
            }
            else
            {
                Run(_anchor!, 0, _theta, Pass.Advance);
            }

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
            (double[] r0, double[] s0) = Residuals(theta, iteration == 0 ? Pass.Base : Pass.Perturbed);
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

                (double[] r1, _) = Residuals(trial, Pass.Perturbed);
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
        (double[] rf, double[] sf) = Residuals(theta, Pass.Final);
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
    private (double[] Residuals, double[] Sigmas) Residuals(double[] theta, Pass pass)
    {
        if (_predicted.Length < _windows.Count)
        {
            _predicted = [.. Enumerable.Range(0, _horizon).Select(_ => new double[_n])];
            _predictedExtract = new double[_horizon];
        }

        int from = 0;
        if (pass == Pass.Base && FinalRunCovers(theta) is int offset)
        {
            // The last fit's final run went through the windows this horizon shares with it, from the same starting
            // state (the anchor has moved through the window that left with these efficiencies since) and at these
            // efficiencies: its window means stand, and _work holds its state at their end. Only the new window runs.
            // Nothing has written _predicted or _work since that run.
            int stride = (_substeps + 1) * _n;
            for (int w = 0; w < _windows.Count - 1; w++)
            {
                _predicted[w + offset].CopyTo(_predicted[w], 0);
                _predictedExtract[w] = _predictedExtract[w + offset];
            }

            Array.Copy(_finalBefore, offset * stride, _baseBefore, 0, (_windows.Count - 1) * stride);
            Array.Copy(_finalAfter, offset * stride, _baseAfter, 0, (_windows.Count - 1) * stride);
            from = _windows.Count - 1;
        }
        else
        {
            _work!.CopyStateFrom(_anchor!);
        }

        _finalKept = false;
        for (int w = from; w < _windows.Count; w++)
        {
            Run(_work!, w, theta, pass);
        }

        if (pass == Pass.Final && ReuseRuns)
        {
            _finalWindows.Clear();
            _finalWindows.AddRange(_windows);
            theta.CopyTo(_finalTheta, 0);
            _finalKept = true;
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

    // The offset of this horizon's windows in the last fit's final run (0, or 1 when the horizon has moved on by a
    // window) when that run covered every window but the newest at these efficiencies; otherwise null.
    private int? FinalRunCovers(double[] theta)
    {
        int shared = _windows.Count - 1;
        int offset = _finalWindows.Count - shared;
        if (!_finalKept || offset < 0 || !_finalTheta.AsSpan().SequenceEqual(theta))
        {
            return null;
        }

        for (int w = 0; w < shared; w++)
        {
            if (!ReferenceEquals(_finalWindows[w + offset], _windows[w]))
            {
                return null;
            }
        }

        return offset;
    }

    // Runs the model through window w of the horizon; except on the anchor's advance, the window means (trapezoidal over
    // the steps) of each stage's raffinate solute and of the final extract's. The base and final runs keep where their
    // splits start and land; the perturbed and final runs start theirs from the base run's (see ReuseRuns).
    private void Run(UnitDynamics model, int w, double[] theta, Pass pass)
    {
        Fill(_windows[w], theta);
        double[]? raffinate = pass == Pass.Advance ? null : _predicted[w];
        if (raffinate is not null)
        {
            Array.Clear(raffinate);
            _predictedExtract[w] = 0;
        }

        bool reuse = ReuseRuns;
        bool predict = reuse && (pass is Pass.Perturbed or Pass.Final);
        (double[]? before, double[]? after) = !reuse ? (null, null) : pass switch
        {
            Pass.Base => (_baseBefore, _baseAfter),
            Pass.Final => (_finalBefore, _finalAfter),
            _ => (null, null),
        };
        Span<double> starts = model.SplitStarts;
        for (int step = 0; step <= _substeps; step++)
        {
            int at = ((w * (_substeps + 1)) + step) * _n;
            if (before is not null)
            {
                starts.CopyTo(before.AsSpan(at, _n));
            }

            if (predict)
            {
                for (int k = 0; k < _n; k++)
                {
                    starts[k] = _baseAfter[at + k] + (starts[k] - _baseBefore[at + k]);
                }
            }

            model.Evaluate(_inputs);
            if (after is not null)
            {
                starts.CopyTo(after.AsSpan(at, _n));
            }

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

        if (pass == Pass.Final && w == 0 && reuse)
        {
            _afterFirst!.CopyStateFrom(model);
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
