using System.Globalization;

namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// A NodeId that may name its namespace by URI instead of index and may point to another server
/// (OPC 10000-6 §5.2.2.10). Text form: <c>svr=1;nsu=urn:example:plant-sim;s=Plant.Unit1.Flow</c>.
/// </summary>
public readonly struct ExpandedNodeId : IEquatable<ExpandedNodeId>
{
    /// <summary>Creates an ExpandedNodeId.</summary>
    /// <param name="nodeId">The NodeId (its namespace index is ignored by readers when a URI is given).</param>
    /// <param name="namespaceUri">The namespace URI, or null when the index applies.</param>
    /// <param name="serverIndex">The index in the server's ServerArray (0 = this server).</param>
    public ExpandedNodeId(NodeId nodeId, string? namespaceUri = null, uint serverIndex = 0)
    {
        NodeId = nodeId;
        NamespaceUri = string.IsNullOrEmpty(namespaceUri) ? null : namespaceUri;
        ServerIndex = serverIndex;
    }

    /// <summary>The NodeId.</summary>
    public NodeId NodeId { get; }

    /// <summary>The namespace URI, or null when the NodeId's namespace index applies.</summary>
    public string? NamespaceUri { get; }

    /// <summary>The server index (0 = the local server).</summary>
    public uint ServerIndex { get; }

    /// <summary>True when the NodeId is null and neither URI nor server index is set.</summary>
    public bool IsNull => NodeId.IsNull && NamespaceUri is null && ServerIndex == 0;

    /// <summary>True when the node is on this server and its namespace is given by index.</summary>
    public bool IsLocal => NamespaceUri is null && ServerIndex == 0;

    /// <summary>Parses the text form: optional <c>svr=&lt;n&gt;;</c>, then <c>nsu=&lt;uri&gt;;</c> or <c>ns=&lt;n&gt;;</c>, then the identifier.</summary>
    /// <param name="text">The text.</param>
    /// <returns>The ExpandedNodeId.</returns>
    /// <exception cref="FormatException">The text is not valid; the message quotes it.</exception>
    public static ExpandedNodeId Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var rest = text.AsSpan();
        uint server = 0;
        if (rest.StartsWith("svr="))
        {
            var semi = rest.IndexOf(';');
            if (semi < 0 || !uint.TryParse(rest[4..semi], NumberStyles.None, CultureInfo.InvariantCulture, out server))
            {
                throw new FormatException($"ExpandedNodeId '{text}': 'svr=' must be followed by a number and ';'");
            }

            rest = rest[(semi + 1)..];
        }

        if (rest.StartsWith("nsu="))
        {
            var semi = rest.IndexOf(';');
            if (semi < 0)
            {
                throw new FormatException($"ExpandedNodeId '{text}': 'nsu=<uri>' must be followed by ';' and an identifier");
            }

            var uri = Uri.UnescapeDataString(rest[4..semi].ToString());
            if (!NodeId.TryParseIdentifier(text, rest[(semi + 1)..], 0, out var id, out var error))
            {
                throw new FormatException(error);
            }

            return new ExpandedNodeId(id, uri, server);
        }

        return new ExpandedNodeId(NodeId.Parse(rest.ToString()), null, server);
    }

    /// <summary>The text form.</summary>
    public override string ToString()
    {
        var svr = ServerIndex == 0 ? string.Empty : "svr=" + ServerIndex.ToString(CultureInfo.InvariantCulture) + ";";
        if (NamespaceUri is null)
        {
            return svr + NodeId;
        }

        return svr + "nsu=" + NamespaceUri.Replace(";", "%3B", StringComparison.Ordinal) + ";" + NodeId.IdentifierText();
    }

    /// <inheritdoc />
    public bool Equals(ExpandedNodeId other) =>
        NodeId.Equals(other.NodeId) && ServerIndex == other.ServerIndex && string.Equals(NamespaceUri, other.NamespaceUri, StringComparison.Ordinal);

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is ExpandedNodeId other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode() => HashCode.Combine(NodeId, NamespaceUri, ServerIndex);

    /// <summary>Compares two ExpandedNodeIds.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator ==(ExpandedNodeId left, ExpandedNodeId right) => left.Equals(right);

    /// <summary>Compares two ExpandedNodeIds.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator !=(ExpandedNodeId left, ExpandedNodeId right) => !left.Equals(right);

    /// <summary>Wraps a local NodeId.</summary>
    /// <param name="nodeId">The NodeId.</param>
    public static implicit operator ExpandedNodeId(NodeId nodeId) => new(nodeId);
}
