using Tieflow.Core.Monitoring.Alerts;
using Tieflow.Core.Scenarios;

namespace Tieflow.Core.Monitoring.Evaluation;

/// <summary>
/// Judges a unit's alerts and soft sensor against the simulator's ground truth. A fault is detected by the first alert
/// raised between its start and its end plus a grace period (2 h) whose kind matches it: stage-efficiency by
/// efficiency-drift on that stage or on the unit; entrainment by entrainment on that stage or on the stage its stream
/// flows to; solvent-loss by solvent-loss; sensor and signal faults by suspect-instrument or signal-quality naming the
/// tag. An alert that detects no fault is false, except off-spec raised while the true raffinate is above spec and
/// lab-mismatch within the grace period of a lab sample that truly differs from the soft sensor by more than 3 sigma.
/// </summary>
public static class TruthEvaluator
{
    /// <summary>The grace period after a fault's end (and after a lab sample) within which an alert still counts.</summary>
    public static readonly TimeSpan Grace = TimeSpan.FromHours(2);

    /// <summary>Evaluates one unit.</summary>
    /// <param name="truth">The unit's ground truth.</param>
    /// <param name="summary">What the analysis saw.</param>
    /// <param name="raffinateSpec">The unit's raffinate solute spec.</param>
    /// <param name="stages">The unit's stage count.</param>
    /// <param name="runEnd">End of the run (for faults that last to the end).</param>
    public static EvaluationResult Evaluate(UnitTruth truth, UnitSummary summary, double raffinateSpec, int stages, DateTimeOffset runEnd)
    {
        ArgumentNullException.ThrowIfNull(truth);
        ArgumentNullException.ThrowIfNull(summary);
        var alerts = summary.Alerts.Where(a => a.Key.Kind != "alert-flood").OrderBy(a => a.Raised).ToList();
        var used = new HashSet<AlertEpisode>();
        var detections = new List<FaultDetection>();
        foreach (TruthFault f in truth.Faults)
        {
            DateTimeOffset until = (f.End ?? runEnd) + Grace;
            AlertEpisode? first = null;
            foreach (AlertEpisode a in alerts)
            {
                if (a.Raised >= f.Start && a.Raised <= until && Matches(f, a.Key, stages))
                {
                    first ??= a;
                    used.Add(a);
                }
            }

            detections.Add(new FaultDetection(f, first?.Raised, first?.Key.Kind));
        }

        var falseAlerts = new List<AlertEpisode>();
        foreach (AlertEpisode a in alerts)
        {
            if (used.Contains(a) || Excused(a, truth, summary, raffinateSpec))
            {
                continue;
            }

            falseAlerts.Add(a);
        }

        var efficiency = new List<double>();
        var theoretical = new List<double>();
        foreach (EfficiencyPoint p in summary.EfficiencyTrace)
        {
            if (SampleAt(truth, p.Time) is not { } s || p.Stage > s.StageEfficiency.Count)
            {
                continue;
            }

            efficiency.Add(p.Value - s.StageEfficiency[p.Stage - 1]);
            if (p.Stage == 1 && p.TheoreticalStages is double n && s.TheoreticalStages is double trueN)
            {
                theoretical.Add(n - trueN);
            }
        }

        return new EvaluationResult(detections, falseAlerts, Rmse(truth, summary))
        {
            Efficiency = EstimateError.Of(efficiency),
            TheoreticalStages = EstimateError.Of(theoretical),
        };
    }

    /// <summary>Whether an alert's kind and subject match a fault.</summary>
    public static bool Matches(TruthFault fault, AlertKey key, int stages)
    {
        ArgumentNullException.ThrowIfNull(fault);
        return fault.Kind switch
        {
            FaultKind.StageEfficiency => key.Kind == "efficiency-drift" && (key.Stage is null || fault.Stage is null || key.Stage == fault.Stage),
            FaultKind.Entrainment => key.Kind == "entrainment" && (fault.Stage is null || key.Stage is null || Math.Abs(key.Stage.Value - fault.Stage.Value) <= 1),
            FaultKind.SolventLoss => key.Kind == "solvent-loss",
            _ => (key.Kind is "suspect-instrument" or "signal-quality") && key.Tag == fault.Tag,
        };
    }

    private static bool Excused(AlertEpisode a, UnitTruth truth, UnitSummary summary, double spec)
    {
        if (a.Key.Kind == "off-spec")
        {
            TruthSample? at = SampleAt(truth, a.Raised);
            return at is not null && at.RaffinateSolute > spec;
        }

        if (a.Key.Kind == "lab-mismatch")
        {
            foreach (LabComparison lab in summary.LabComparisons)
            {
                if (a.Raised >= lab.Sampled && a.Raised <= lab.Reported + Grace && SampleAt(truth, lab.Sampled) is { } t
                    && Math.Abs(t.RaffinateSolute - lab.Predicted) > 3 * lab.Sigma)
                {
                    return true;
                }
            }
        }

        return false;
    }

    private static TruthSample? SampleAt(UnitTruth truth, DateTimeOffset time)
    {
        TruthSample? best = null;
        foreach (TruthSample s in truth.Samples)
        {
            if (s.Time > time)
            {
                break;
            }

            best = s;
        }

        return best;
    }

    private static double Rmse(UnitTruth truth, UnitSummary summary)
    {
        IReadOnlyList<(DateTimeOffset Time, double Value)> trace = summary.SoftSensorTrace;
        if (trace.Count == 0)
        {
            return double.NaN;
        }

        double sum = 0;
        int n = 0, j = -1;
        foreach (TruthSample s in truth.Samples)
        {
            while (j + 1 < trace.Count && trace[j + 1].Time <= s.Time)
            {
                j++;
            }

            if (j < 0)
            {
                continue;
            }

            double d = trace[j].Value - s.RaffinateSolute;
            sum += d * d;
            n++;
        }

        return n == 0 ? double.NaN : Math.Sqrt(sum / n);
    }
}
