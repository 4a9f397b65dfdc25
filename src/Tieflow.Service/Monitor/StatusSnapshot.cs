using Tieflow.Service.Sources;
using Tieflow.Service.Store;

namespace Tieflow.Service.Monitor;

/// <summary>What the monitor shows of itself at one moment: the status page, the health check and the console read it.</summary>
/// <param name="Site">The plant's site.</param>
/// <param name="Phase">starting, running, stopping, stopped or failed.</param>
/// <param name="DataTime">The latest data time seen (the source's clock; simulated time for the simulator).</param>
/// <param name="Sources">Each source's state.</param>
/// <param name="Store">The store's state, or null before it is open.</param>
/// <param name="Units">Per unit: the last window's results and the active alerts.</param>
/// <param name="Samples">Readings analysed.</param>
/// <param name="Records">Records produced.</param>
/// <param name="Failure">Why the monitor failed, or null.</param>
internal sealed record StatusSnapshot(
    string Site,
    string Phase,
    DateTimeOffset? DataTime,
    IReadOnlyList<SourceStatus> Sources,
    StoreState? Store,
    IReadOnlyList<UnitStatus> Units,
    long Samples,
    long Records,
    string? Failure)
{
    public static StatusSnapshot Starting { get; } = new(string.Empty, "starting", null, [], null, [], 0, 0, null);
}

/// <summary>One source's state.</summary>
internal sealed record SourceStatus(string Name, bool Primary, SourceState State, DateTimeOffset? Since, string? Reason);

/// <summary>One unit's latest results.</summary>
/// <param name="Id">The unit id.</param>
/// <param name="LastWindow">Start of the last window analysed, or null.</param>
/// <param name="Windows">Windows analysed.</param>
/// <param name="Stages">Per stage: the last efficiency and its sigma (null when not determinable or not yet known).</param>
/// <param name="SoftSensor">The raffinate soft sensor's last value, or null.</param>
/// <param name="Spec">The raffinate solute spec (fraction).</param>
/// <param name="Alerts">The active alerts.</param>
internal sealed record UnitStatus(
    string Id,
    DateTimeOffset? LastWindow,
    int Windows,
    IReadOnlyList<StageStatus> Stages,
    SoftSensorStatus? SoftSensor,
    double Spec,
    IReadOnlyList<ActiveAlert> Alerts);

/// <summary>A stage's last efficiency.</summary>
internal sealed record StageStatus(int Stage, double? Efficiency, double? Sigma);

/// <summary>The soft sensor's last value.</summary>
internal sealed record SoftSensorStatus(string Name, DateTimeOffset Time, double Value, double Sigma, double LabBias);

/// <summary>An alert that is raised and not cleared.</summary>
internal sealed record ActiveAlert(string Kind, string Severity, int? Stage, string? Tag, DateTimeOffset Raised, string Message);
