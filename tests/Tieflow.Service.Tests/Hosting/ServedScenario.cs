using System.Globalization;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// The scenario the process tests serve over OPC UA from the simulator (<c>tieflow-sim run --serve</c>): the
/// Brackenmoor sample plant from 2026-03-02, one-second steps, seed 5, no faults, a lab sample every four hours
/// reported 90 minutes later. Only its length differs from test to test.
/// </summary>
internal static class ServedScenario
{
    /// <summary>The sample plant the scenario simulates, with forward slashes (as the settings files of the tests give it).</summary>
    public static string Plant => Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json").Replace("\\", "/", StringComparison.Ordinal);

    /// <summary>Writes the scenario of <paramref name="duration"/> as <c>served.scenario.json</c> into <paramref name="folder"/> and returns its path.</summary>
    public static string Write(TempFolder folder, TimeSpan duration)
    {
        ArgumentNullException.ThrowIfNull(folder);
        return folder.Write("served.scenario.json", $$"""
            { "plant": "{{Plant}}", "start": "2026-03-02T00:00:00Z", "duration": "{{duration.ToString("c", CultureInfo.InvariantCulture)}}", "step": "00:00:01", "seed": 5,
              "faults": [], "lab": { "interval": "04:00:00", "delay": "01:30:00", "sigma": 0.0005 } }
            """);
    }
}
