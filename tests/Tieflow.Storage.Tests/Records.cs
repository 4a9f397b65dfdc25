using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Storage.Tests;

/// <summary>Records of the demo scenario's train X300 at the Brackenmoor site (invented data for tests).</summary>
internal static class Records
{
    public const string Site = "Brackenmoor";

    public static readonly DateTimeOffset Start = new(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);

    public static StreamRecord Stream(DateTimeOffset time, string stream = "raffinate-4", double flow = 1180.5) =>
        new("X300", time, stream, new EstimatedValue(flow, 6.2), new Dictionary<string, EstimatedValue>
        {
            ["water"] = new(0.95, 0.002),
            ["acetone"] = new(0.021, 0.0004),
            ["tce"] = new(0.029, 0.001),
        });

    public static StageRecord Stage(DateTimeOffset time, int stage = 2, double efficiency = 0.88) =>
        new("X300", time, stage, new EstimatedValue(efficiency, 0.03), 0.004, 298.4);

    public static UnitRecord Unit(DateTimeOffset time, bool steady = true) =>
        new("X300", time, 7.9, 12.59, steady, 3.1, 0.4, null);

    public static SoftSensorRecord Sensor(DateTimeOffset time, double value = 0.0208) =>
        new("X300", time, "raffinate-acetone", value, 0.0006, -0.0002);

    public static AlertRecord Alert(DateTimeOffset time, bool active = true, int? stage = 3) =>
        new("X300", time, "efficiency-drift", AlertSeverity.Medium, stage, null, active,
            "Stage 3 efficiency 0.61 \u00b1 0.04 is below 0.75 for 00:30:00",
            new Dictionary<string, double> { ["value"] = 0.61, ["threshold"] = 0.75 });

    public static SignalRecord Signal(DateTimeOffset time, string tag = "FI-301", double value = 1500.25, SignalQuality quality = SignalQuality.Good) =>
        new("X300", time, tag, value, quality);

    /// <summary>A mixed stream of records as a monitor writes them: per minute a window's analysis records and signal samples per second.</summary>
    public static List<MonitorRecord> Mixed(int count, DateTimeOffset? start = null, int seed = 7) => MixedSequence(start, seed).Take(count).ToList();

    /// <summary>The records of <see cref="Mixed"/> made one at a time, without end: the first n are <c>Mixed(n)</c> of the same start and seed.</summary>
    public static IEnumerable<MonitorRecord> MixedSequence(DateTimeOffset? start = null, int seed = 7)
    {
        var random = new Random(seed);
        DateTimeOffset t0 = start ?? Start;
        for (int i = 0; ; i++)
        {
            DateTimeOffset t = t0.AddSeconds(i);
            if (i % 60 == 0)
            {
                yield return Stream(t, flow: 1100 + (random.NextDouble() * 100));
                yield return Stage(t, 1, 0.8 + (random.NextDouble() * 0.1));
                yield return Unit(t);
                yield return Sensor(t);
                if (i % 3600 == 0)
                {
                    yield return Alert(t, active: (i / 3600) % 2 == 0);
                }
            }

            for (int tag = 0; tag < 8; tag++)
            {
                yield return Signal(t, $"TAG-{tag:D2}", random.NextDouble() * 100);
            }
        }
    }
}
