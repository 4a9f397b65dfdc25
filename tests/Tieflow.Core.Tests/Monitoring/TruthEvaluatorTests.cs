using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Alerts;
using Tieflow.Core.Monitoring.Evaluation;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Scenarios;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class TruthEvaluatorTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
    private static readonly Dictionary<string, double> NoEvidence = [];

    [Fact]
    public void FirstMatchingAlertInTheWindowDetects_OthersAreFalse()
    {
        var truth = new UnitTruth(
            [
                new TruthFault(FaultKind.SensorBias, null, "FI-301", T0.AddHours(8), null),
                new TruthFault(FaultKind.StageEfficiency, 3, null, T0.AddHours(10), null),
                new TruthFault(FaultKind.Entrainment, 2, null, T0.AddHours(20), T0.AddHours(24)),
            ],
            [.. Enumerable.Range(0, 48 * 60).Select(m => new TruthSample(T0.AddMinutes(m), [0.9, 0.9, 0.9, 0.9], 0.08, [0, 0, 0, 0], 0, null))]);
        AlertEpisode[] alerts =
        [
            Alert("suspect-instrument", null, "FI-302", 9),          // wrong tag: false
            Alert("suspect-instrument", null, "FI-301", 9.5),        // detects the bias, delay 1.5 h
            Alert("signal-quality", null, "FI-301", 10),             // also matches the bias: not false
            Alert("efficiency-drift", 2, null, 11),                  // wrong stage: false
            Alert("efficiency-drift", 3, null, 11.5),                // detects the efficiency fault
            Alert("entrainment", 2, null, 27),                       // more than 2 h after the end: false
            Alert("off-spec", null, null, 30),                       // the true raffinate is on spec: false
        ];
        var summary = new UnitSummary
        {
            Unit = "X300",
            Stages = [],
            Overall = (0, 0, 0, null),
            Alerts = alerts,
            SoftSensor = ("raffinate-acetone", 0.08),
            LabComparisons = [],
            SoftSensorTrace = [(T0.AddHours(1), 0.081), (T0.AddHours(2), 0.079)],
        };

        EvaluationResult r = TruthEvaluator.Evaluate(truth, summary, raffinateSpec: 0.085, stages: 4, runEnd: T0.AddDays(2));

        Assert.Equal(TimeSpan.FromHours(1.5), r.Faults[0].Delay);
        Assert.Equal("suspect-instrument", r.Faults[0].AlertKind);
        Assert.Equal(TimeSpan.FromHours(1.5), r.Faults[1].Delay);
        Assert.Null(r.Faults[2].Detected);
        Assert.Equal(["suspect-instrument", "efficiency-drift", "entrainment", "off-spec"], r.FalseAlerts.Select(a => a.Key.Kind).ToArray());
        Assert.Equal(4, r.FalseAlerts.Count);
        Assert.Equal(0.001, r.SoftSensorRmseVsTruth, 1e-9);
    }

    private static AlertEpisode Alert(string kind, int? stage, string? tag, double hours) =>
        new(new AlertKey(kind, stage, tag), AlertSeverity.Medium, T0.AddHours(hours), null, kind, NoEvidence);
}
