namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>
/// The interop test classes run one after the other: each starts node processes, and on a small shared machine
/// running them side by side only makes every one of them slower and their timing checks flakier.
/// </summary>
[CollectionDefinition(Name)]
public sealed class NodePeerCollection
{
    /// <summary>The collection's name.</summary>
    public const string Name = "node-opcua peers";
}
