using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// The monitor against a plant server that freezes (SIGSTOP, then SIGCONT once the monitor has raised the gap) while
/// <c>tieflow run</c> is subscribed: twice in CI, <c>TIEFLOW_SOAK_FREEZES</c> times in the soak
/// (<c>eng/soak/reliability.sh freezes</c>); what is checked after each gap is in <see cref="PlantServerFaultRun"/>.
/// </summary>
[Trait("Category", "Slow")]
public sealed class RunPlantServerFaultTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly ITestOutputHelper _log;

    public RunPlantServerFaultTests(ITestOutputHelper log) => _log = log;

    public void Dispose() => _folder.Dispose();

    [Fact]
    public async Task Run_PlantServerFrozen_RecordsEachGapAndResumesWithCompleteWindows()
    {
        await PlantServerFaultRun.RunAsync(
            _folder,
            _log,
            "freeze",
            SoakSize.Of("TIEFLOW_SOAK_FREEZES", 2),
            (scenario, port) => Sources.SimulatorProcess.StartAsync(scenario, port, speed: 240),
            (sim, _, _, awaitGap) =>
            {
                sim.Freeze();
                try
                {
                    awaitGap();
                }
                finally
                {
                    sim.Thaw();
                }

                return Task.FromResult(sim);
            });
    }
}
