using System.Text.Json;
using Spectre.Console;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow ua read</c>: current values as <c>[{ "node", "value", "status", "sourceTime", "serverTime" }]</c>.</summary>
internal static class UaReadHandler
{
    public static int Run(CliContext context, UaSession.SessionSettings settings, string[] nodeTexts, bool json)
    {
        var nodes = nodeTexts.Select(UaSession.ParseNode).ToList();
        return RunAsync(context, settings, nodeTexts, nodes, json).GetAwaiter().GetResult();
    }

    private static async Task<int> RunAsync(CliContext context, UaSession.SessionSettings settings, string[] texts, List<OpcUa.Encoding.ExpandedNodeId> nodes, bool json)
    {
        await using var client = await UaSession.ConnectAsync(settings, CancellationToken.None).ConfigureAwait(false);
        var resolved = nodes.Select((n, i) => UaBrowseHandler.Resolve(client, n, texts[i])).ToList();
        var values = await client.ReadAsync(resolved).ConfigureAwait(false);
        if (json)
        {
            using var stream = new MemoryStream();
            using (var writer = new Utf8JsonWriter(stream, UaJson.Options))
            {
                writer.WriteStartArray();
                for (var i = 0; i < values.Count; i++)
                {
                    writer.WriteStartObject();
                    writer.WriteString("node", texts[i]);
                    writer.WritePropertyName("value");
                    UaJson.WriteValue(writer, values[i].Value);
                    writer.WriteString("status", UaJson.Status(values[i].Status));
                    writer.WriteString("sourceTime", UaJson.Time(values[i].SourceTimestamp));
                    writer.WriteString("serverTime", UaJson.Time(values[i].ServerTimestamp));
                    writer.WriteEndObject();
                }
                writer.WriteEndArray();
            }
            context.Output.WriteLine(System.Text.Encoding.UTF8.GetString(stream.ToArray()));
            return ExitCodes.Success;
        }
        var table = new Table().AddColumns("Node", "Value", "Status", "Source time", "Server time");
        for (var i = 0; i < values.Count; i++)
        {
            table.AddRow(
                Markup.Escape(texts[i]),
                Markup.Escape(UaJson.Text(values[i].Value)),
                Markup.Escape(UaJson.Status(values[i].Status)),
                UaJson.Time(values[i].SourceTimestamp) ?? "-",
                UaJson.Time(values[i].ServerTimestamp) ?? "-");
        }
        context.Console.Write(table);
        var unreadable = values.Select((v, i) => (Text: texts[i], v.Status)).Where(v => v.Status.IsBad).ToList();
        if (unreadable.Count > 0)
        {
            // One summary on standard error, so that a long list of nodes does not hide the few that failed.
            context.Error.WriteLine($"{unreadable.Count} of {values.Count} node(s) could not be read: " +
                string.Join("; ", unreadable.Select(u => $"{u.Text} ({UaJson.Status(u.Status)})")));
        }
        return ExitCodes.Success;
    }
}
