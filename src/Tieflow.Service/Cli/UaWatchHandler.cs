using System.Text.Json;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow ua watch</c>: subscribes and prints each data change, one JSON object a line with <c>--json</c>
/// (<c>{ "node", "value", "status", "sourceTime" }</c>); connection changes and data gaps go to standard error. The
/// client reconnects by itself; <c>--for</c> (or Ctrl+C) ends the watch cleanly with exit 0.
/// </summary>
internal static class UaWatchHandler
{
    public static int Run(CliContext context, UaSession.SessionSettings settings, string[] nodeTexts, TimeSpan sampling, TimeSpan? duration, bool json)
    {
        var nodes = nodeTexts.Select(UaSession.ParseNode).ToList();
        if (sampling < TimeSpan.FromMilliseconds(10) || sampling > TimeSpan.FromHours(1))
        {
            throw new UaCliException(ExitCodes.BadInput, $"--sampling {sampling} is out of range; expected 00:00:00.010 to 01:00:00");
        }
        if (duration is { } d && d <= TimeSpan.Zero)
        {
            throw new UaCliException(ExitCodes.BadInput, $"--for {d} must be positive");
        }
        if (nodeTexts.Distinct(StringComparer.Ordinal).Count() != nodeTexts.Length)
        {
            throw new UaCliException(ExitCodes.BadInput, "--node names the same node twice");
        }
        // --for counts from the moment the subscription is made, so that a slow connect does not eat the watch.
        using var stop = new CancellationTokenSource();
        ConsoleCancelEventHandler onCancel = (_, e) =>
        {
            e.Cancel = true;
            stop.Cancel();
        };
        Console.CancelKeyPress += onCancel;
        try
        {
            return RunAsync(context, settings, nodeTexts, nodes, sampling, json, stop.Token, () =>
            {
                if (duration is { } limit)
                {
                    stop.CancelAfter(limit);
                }
            }).GetAwaiter().GetResult();
        }
        finally
        {
            Console.CancelKeyPress -= onCancel;
        }
    }

    private static async Task<int> RunAsync(CliContext context, UaSession.SessionSettings settings, string[] texts, List<ExpandedNodeId> nodes,
        TimeSpan sampling, bool json, CancellationToken stop, Action watching)
    {
        UaClient client;
        try
        {
            client = await UaSession.ConnectAsync(settings, stop).ConfigureAwait(false);
        }
        catch (OperationCanceledException) when (stop.IsCancellationRequested)
        {
            context.Error.WriteLine("watch ended as asked, before the connection was made.");
            return ExitCodes.Success;
        }
        await using (client.ConfigureAwait(false))
        {
            client.StateChanged += (_, e) =>
            {
                lock (context.Error)
                {
                    // After --for or Ctrl+C the client closes the session: that is the planned end, not a loss.
                    if (!stop.IsCancellationRequested)
                    {
                        context.Error.WriteLine($"connection: {e.State} at {UaJson.Time(e.Time)}: {e.Message}");
                    }
                }
            };
            var monitored = nodes.Select((n, i) => new MonitoredNode { Node = n, Key = texts[i], SamplingInterval = sampling, QueueSize = 10 }).ToList();
            var subscription = await client.SubscribeAsync(new SubscriptionSettings
            {
                PublishingInterval = sampling,
                MaxKeepAliveCount = (uint)Math.Clamp(Math.Ceiling(5_000 / sampling.TotalMilliseconds), 3, 100),
                LifetimeCount = 0,
                Timestamps = TimestampsToReturn.Both,
            }, monitored, stop).ConfigureAwait(false);
            await using (subscription.ConfigureAwait(false))
            {
                watching();
                var failed = subscription.Items.Where(i => i.Status.IsBad).ToList();
                foreach (var item in failed)
                {
                    context.Error.WriteLine($"error: --node '{item.Key}' cannot be watched: {item.Status}");
                }
                if (failed.Count == subscription.Items.Count)
                {
                    return ExitCodes.BadInput;
                }
                try
                {
                    await foreach (var e in subscription.Events.ReadAllAsync(stop).ConfigureAwait(false))
                    {
                        switch (e)
                        {
                            case UaDataChange change:
                                Print(context, change, json);
                                break;
                            case UaDataGap gap:
                                lock (context.Error)
                                {
                                    context.Error.WriteLine(gap.NotificationsMayBeMissing
                                        ? $"gap: no data from {UaJson.Time(gap.From)} to {UaJson.Time(gap.To)}: {gap.Reason}"
                                        : $"gap: not observed live from {UaJson.Time(gap.From)} to {UaJson.Time(gap.To)} (nothing lost): {gap.Reason}");
                                }
                                break;
                        }
                    }
                }
                catch (OperationCanceledException) when (stop.IsCancellationRequested)
                {
                    // --for elapsed or Ctrl+C: a clean end.
                }
                lock (context.Error)
                {
                    context.Error.WriteLine("watch ended as asked; closing the session.");
                }
            }
        }
        return ExitCodes.Success;
    }

    private static void Print(CliContext context, UaDataChange change, bool json)
    {
        if (!json)
        {
            context.Output.WriteLine($"{UaJson.Time(change.SourceTime) ?? "-",-28} {change.Key,-40} {UaJson.Text(change.Value),-20} {UaJson.Status(change.Status)}");
            return;
        }
        using var stream = new MemoryStream();
        using (var writer = new Utf8JsonWriter(stream, UaJson.Options))
        {
            writer.WriteStartObject();
            writer.WriteString("node", change.Key);
            writer.WritePropertyName("value");
            UaJson.WriteValue(writer, change.Value);
            writer.WriteString("status", UaJson.Status(change.Status));
            writer.WriteString("sourceTime", UaJson.Time(change.SourceTime));
            writer.WriteEndObject();
        }
        context.Output.WriteLine(System.Text.Encoding.UTF8.GetString(stream.ToArray()));
    }
}
