using Microsoft.Extensions.Diagnostics.HealthChecks;
using Tieflow.Service.Monitor;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Health;

/// <summary>
/// The monitor's health from its status: Healthy while the primary source delivers and the store keeps up; Degraded
/// with the reason when the source is connecting or disconnected, the store is behind or failing, or the outbox is
/// filling; Unhealthy when the monitor has failed.
/// </summary>
internal sealed class MonitorHealthCheck(MonitorStatus status) : IHealthCheck
{
    public Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        StatusSnapshot s = status.Current;
        if (s.Phase == "failed")
        {
            return Task.FromResult(HealthCheckResult.Unhealthy($"monitor failed: {s.Failure}"));
        }

        var reasons = new List<string>();
        if (s.Phase is "starting" or "stopping" or "stopped")
        {
            reasons.Add($"monitor {s.Phase}");
        }

        foreach (SourceStatus src in s.Sources)
        {
            if (src.State == SourceState.Disconnected)
            {
                reasons.Add($"source {src.Name} disconnected{(src.Reason is null ? string.Empty : $": {src.Reason}")}");
            }
            else if (src.State == SourceState.Connecting && src.Primary)
            {
                reasons.Add($"source {src.Name} connecting");
            }
        }

        if (s.Store?.Problem is { } problem)
        {
            reasons.Add(problem);
        }

        return Task.FromResult(reasons.Count == 0 ? HealthCheckResult.Healthy("monitoring") : HealthCheckResult.Degraded(string.Join("; ", reasons)));
    }
}
