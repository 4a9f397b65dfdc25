using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Service.Settings;

namespace Tieflow.Service.Sources.Simulator;

/// <summary>
/// <c>Tieflow:Source:Kind</c> = <c>simulator</c>: the scenario of <c>Tieflow:Source:Scenario</c> simulated in process
/// at <c>Tieflow:Source:Speed</c> times real time (default 1), its plant reduced to the units being watched.
/// </summary>
internal sealed class SimulatorSourceFactory : ISignalSourceFactory
{
    public string? Kind => SourceOptions.Simulator;

    public IReadOnlyList<ISignalSource> Create(SourceContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        Scenario scenario = ScenarioReader.Load(context.Settings.Resolve(context.Source.Scenario!));
        var watched = context.Plant.Units.Select(u => u.Id).ToHashSet(StringComparer.Ordinal);
        scenario = scenario with { Plant = scenario.Plant with { Units = [.. scenario.Plant.Units.Where(u => watched.Contains(u.Id))] } };
        if (scenario.Plant.Units.Count == 0)
        {
            throw new InputException(context.Source.Scenario!, "plant", $"the scenario's plant has none of the units watched ({string.Join(", ", watched)})");
        }

        return [new SimulatorSource(scenario, context.Source.Speed ?? 1, context.Time)];
    }
}
