using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using Tieflow.Files;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Replay;

/// <summary>
/// Whether the sigmas the analysis writes beside its reconciled values are honest: the final raffinate's solute fraction
/// of train X300, reconciled window by window over the demo's clean two days, against the simulator's true fraction
/// averaged over the same window. If the sigmas are right, the errors divided by them scatter with a root mean square
/// near 1 and hardly ever beyond 4. Settling windows are the test that matters: their balances close only as well as the
/// estimated accumulation of the hold-ups; there the Birge ratio widens the sigmas (R. T. Birge, Phys. Rev. 40 (1932)
/// 207-227; from memory). Before it, the gross-error search eliminated good instruments in those windows and the
/// errors reached 20 sigma (root mean square 3.3).
/// </summary>
public sealed partial class ReconciledSigmaTests(ITestOutputHelper output)
{
    [Fact]
    [Trait("Category", "Slow")]
    public void Replay_CleanTwoDays_ReconciledRaffinateAgreesWithTheTruthWithinItsSigma()
    {
        using var folder = new TempFolder();
        string scenarioPath = Path.Combine(RepositoryPaths.ConfigSamples, "scenarios", "clean.scenario.json");
        (string history, string labs, string truth) = SimulatedHistory.Write(ScenarioReader.Load(scenarioPath), folder.Path);
        string plant = Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json"), records = Path.Combine(folder.Path, "records.lp");
        CliRun run = CliRun.Of("replay", "--plant", plant, "--history", history, "--labs", labs, "--records", records);
        Assert.True(run.ExitCode == 0, run.Error);

        // The true raffinate solute, one sample a minute.
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(truth));
        var trueRaffinate = doc.RootElement.GetProperty("units").GetProperty("X300").GetProperty("samples").EnumerateArray()
            .Select(s => (Time: DateTimeOffset.Parse(s.GetProperty("time").GetString()!, CultureInfo.InvariantCulture).ToUnixTimeSeconds(), Value: s.GetProperty("raffinateSolute").GetDouble()))
            .ToArray();

        var steadyByEnd = new Dictionary<long, bool>();
        var raffinate = new List<(long End, double Value, double Sigma)>();
        foreach (string line in File.ReadLines(records))
        {
            if (line.StartsWith("tieflow_unit,", StringComparison.Ordinal) && line.Contains("unit=X300 ", StringComparison.Ordinal))
            {
                steadyByEnd[TimeOf(line)] = SteadyField().Match(line).Groups[1].Value == "1";
            }
            else if (line.StartsWith("tieflow_stream,", StringComparison.Ordinal) && line.Contains("stream=raffinate,", StringComparison.Ordinal) && line.Contains("unit=X300 ", StringComparison.Ordinal))
            {
                raffinate.Add((TimeOf(line), Field(line, "x_acetone"), Field(line, "x_acetone_sigma")));
            }
        }

        Assert.True(raffinate.Count >= 90, $"{raffinate.Count} reconciled windows of X300");
        long window = raffinate.Zip(raffinate.Skip(1), (a, b) => b.End - a.End).Min();
        var z = new Dictionary<bool, List<double>> { [true] = [], [false] = [] };
        foreach ((long end, double value, double sigma) in raffinate)
        {
            double[] inWindow = [.. trueRaffinate.Where(t => t.Time >= end - window && t.Time < end).Select(t => t.Value)];
            if (inWindow.Length > 0 && sigma > 0)
            {
                z[steadyByEnd[end]].Add((value - inWindow.Average()) / sigma);
            }
        }

        foreach ((bool steady, List<double> zs) in z)
        {
            double rms = Math.Sqrt(zs.Average(v => v * v)), largest = zs.Max(Math.Abs);
            output.WriteLine($"{(steady ? "steady" : "settling")} windows: {zs.Count}, error over sigma: root mean square {rms:F2}, largest {largest:F1}");
            Assert.True(zs.Count >= 15, $"{zs.Count} {(steady ? "steady" : "settling")} windows");
            Assert.InRange(rms, 0.3, 1.6);
            Assert.InRange(largest, 0, 4);
        }
    }

    private static long TimeOf(string line) => long.Parse(line[(line.LastIndexOf(' ') + 1)..], CultureInfo.InvariantCulture) / 1000;

    private static double Field(string line, string name)
    {
        Match m = Regex.Match(line, $"[ ,]{name}=([^, ]+)");
        Assert.True(m.Success, $"no field {name} in {line}");
        return double.Parse(m.Groups[1].Value, CultureInfo.InvariantCulture);
    }

    [GeneratedRegex(@"[ ,]steady=(\d)i?")]
    private static partial Regex SteadyField();
}
