using System.Globalization;
using System.Text;
using Microsoft.Extensions.Hosting;
using Spectre.Console;
using Spectre.Console.Rendering;
using Tieflow.Service.Hosting;
using Tieflow.Service.Monitor;
using Tieflow.Service.Sources;

namespace Tieflow.Service.Output;

/// <summary>
/// The console summary of <c>tieflow run</c>: per unit the stage efficiencies with their sigma, the soft sensor against
/// its spec and the active alerts, and the state of the source and the store. A live display redrawn each second when
/// the output is a terminal; otherwise one plain line per unit every <see cref="RunRequest.SummaryInterval"/>, and a
/// last one at stop.
/// </summary>
internal sealed class ConsoleSummary(RunRequest request, MonitorStatus status, TimeProvider time, IServiceProvider services) : BackgroundService
{
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        request.Output.WriteLine(Notices.Advisory);
        if (request.Terminal)
        {
            await LiveAsync(stoppingToken).ConfigureAwait(false);
            return;
        }

        try
        {
            while (!stoppingToken.IsCancellationRequested)
            {
                await Task.Delay(request.SummaryInterval, time, stoppingToken).ConfigureAwait(false);
                WriteLines(status.Current);
            }
        }
        catch (OperationCanceledException)
        {
            // Stopping: the final lines are written by StopAsync once the monitor has finished.
        }
    }

    /// <summary>Writes the final state once the monitor has stopped (called by the run command).</summary>
    public static void WriteFinal(TextWriter output, StatusSnapshot s)
    {
        foreach (string line in Lines(s))
        {
            output.WriteLine(line);
        }
    }

    /// <summary>The plain lines of a status: one per unit, then the source and the store.</summary>
    public static IEnumerable<string> Lines(StatusSnapshot s)
    {
        string at = s.DataTime is DateTimeOffset t ? t.ToUniversalTime().ToString("yyyy-MM-dd HH:mm'Z'", CultureInfo.InvariantCulture) : "no data yet";
        foreach (UnitStatus u in s.Units)
        {
            var line = new StringBuilder();
            line.Append(CultureInfo.InvariantCulture, $"{at} {u.Id}: {u.Windows} windows;");
            foreach (StageStatus st in u.Stages)
            {
                line.Append(CultureInfo.InvariantCulture, $" E{st.Stage} {Efficiency(st)}");
            }

            line.Append(';');
            line.Append(u.SoftSensor is { } soft
                ? string.Create(CultureInfo.InvariantCulture, $" {soft.Name} {soft.Value:F4} ± {soft.Sigma:F4} (spec {u.Spec:G4}{(soft.Value > u.Spec ? ", OFF SPEC" : string.Empty)});")
                : " soft sensor: not yet;");
            line.Append(u.Alerts.Count == 0 ? " no active alerts" : " alerts: " + string.Join(", ", u.Alerts.Select(Alert)));
            yield return line.ToString();
        }

        yield return $"{at} {Sources(s)}; {Store(s)}; {s.Samples} readings, {s.Records} records; {s.Phase}";
    }

    private static string Efficiency(StageStatus st) => st.Efficiency is double e && double.IsFinite(e)
        ? string.Create(CultureInfo.InvariantCulture, $"{e:F3}{(st.Sigma is double sd && double.IsFinite(sd) ? $" ± {sd:F3}" : string.Empty)}")
        : "n/d";

    private static string Alert(ActiveAlert a) => $"{a.Kind}{(a.Stage is int k ? $" stage {k}" : string.Empty)}{(a.Tag is null ? string.Empty : $" {a.Tag}")} ({a.Severity})";

    private static string Sources(StatusSnapshot s) => s.Sources.Count == 0 ? "source: none" : string.Join(", ", s.Sources.Select(src => $"source {src.Name} {src.State.ToString().ToLowerInvariant()}{(src.State == SourceState.Disconnected && src.Reason is not null ? $" ({src.Reason})" : string.Empty)}"));

    private static string Store(StatusSnapshot s) => s.Store is not { } st ? "store: not open"
        : $"store {st.Kind} {st.Written} written{(st.PendingRecords > 0 ? $", {st.PendingRecords} in the outbox" : string.Empty)}{(st.Problem is { } p ? $" ({p})" : string.Empty)}";

    private void WriteLines(StatusSnapshot s)
    {
        foreach (string line in Lines(s))
        {
            request.Output.WriteLine(line);
        }
    }

    private async Task LiveAsync(CancellationToken stoppingToken)
    {
        IAnsiConsole console = AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(request.Output), Ansi = AnsiSupport.Detect, Interactive = InteractionSupport.Yes });
        await console.Live(Render(status.Current)).AutoClear(false).StartAsync(async ctx =>
        {
            try
            {
                while (!stoppingToken.IsCancellationRequested)
                {
                    ctx.UpdateTarget(Render(status.Current));
                    await Task.Delay(TimeSpan.FromSeconds(1), time, stoppingToken).ConfigureAwait(false);
                }
            }
            catch (OperationCanceledException)
            {
                // Stopping.
            }

            ctx.UpdateTarget(Render(status.Current));
        }).ConfigureAwait(false);
    }

    private IRenderable Render(StatusSnapshot s)
    {
        var rows = new List<IRenderable>();
        string at = s.DataTime is DateTimeOffset t ? t.ToUniversalTime().ToString("yyyy-MM-dd HH:mm:ss'Z'", CultureInfo.InvariantCulture) : "no data yet";
        rows.Add(new Markup($"[bold]Tieflow[/] {Markup.Escape(s.Site)}, data time {Markup.Escape(at)} ({Markup.Escape(s.Phase)})"));
        foreach (UnitStatus u in s.Units)
        {
            var table = new Table().Border(TableBorder.Rounded).Title(Markup.Escape($"{u.Id}: {u.Windows} windows"));
            table.AddColumn("stage");
            table.AddColumn(new TableColumn("efficiency ± sigma").RightAligned());
            foreach (StageStatus st in u.Stages)
            {
                table.AddRow(st.Stage.ToString(CultureInfo.InvariantCulture), Efficiency(st));
            }

            rows.Add(table);
            rows.Add(new Markup(u.SoftSensor is { } soft
                ? Markup.Escape(string.Create(CultureInfo.InvariantCulture, $"soft sensor {soft.Name}: {soft.Value:F4} ± {soft.Sigma:F4}, spec {u.Spec:G4}")) + (soft.Value > u.Spec ? " [red]OFF SPEC[/]" : " [green]in spec[/]")
                : "soft sensor: not yet"));
            rows.Add(u.Alerts.Count == 0
                ? new Markup("[green]no active alerts[/]")
                : new Rows(u.Alerts.Select(a => (IRenderable)new Markup($"[yellow]{Markup.Escape(Alert(a))}[/] {Markup.Escape(a.Message)}"))));
        }

        string health = services.GetService(typeof(Health.HealthServer)) is Health.HealthServer { Address: { } address } ? $"; health {address}health" : string.Empty;
        rows.Add(new Markup(Markup.Escape($"{Sources(s)}; {Store(s)}; {s.Samples} readings, {s.Records} records{health}")));
        rows.Add(new Markup("[dim]" + Markup.Escape(Notices.Advisory) + "[/]"));
        return new Rows(rows);
    }
}
