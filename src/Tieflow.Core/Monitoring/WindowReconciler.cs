using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Monitoring.Efficiency;
using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// Reconciles one window of a unit against its stage balances, with the phase envelope as a condition on every stream
/// that leaves a settler as one saturated phase. A saturated phase has one compositional degree of freedom: its minor
/// component (the solvent in a raffinate, the diluent in an extract) follows from its solute by the binodal. The
/// reconciliation engine takes measurements only, so the condition enters as a pseudo-measurement of the minor
/// component at the binodal value of the current solute estimate, with the model's own uncertainty as its sigma, and the
/// reconciliation is repeated until those values stop moving: at the fixed point every such stream lies on the binodal
/// within that uncertainty, and the redundancy is that of the constrained network (one condition per stream). Fresh
/// solvent and feed carry their nominal minor fractions the same way. Streams whose measured composition lies inside the
/// two-phase region (entrainment) are left free.
/// </summary>
public sealed class WindowReconciler
{
    private readonly UnitModel _model;
    private readonly WindowReconcilerSettings _settings;

    // The window's layouts (which quantities are measured, which were eliminated) recur: prepared once, kept.
    private readonly SerialEliminationReconciler _reconciler;

    // The nominal cascade starts the solute of a saturated stream that no analyzer measures; solved once per unit.
    private readonly CascadeResult _nominal;

    /// <summary>Creates a reconciler for a unit.</summary>
    /// <param name="model">The unit model.</param>
    /// <param name="settings">Settings; defaults when null.</param>
    public WindowReconciler(UnitModel model, WindowReconcilerSettings? settings = null)
    {
        _model = model ?? throw new ArgumentNullException(nameof(model));
        _settings = settings ?? new WindowReconcilerSettings();
        _reconciler = new SerialEliminationReconciler(model.Network, new ReconciliationOptions { Significance = _settings.Significance });
        UnitDescription unit = model.Unit;
        _nominal = new CascadeSolver(unit.Equilibrium, unit.Nominal.TemperatureKelvin).Solve(unit.Arrangement, unit.Nominal.Feed, unit.Nominal.Solvent, unit.Nominal.Efficiencies);
    }

    /// <summary>Reconciles a window.</summary>
    /// <param name="measurements">The window's averages (failed tags already left out).</param>
    /// <param name="temperatureKelvin">The unit's temperature in the window.</param>
    /// <param name="entrainedStreams">Stream ids whose measured composition says they carry the other phase: no envelope condition on them.</param>
    /// <param name="raffinateSlopes">Per stage (index stage - 1) the trend dx/dt of the raffinate leaving it with its sigma,
    /// fraction per hour, or null: the stages' hold-ups then enter the balances with their accumulation
    /// (<see cref="HoldupAccumulation"/>), and the slope's sigma widens the efficiencies' sigma.</param>
    /// <param name="steady">Whether the steady-state gate passed the window. A window that is still settling is reconciled
    /// once with every instrument kept: its balances hold only as well as the estimated accumulation, so a failed global
    /// test there says the unit is moving, not that one instrument is wrong, and no suspect is named. Its estimates'
    /// sigmas are then scaled by the Birge ratio, max(1, sqrt(chi-square / degrees of freedom)), which makes the scatter
    /// of the adjustments consistent with the sigmas (R. T. Birge, "The calculation of errors by the method of least
    /// squares", Phys. Rev. 40 (1932) 207-227; from memory).</param>
    /// <param name="excludedTags">Tags left out of the balances (instruments already found suspect). Each is tested
    /// against the estimate of its quantity from the others (<see cref="WindowReconciliation.ExcludedTests"/>); one
    /// without which its quantity cannot be estimated is kept in (<see cref="WindowReconciliation.KeptTags"/>).</param>
    /// <exception cref="ReconciliationException">When the reconciliation does not converge.</exception>
    public WindowReconciliation Reconcile(IReadOnlyList<WindowMeasurement> measurements, double temperatureKelvin, IReadOnlySet<string>? entrainedStreams = null, IReadOnlyList<(double Slope, double Sigma)?>? raffinateSlopes = null, bool steady = true, IReadOnlySet<string>? excludedTags = null)
    {
        ArgumentNullException.ThrowIfNull(measurements);
        if (excludedTags is null || excludedTags.Count == 0 || !measurements.Any(m => excludedTags.Contains(m.Tag)))
        {
            return ReconcileAll(measurements, temperatureKelvin, entrainedStreams, raffinateSlopes, steady);
        }

        var kept = new List<WindowMeasurement>(measurements.Count);
        var excluded = new List<WindowMeasurement>();
        foreach (WindowMeasurement m in measurements)
        {
            (excludedTags.Contains(m.Tag) ? excluded : kept).Add(m);
        }

        WindowReconciliation result = ReconcileAll(kept, temperatureKelvin, entrainedStreams, raffinateSlopes, steady);

        // An instrument without which its quantity is not observable cannot be judged by the others: it goes back in.
        List<WindowMeasurement> putBack = [.. excluded.Where(m => !result.Report.Final[m.Key].HasValue)];
        if (putBack.Count > 0)
        {
            kept.AddRange(putBack);
            excluded.RemoveAll(putBack.Contains);
            result = ReconcileAll(kept, temperatureKelvin, entrainedStreams, raffinateSlopes, steady);
        }

        // The test of a deleted measurement: its reading against the estimate from the rest, whose error is independent
        // of the reading's, so the difference has the variance sigma_m^2 + sigma_estimate^2. Two-sided, Sidak over the
        // excluded instruments (as the measurement test of the engine).
        var tests = new List<ExcludedMeasurementTest>(excluded.Count);
        if (excluded.Count > 0)
        {
            double critical = GrossErrorTests.SidakCritical(excluded.Count, _settings.Significance);
            foreach (WindowMeasurement m in excluded)
            {
                QuantityEstimate estimate = result.Report.Final[m.Key];
                double sigma = Math.Sqrt((m.Sigma * m.Sigma) + (estimate.Sigma * estimate.Sigma));
                tests.Add(new ExcludedMeasurementTest(m.Tag, m.Key, m.Value, estimate.Value, sigma, (m.Value - estimate.Value) / sigma, critical));
            }
        }

        return result with { ExcludedTests = tests, KeptTags = [.. putBack.Select(m => m.Tag)] };
    }

    private WindowReconciliation ReconcileAll(IReadOnlyList<WindowMeasurement> measurements, double temperatureKelvin, IReadOnlySet<string>? entrainedStreams, IReadOnlyList<(double Slope, double Sigma)?>? raffinateSlopes, bool steady)
    {
        UnitDescription unit = _model.Unit;
        IPhaseEquilibrium eq = unit.Equilibrium;
        string solute = _model.ComponentIds[0], diluent = _model.ComponentIds[1], solvent = _model.ComponentIds[2];
        var byKey = new Dictionary<QuantityKey, WindowMeasurement>();
        foreach (WindowMeasurement m in measurements)
        {
            byKey[m.Key] = m;
        }

        // The envelope condition applies to every saturated stream not flagged as entrained.
        var saturated = new List<(string Id, StreamPhase Phase)>();
        foreach (UnitStream s in _model.Streams)
        {
            string id = _model.StreamId(s);
            if (UnitModel.IsSaturatedPhase(s) && (entrainedStreams is null || !entrainedStreams.Contains(id)))
            {
                saturated.Add((id, s.Phase));
            }
        }

        // Start every saturated stream's solute at its measurement or at the nominal cascade.
        var soluteGuess = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach ((string id, StreamPhase phase) in saturated)
        {
            soluteGuess[id] = byKey.TryGetValue(QuantityKey.FractionOf(id, solute), out WindowMeasurement? m)
                ? m.Value
                : NominalSolute(_nominal, id, phase);
        }

        var fixedMeasurements = new List<Measurement>(measurements.Count + 6);
        foreach (WindowMeasurement m in measurements)
        {
            fixedMeasurements.Add(new Measurement(m.Key, m.Value, m.Sigma));
        }

        // Fresh solvent and feed: their minor fractions as known from the nominal operation.
        AddKnown(fixedMeasurements, byKey, "solvent", unit.Nominal.Solvent.Composition, [ComponentRole.Solute, ComponentRole.Diluent]);
        AddKnown(fixedMeasurements, byKey, "feed", unit.Nominal.Feed.Composition, [ComponentRole.Solvent]);

        IReadOnlyList<NodeAccumulation>? accumulation = null;

        // Per stage the sigma of its solute accumulation (linear in the slope, so the slope's relative sigma).
        var accumulationSigma = new double[unit.Stages];
        if (raffinateSlopes is not null)
        {
            var raffinateSolute = new double?[unit.Stages];
            for (int k = 1; k <= unit.Stages; k++)
            {
                raffinateSolute[k - 1] = byKey.TryGetValue(QuantityKey.FractionOf(_model.StreamId(UnitStream.RaffinateOf(k)), solute), out WindowMeasurement? m) ? m.Value : null;
            }

            var soluteRate = new double[unit.Stages];
            accumulation = HoldupAccumulation.Estimate(_model, _nominal, temperatureKelvin, raffinateSolute, [.. raffinateSlopes.Select(t => t?.Slope)], soluteRate);
            for (int k = 1; k <= unit.Stages; k++)
            {
                if (raffinateSlopes[k - 1] is (double slope, double sigma) && slope != 0)
                {
                    accumulationSigma[k - 1] = Math.Abs(soluteRate[k - 1] * sigma / slope);
                }
            }
        }

        ReconciliationReport? report = null;
        int iteration = 0;
        double previousMoved = double.PositiveInfinity;
        IReadOnlyList<QuantityKey>? previousSuspects = null;
        var all = new List<Measurement>(fixedMeasurements.Count + saturated.Count);
        for (; iteration < _settings.MaxEnvelopeIterations; iteration++)
        {
            all.Clear();
            all.AddRange(fixedMeasurements);
            foreach ((string id, StreamPhase phase) in saturated)
            {
                double x = soluteGuess[id];
                (string minor, double value) = phase == StreamPhase.Raffinate
                    ? (solvent, RaffinateBranch(eq, x, temperatureKelvin).Solvent)
                    : (diluent, ExtractBranch(eq, x, temperatureKelvin).Diluent);

                // Where an analyzer measures the minor component itself (a water analyzer on the extract), its reading
                // stands in for the envelope condition: the stream was found saturated by the entrainment check.
                if (!byKey.ContainsKey(QuantityKey.FractionOf(id, minor)))
                {
                    all.Add(Measurement.Fraction(id, minor, value, _settings.EnvelopeSigma));
                }
            }

            report = _reconciler.Reconcile(all, accumulation, eliminate: steady);
            double moved = 0;
            foreach ((string id, _) in saturated)
            {
                QuantityEstimate est = report.Final.Fraction(id, solute);
                if (est.HasValue)
                {
                    moved = Math.Max(moved, Math.Abs(est.Value - soluteGuess[id]));
                    soluteGuess[id] = Math.Clamp(est.Value, 0, 1);
                }
            }

            if (moved < _settings.EnvelopeTolerance)
            {
                iteration++;
                break;
            }

            // The iteration contracts fast (a factor of some hundreds a step near the fixed point): once a step has
            // contracted tenfold with the same suspects as the one before, the next move is about moved^2 / previous,
            // and when that is below the tolerance the confirming reconciliation is left out.
            bool sameSuspects = previousSuspects is not null && previousSuspects.SequenceEqual(report.Suspects);
            if (sameSuspects && moved < previousMoved / 10 && moved * moved / previousMoved < _settings.EnvelopeTolerance)
            {
                iteration++;
                break;
            }

            previousMoved = moved;
            previousSuspects = report.Suspects;
        }

        double sigmaScale = 1;
        if (!steady && report!.Final.GlobalTest is { DegreesOfFreedom: > 0 } test && test.Statistic > test.DegreesOfFreedom)
        {
            sigmaScale = Math.Sqrt(test.Statistic / test.DegreesOfFreedom);
            report = report with { Final = Scaled(report.Final, sigmaScale) };
        }

        var efficiencies = new List<StageEfficiency>(unit.Stages);
        for (int k = 1; k <= unit.Stages; k++)
        {
            efficiencies.Add(EstimateStage(report!.Final, k, temperatureKelvin, solute, accumulationSigma));
        }

        var suspectTags = new List<string>();
        foreach (QuantityKey key in report!.Suspects)
        {
            if (byKey.TryGetValue(key, out WindowMeasurement? m))
            {
                suspectTags.Add(m.Tag);
            }
        }

        return new WindowReconciliation(report, efficiencies, suspectTags, iteration, [.. saturated.Select(s => s.Id)], accumulation ?? []) { SigmaScale = sigmaScale };
    }

    private static ReconciliationResult Scaled(ReconciliationResult r, double factor)
    {
        var estimates = new QuantityEstimate[r.Estimates.Count];
        for (int i = 0; i < estimates.Length; i++)
        {
            estimates[i] = r.Estimates[i] with { Sigma = r.Estimates[i].Sigma * factor };
        }

        return r with { Estimates = estimates };
    }

    /// <summary>The raffinate-branch point with solute fraction x.</summary>
    public static Ternary RaffinateBranch(IPhaseEquilibrium model, double x, double temperatureKelvin)
    {
        ArgumentNullException.ThrowIfNull(model);
        double max = model.SoluteLimits(temperatureKelvin).Raffinate;
        return model.TieLineFromRaffinate(Math.Clamp(x, 0, max), temperatureKelvin).Raffinate;
    }

    /// <summary>The extract-branch point with solute fraction y.</summary>
    public static Ternary ExtractBranch(IPhaseEquilibrium model, double y, double temperatureKelvin)
    {
        ArgumentNullException.ThrowIfNull(model);
        double max = model.SoluteLimits(temperatureKelvin).Extract;
        return model.TieLineFromExtract(Math.Clamp(y, 0, max), temperatureKelvin).Extract;
    }

    private StageEfficiency EstimateStage(ReconciliationResult r, int stage, double temperatureKelvin, string solute, double[] accumulationSigma)
    {
        string inlet = stage == 1 ? "feed" : _model.StreamId(UnitStream.RaffinateOf(stage - 1));
        QuantityEstimate xIn = r.Fraction(inlet, solute);
        QuantityEstimate xOut = r.Fraction(_model.StreamId(UnitStream.RaffinateOf(stage)), solute);
        QuantityEstimate yOut = r.Fraction(_model.StreamId(UnitStream.ExtractOf(stage)), solute);
        if (!xIn.HasValue || !xOut.HasValue || !yOut.HasValue)
        {
            return StageEfficiency.NotObservable(stage);
        }

        // The engine gives each estimate's sigma, not the covariance between estimates: the delta method here takes them
        // as independent, which overstates the sigma where a balance ties x_in, x_out and y together.
        // The accumulation is held as known in the balances; its uncertainty reaches the leaving extract through the
        // balance of the stages whose extract it collects (this one and those after it, counter-current): delta method.
        double accumulationVariance = 0;
        int last = _model.Unit.Arrangement == CascadeArrangement.Countercurrent ? _model.Unit.Stages : stage;
        for (int j = stage; j <= last; j++)
        {
            accumulationVariance += accumulationSigma[j - 1] * accumulationSigma[j - 1];
        }

        QuantityEstimate extractFlow = r.Flow(_model.StreamId(UnitStream.ExtractOf(stage)));
        double yVariance = (yOut.Sigma * yOut.Sigma) + (extractFlow.HasValue && extractFlow.Value > 0 ? accumulationVariance / (extractFlow.Value * extractFlow.Value) : 0);
        Span<double> cov = [xIn.Sigma * xIn.Sigma, 0, 0, 0, xOut.Sigma * xOut.Sigma, 0, 0, 0, yVariance];
        return StageEfficiencyEstimator.Estimate(_model.Unit.Equilibrium, temperatureKelvin, stage, xIn.Value, xOut.Value, yOut.Value, cov, _settings.NotDeterminableSigma);
    }

    private static double NominalSolute(CascadeResult nominal, string id, StreamPhase phase)
    {
        foreach (StageResult s in nominal.Stages)
        {
            if (phase == StreamPhase.Raffinate && id == (s.Stage == nominal.Stages.Count ? "raffinate" : $"raffinate-{s.Stage}"))
            {
                return s.Raffinate.Composition.Solute;
            }

            if (phase == StreamPhase.Extract && (id == $"extract-{s.Stage}" || (id == "extract" && s.Stage == 1)))
            {
                return s.Extract.Composition.Solute;
            }
        }

        return phase == StreamPhase.Raffinate ? nominal.Raffinate.Composition.Solute : nominal.Extract.Composition.Solute;
    }

    private void AddKnown(List<Measurement> list, Dictionary<QuantityKey, WindowMeasurement> measured, string stream, Ternary composition, ComponentRole[] roles)
    {
        foreach (ComponentRole role in roles)
        {
            QuantityKey key = QuantityKey.FractionOf(stream, _model.ComponentIds[(int)role]);
            if (!measured.ContainsKey(key))
            {
                list.Add(new Measurement(key, composition[role], _settings.KnownCompositionSigma));
            }
        }
    }
}
