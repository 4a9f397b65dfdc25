using System.Diagnostics;
using System.Globalization;

namespace Tieflow.Bench.Reconciliation;

/// <summary>
/// A quick table of <see cref="TrainScalingBenchmarks"/> without BenchmarkDotNet's separate builds: mean time per
/// reconciliation for 2 to 48 stages and the log-log slope between neighbours and over the whole range.
/// Run: <c>dotnet run -c Release --project tests/Tieflow.Bench -- scaling</c>.
/// </summary>
internal static class TrainScalingProbe
{
    public static void Run(TextWriter output)
    {
        int[] stages = [2, 4, 8, 12, 16, 24, 32, 48];
        var times = new double[stages.Length];
        for (int i = 0; i < stages.Length; i++)
        {
            var bench = new TrainScalingBenchmarks { Stages = stages[i] };
            bench.Setup();
            // Warm up for a second, so that tiered compilation has reached its optimised code.
            var warm = Stopwatch.StartNew();
            while (warm.Elapsed.TotalSeconds < 1)
            {
                bench.Reconcile();
            }

            // Repeat until at least half a second has passed, then take the mean.
            var watch = Stopwatch.StartNew();
            int count = 0;
            while (watch.Elapsed.TotalSeconds < 0.5 || count < 20)
            {
                bench.Reconcile();
                count++;
            }

            times[i] = watch.Elapsed.TotalMilliseconds / count;
            string slope = i == 0 ? string.Empty : (Math.Log(times[i] / times[i - 1]) / Math.Log((double)stages[i] / stages[i - 1])).ToString("F2", CultureInfo.InvariantCulture);
            output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{stages[i],3} stages: {times[i],9:F4} ms per reconciliation ({count} runs)  slope {slope}"));
        }

        double overall = Math.Log(times[^1] / times[0]) / Math.Log((double)stages[^1] / stages[0]);
        output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"log-log slope 2 to 48 stages: {overall:F2}"));
    }
}
