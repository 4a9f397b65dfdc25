using Tieflow.Files;

namespace Tieflow.Service.Tests.Replay;

/// <summary>A scenario of config-samples/scenarios simulated, then replayed with its ground truth against the demo plant.</summary>
internal static class SampleReplay
{
    /// <summary>Runs <c>tieflow replay --json</c> on the simulated history of the named scenario (without .scenario.json).</summary>
    public static CliRun Run(string scenario, string folder)
    {
        string scenarioPath = Path.Combine(RepositoryPaths.ConfigSamples, "scenarios", scenario + ".scenario.json");
        (string history, string labs, string truth) = SimulatedHistory.Write(ScenarioReader.Load(scenarioPath), folder);
        string plant = Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json");
        return CliRun.Of("replay", "--plant", plant, "--history", history, "--labs", labs, "--truth", truth, "--json");
    }
}
