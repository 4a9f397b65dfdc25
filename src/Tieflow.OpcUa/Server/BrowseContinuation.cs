namespace Tieflow.OpcUa.Server;

/// <summary>What is left of a Browse result after a continuation point: the remaining references and the result mask.</summary>
internal sealed record BrowseContinuation(List<BrowseReference> Remaining, uint ResultMask, uint MaxReferences);
