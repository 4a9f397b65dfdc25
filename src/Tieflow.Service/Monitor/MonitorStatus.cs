namespace Tieflow.Service.Monitor;

/// <summary>The monitor's latest <see cref="StatusSnapshot"/>, replaced whole by the monitor and read from any thread.</summary>
internal sealed class MonitorStatus
{
    private StatusSnapshot _current = StatusSnapshot.Starting;

    public StatusSnapshot Current => Volatile.Read(ref _current);

    public void Publish(StatusSnapshot snapshot) => Volatile.Write(ref _current, snapshot);
}
