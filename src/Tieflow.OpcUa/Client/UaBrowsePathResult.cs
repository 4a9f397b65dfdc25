using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>The result of translating one browse path.</summary>
/// <param name="Path">The path as given (for example <c>/Objects/2:Plant/2:Unit1/2:Flow</c>).</param>
/// <param name="Status">Good, or the reason it failed (BadNoMatch, BadBrowseNameInvalid...).</param>
/// <param name="Targets">The nodes the path leads to (empty on failure).</param>
public sealed record UaBrowsePathResult(string Path, StatusCode Status, IReadOnlyList<ExpandedNodeId> Targets);
