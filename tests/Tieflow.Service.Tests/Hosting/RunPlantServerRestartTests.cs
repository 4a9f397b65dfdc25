using Tieflow.Service.Tests.Sources;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>
/// The monitor against a plant server that is stopped and started again while <c>tieflow run</c> is subscribed: three
/// times in CI, <c>TIEFLOW_SOAK_RESTARTS</c> times in the soak (<c>eng/soak/reliability.sh restarts</c>). The
/// simulator keeps its clock across the restarts (<c>tieflow-sim run --anchor</c>), so plant time moves on over each
/// down time; what is checked after each gap is in <see cref="PlantServerFaultRun"/>.
/// </summary>
[Trait("Category", "Slow")]
public sealed class RunPlantServerRestartTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly ITestOutputHelper _log;

    public RunPlantServerRestartTests(ITestOutputHelper log) => _log = log;

    public void Dispose() => _folder.Dispose();

    [Fact]
    public async Task Run_PlantServerRestarted_RecordsEachGapAndResumesWithCompleteWindows()
    {
        DateTimeOffset anchor = DateTimeOffset.UtcNow;
        await PlantServerFaultRun.RunAsync(
            _folder,
            _log,
            "restart",
            SoakSize.Of("TIEFLOW_SOAK_RESTARTS", 3),
            (scenario, port) => SimulatorProcess.StartAsync(scenario, port, speed: 240, anchor: anchor),
            async (sim, scenario, port, awaitGap) =>
            {
                sim.Stop();
                sim.Dispose();
                awaitGap();
                return await SimulatorProcess.StartAsync(scenario, port, speed: 240, anchor: anchor);
            });
    }
}
