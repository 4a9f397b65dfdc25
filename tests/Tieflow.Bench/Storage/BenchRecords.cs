using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Bench.Storage;

/// <summary>What a monitor of 500 tags writes: per second a sample of every tag, per minute a window of analysis records (invented data).</summary>
internal static class BenchRecords
{
    public static readonly DateTimeOffset Start = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    public static List<MonitorRecord> Make(int count, int tags = 500, int seed = 3)
    {
        var random = new Random(seed);
        var result = new List<MonitorRecord>(count);
        for (int second = 0; result.Count < count; second++)
        {
            DateTimeOffset t = Start.AddSeconds(second);
            if (second % 60 == 0)
            {
                for (int stage = 1; stage <= 4; stage++)
                {
                    result.Add(new StageRecord("X300", t, stage, new EstimatedValue(0.85 + (random.NextDouble() * 0.1), 0.03), 0.003, 298.3));
                }

                result.Add(new StreamRecord("X300", t, "raffinate", new EstimatedValue(1180, 6), new Dictionary<string, EstimatedValue>
                {
                    ["water"] = new(0.95, 0.002),
                    ["acetone"] = new(0.02, 0.0004),
                    ["tce"] = new(0.03, 0.001),
                }));
                result.Add(new UnitRecord("X300", t, 8.1, 12.6, true, 3.0, 0.2, null));
                result.Add(new SoftSensorRecord("X300", t, "raffinate-acetone", 0.0205, 0.0006, 0.0001));
            }

            for (int tag = 0; tag < tags && result.Count < count; tag++)
            {
                result.Add(new SignalRecord("X300", t, $"TI-{tag:D3}", random.NextDouble() * 100, SignalQuality.Good));
            }
        }

        return result;
    }
}
