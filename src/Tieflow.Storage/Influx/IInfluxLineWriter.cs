namespace Tieflow.Storage.Influx;

/// <summary>Sends lines of line protocol (millisecond timestamps) to a time-series server; returns once the server accepted them, throws otherwise.</summary>
public interface IInfluxLineWriter
{
    Task WriteAsync(IReadOnlyList<string> lines, CancellationToken cancellationToken);
}
