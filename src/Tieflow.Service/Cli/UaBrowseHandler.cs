using System.Text.Json;
using Spectre.Console;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow ua browse</c>: the hierarchy below a node to a depth, with browse names, NodeIds, node classes and, for
/// variables, data types. With <c>--json</c>: <c>[{ "node", "browseName", "displayName", "nodeClass", "dataType", "parent", "depth" }]</c>.
/// </summary>
internal static class UaBrowseHandler
{
    private const int MaxDepth = 10;

    private sealed record Entry(UaReference Reference, string Parent, int Depth)
    {
        public string? DataType { get; set; }
    }

    public static int Run(CliContext context, UaSession.SessionSettings settings, string nodeText, int depth, bool json)
    {
        var start = UaSession.ParseNode(nodeText);
        if (depth is < 1 or > MaxDepth)
        {
            throw new UaCliException(ExitCodes.BadInput, $"--depth {depth} is out of range; expected 1 to {MaxDepth}");
        }
        return RunAsync(context, settings, nodeText, start, depth, json).GetAwaiter().GetResult();
    }

    /// <summary>Maps a parsed node to the server's namespace indexes; an unknown namespace URI is bad input.</summary>
    public static NodeId Resolve(UaClient client, ExpandedNodeId node, string text)
    {
        try
        {
            return client.Resolve(node);
        }
        catch (Exception e) when (e is ArgumentException or InvalidOperationException or ServiceResultException)
        {
            throw new UaCliException(ExitCodes.BadInput, $"--node '{text}': {e.Message}");
        }
    }

    private static async Task<int> RunAsync(CliContext context, UaSession.SessionSettings settings, string text, ExpandedNodeId startNode, int depth, bool json)
    {
        await using var client = await UaSession.ConnectAsync(settings, CancellationToken.None).ConfigureAwait(false);
        var start = Resolve(client, startNode, text);
        var entries = new List<Entry>();
        await BrowseTreeAsync(client, start, text, 1, depth, entries, [start]).ConfigureAwait(false);
        await FillDataTypesAsync(client, entries).ConfigureAwait(false);
        if (json)
        {
            WriteJson(context, client, entries);
        }
        else
        {
            WriteTable(context, client, entries);
        }
        return ExitCodes.Success;
    }

    /// <summary>Depth first, so that the readable table shows each node's children right below it.</summary>
    private static async Task BrowseTreeAsync(UaClient client, NodeId node, string text, int level, int depth, List<Entry> entries, HashSet<NodeId> seen)
    {
        IReadOnlyList<UaReference> references;
        try
        {
            references = await client.BrowseAsync(node, maxReferencesPerCall: 500).ConfigureAwait(false);
        }
        catch (ServiceResultException e) when (level == 1 && e.Status.Is(StatusCodes.BadNodeIdUnknown))
        {
            throw new UaCliException(ExitCodes.BadInput, $"--node '{text}' does not exist on the server");
        }
        var parent = node.ToString();
        foreach (var reference in references)
        {
            entries.Add(new Entry(reference, parent, level));
            var child = client.Resolve(reference.NodeId);
            if (level < depth && seen.Add(child))
            {
                await BrowseTreeAsync(client, child, text, level + 1, depth, entries, seen).ConfigureAwait(false);
            }
        }
    }

    private static async Task FillDataTypesAsync(UaClient client, List<Entry> entries)
    {
        var variables = entries.Where(e => e.Reference.NodeClass == NodeClass.Variable).ToList();
        foreach (var chunk in variables.Chunk(500))
        {
            var values = await client.ReadAsync([.. chunk.Select(e => client.Resolve(e.Reference.NodeId))], Attributes.DataType).ConfigureAwait(false);
            for (var i = 0; i < chunk.Length; i++)
            {
                chunk[i].DataType = values[i].Value.Value is NodeId id ? DataTypeName(id) : null;
            }
        }
    }

    /// <summary>
    /// Standard data types of namespace 0 by their browse names (OPC 10000-5 §12, OPC 10000-3 §8; the numeric ids as
    /// in the OPC Foundation's NodeIds.csv, the less common ones from memory); any other as its NodeId.
    /// </summary>
    private static string DataTypeName(NodeId id)
    {
        if (id.NamespaceIndex == 0 && id.IdType == NodeIdType.Numeric)
        {
            var n = id.NumericIdentifier;
            var known = n switch
            {
                22 => "Structure",
                24 => "BaseDataType",
                >= 1 and <= 25 => ((BuiltInType)n).ToString(),
                26 => "Number",
                27 => "Integer",
                28 => "UInteger",
                29 => "Enumeration",
                30 => "Image",
                256 => "IdType",
                257 => "NodeClass",
                288 => "IntegerId",
                289 => "Counter",
                290 => "Duration",
                291 => "NumericRange",
                292 => "Time",
                293 => "Date",
                294 => "UtcTime",
                295 => "LocaleId",
                296 => "Argument",
                302 => "MessageSecurityMode",
                303 => "UserTokenType",
                307 => "ApplicationType",
                308 => "ApplicationDescription",
                338 => "BuildInfo",
                851 => "RedundancySupport",
                852 => "ServerState",
                862 => "ServerStatusDataType",
                884 => "Range",
                887 => "EUInformation",
                2000 => "ImageBMP",
                2001 => "ImageGIF",
                2002 => "ImageJPG",
                2003 => "ImagePNG",
                7594 => "EnumValueType",
                8912 => "TimeZoneDataType",
                12077 => "AxisScaleEnumeration",
                _ => null,
            };
            if (known is not null)
            {
                return known;
            }
        }
        return id.ToString();
    }

    private static void WriteJson(CliContext context, UaClient client, List<Entry> entries)
    {
        using var stream = new MemoryStream();
        using (var writer = new Utf8JsonWriter(stream, UaJson.Options))
        {
            writer.WriteStartArray();
            foreach (var e in entries)
            {
                writer.WriteStartObject();
                writer.WriteString("node", client.Resolve(e.Reference.NodeId).ToString());
                writer.WriteString("browseName", e.Reference.BrowseName.ToString());
                writer.WriteString("displayName", e.Reference.DisplayName.Text);
                writer.WriteString("nodeClass", e.Reference.NodeClass.ToString());
                writer.WriteString("dataType", e.DataType);
                writer.WriteString("parent", e.Parent);
                writer.WriteNumber("depth", e.Depth);
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
        }
        context.Output.WriteLine(System.Text.Encoding.UTF8.GetString(stream.ToArray()));
    }

    private static void WriteTable(CliContext context, UaClient client, List<Entry> entries)
    {
        var table = new Table().AddColumns("Browse name", "NodeId", "Class", "Data type");
        foreach (var e in entries)
        {
            table.AddRow(
                Markup.Escape(new string(' ', 2 * (e.Depth - 1)) + e.Reference.BrowseName),
                Markup.Escape(client.Resolve(e.Reference.NodeId).ToString()),
                e.Reference.NodeClass.ToString(),
                Markup.Escape(e.DataType ?? string.Empty));
        }
        context.Console.Write(table);
    }
}
