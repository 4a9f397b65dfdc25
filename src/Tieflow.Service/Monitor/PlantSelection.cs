using Tieflow.Core.Plant;
using Tieflow.Files;
using Tieflow.Service.Settings;

namespace Tieflow.Service.Monitor;

/// <summary>The plant a run watches: <c>Tieflow:Plant</c> (or, for the simulator without one, the scenario's plant), reduced to <c>Tieflow:Units</c>.</summary>
internal static class PlantSelection
{
    /// <exception cref="InputException">The plant or scenario file cannot be read, or a listed unit is not in it.</exception>
    public static PlantDescription Load(TieflowOptions options, SourceOptions source, SettingsContext settings)
    {
        PlantDescription plant = options.Plant is { } path
            ? PlantReader.Load(settings.Resolve(path))
            : ScenarioReader.Load(settings.Resolve(source.Scenario!)).Plant;
        if (options.Units.Count == 0)
        {
            return plant;
        }

        var problems = new List<InputProblem>();
        for (int i = 0; i < options.Units.Count; i++)
        {
            if (plant.FindUnit(options.Units[i]) is null)
            {
                problems.Add(new InputProblem("settings", $"Tieflow:Units:{i}", $"the plant has no unit '{options.Units[i]}'; it has {string.Join(", ", plant.Units.Select(u => u.Id))}"));
            }
        }

        if (problems.Count > 0)
        {
            throw new InputException(problems);
        }

        return plant with { Units = [.. plant.Units.Where(u => options.Units.Contains(u.Id))] };
    }
}
