using System.Threading.Channels;
using Tieflow.Core.Monitoring;

namespace Tieflow.Service.Sources;

/// <summary>What a source hands to the monitor: samples, lab results, and changes of the source's own state.</summary>
internal abstract record SourceEvent;

/// <summary>One validated-later sample of one tag, with its source timestamp and quality.</summary>
internal sealed record SampleArrived(SignalSample Sample) : SourceEvent;

/// <summary>A lab result that became known (its <see cref="LabResult.Reported"/> time says when).</summary>
internal sealed record LabArrived(LabResult Lab) : SourceEvent;

/// <summary>The source connected, lost its connection or resumed; <paramref name="Time"/> is the source's clock.</summary>
internal sealed record SourceStateChanged(SourceState State, DateTimeOffset Time, string? Reason) : SourceEvent;

/// <summary>The state of a source's connection to the plant.</summary>
internal enum SourceState
{
    /// <summary>Not yet connected.</summary>
    Connecting,

    /// <summary>Delivering samples.</summary>
    Connected,

    /// <summary>Connection lost; the source is trying again.</summary>
    Disconnected,
}

/// <summary>A producer of plant samples (OPC UA, the in-process simulator, a lab drop folder).</summary>
internal interface ISignalSource
{
    /// <summary>A short name for logs and the status page.</summary>
    string Name { get; }

    /// <summary>Runs until <paramref name="cancellationToken"/> fires, writing what arrives to <paramref name="output"/>.</summary>
    /// <remarks>Throws only for a configuration that can never work (the host then exits 2 or 3); transient faults are
    /// reported as <see cref="SourceStateChanged"/> and retried.</remarks>
    Task RunAsync(ChannelWriter<SourceEvent> output, CancellationToken cancellationToken);
}
