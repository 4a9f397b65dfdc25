using Tieflow.Files;
using Tieflow.Service.Report;
using Tieflow.Service.Tests.Replay;

namespace Tieflow.Service.Tests.Report;

/// <summary>
/// A short simulated replay of the demo plant with a failing stage, an instrument fault and lab results, written as a
/// report by <c>tieflow replay --report</c> (linked into the browser tests too).
/// </summary>
internal sealed class SimulatedReport : IDisposable
{
    private readonly TempFolder _folder = new();

    public SimulatedReport()
    {
        string plant = Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json").Replace("\\", "/", StringComparison.Ordinal);
        string scenario = _folder.Write("report.scenario.json", $$"""
            { "plant": "{{plant}}", "start": "2026-03-02T00:00:00Z", "duration": "20:00:00", "step": "00:00:02", "seed": 5,
              "faults": [
                { "kind": "stage-efficiency", "unit": "X300", "stage": 3, "start": "04:00:00", "ramp": "00:30:00", "value": 0.55 },
                { "kind": "sensor-stuck", "unit": "X300", "tag": "FI-302", "start": "08:00:00" } ],
              "lab": { "interval": "01:30:00", "delay": "00:45:00", "sigma": 0.0005 } }
            """);
        (string history, string labs, string truth) = SimulatedHistory.Write(ScenarioReader.Load(scenario), _folder.Path);
        Folder = Path.Combine(_folder.Path, "report");
        Run = CliRun.Of("replay", "--plant", plant, "--history", history, "--labs", labs, "--truth", truth, "--report", Folder);
        Plant = PlantReader.Load(plant);
        History = history;
        Labs = labs;
        PlantPath = plant;
    }

    public CliRun Run { get; }

    public string Folder { get; }

    public string Page => Path.Combine(Folder, "index.html");

    public Core.Plant.PlantDescription Plant { get; }

    public string PlantPath { get; }

    public string History { get; }

    public string Labs { get; }

    /// <summary>The ids of every plot the page must show.</summary>
    public IEnumerable<string> PlotIds => Plant.Units.SelectMany(u => ReportWriter.PlotKinds.Select(k => $"plot-{ReportWriter.HtmlId(u.Id)}-{k}"));

    /// <summary>The ids of every table the page must show (the evaluation is there because a truth file was given).</summary>
    public IEnumerable<string> TableIds => Plant.Units.SelectMany(u => ReportWriter.TableKinds.Append("evaluation").Select(k => $"table-{ReportWriter.HtmlId(u.Id)}-{k}"));

    public void Dispose() => _folder.Dispose();
}
