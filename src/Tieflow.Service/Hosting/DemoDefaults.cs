namespace Tieflow.Service.Hosting;

/// <summary>
/// The embedded default of <c>tieflow run</c> without <c>--settings</c>: train X300 of the Brackenmoor demo plant,
/// simulated in process at 60 times real time with a stage losing efficiency in its first simulated hours, into a
/// SQLite store at <c>tieflow-data/tieflow.db</c> under the working directory. The plant, its systems and the scenario
/// are copied beside the executable (folder <c>defaults/</c>), so the default works from <c>dotnet run</c> and from an
/// installed build alike.
/// </summary>
internal static class DemoDefaults
{
    /// <summary>The folder of the default files.</summary>
    public static string Folder => Path.Combine(AppContext.BaseDirectory, "defaults");

    /// <summary>The scenario simulated by default.</summary>
    public static string Scenario => Path.Combine(Folder, "demo.scenario.json");

    /// <summary>The settings layer of the default (the lowest layer; every other layer overrides it).</summary>
    public static IReadOnlyDictionary<string, string?> Settings() => new Dictionary<string, string?>
    {
        ["Tieflow:Units:0"] = "X300",
        ["Tieflow:Source:Kind"] = "simulator",
        ["Tieflow:Source:Scenario"] = Scenario,
        ["Tieflow:Source:Speed"] = "60",
        ["Tieflow:Store:Kind"] = "sqlite",
    };
}
