using System.Diagnostics;
using System.Globalization;

namespace Tieflow.Bench.Reconciliation;

/// <summary>
/// A quick table of <see cref="TrainScalingBenchmarks"/> without BenchmarkDotNet's separate builds: mean CPU time per
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

            // Repeat until at least half a second of CPU has been spent, then take the mean. On a machine shared with
            // other work the wall clock measures the neighbours; the process's CPU time is the cost on one core.
            using var process = Process.GetCurrentProcess();
            TimeSpan cpuBefore = process.TotalProcessorTime;
            var watch = Stopwatch.StartNew();
            int count = 0;
            double cpu = 0;
            while (cpu < 0.5 || count < 20)
            {
                bench.Reconcile();
                count++;
                if ((count & 7) == 0)
                {
                    process.Refresh();
                    cpu = (process.TotalProcessorTime - cpuBefore).TotalSeconds;
                }
            }

            process.Refresh();
            times[i] = (process.TotalProcessorTime - cpuBefore).TotalMilliseconds / count;
            double wall = watch.Elapsed.TotalMilliseconds / count;
            string slope = i == 0 ? string.Empty : (Math.Log(times[i] / times[i - 1]) / Math.Log((double)stages[i] / stages[i - 1])).ToString("F2", CultureInfo.InvariantCulture);
            output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{stages[i],3} stages: {times[i],9:F4} ms CPU per reconciliation ({wall:F4} ms wall, {count} runs)  slope {slope}"));
        }

        double overall = Math.Log(times[^1] / times[0]) / Math.Log((double)stages[^1] / stages[0]);
        output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"log-log slope 2 to 48 stages: {overall:F2}"));
    }
}
