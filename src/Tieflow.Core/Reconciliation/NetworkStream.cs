namespace Tieflow.Core.Reconciliation;

/// <summary>A stream of a process network, between two nodes or across the boundary of the network.</summary>
/// <param name="Id">Identifier of the stream, unique within the network.</param>
/// <param name="From">Node the stream leaves, or <see langword="null"/> for a stream that enters the network.</param>
/// <param name="To">Node the stream enters, or <see langword="null"/> for a stream that leaves the network.</param>
public sealed record NetworkStream(string Id, string? From, string? To);
