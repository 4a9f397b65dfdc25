using System.Diagnostics;
using System.Globalization;
using Tieflow.Core.Scenarios;
using Tieflow.Files;
using Tieflow.Simulator.Serving;

namespace Tieflow.Simulator.Cli;

/// <summary>
/// <c>tieflow-sim run</c>: loads the scenario, runs the simulation step by step, streams history, labs and truth to
/// their files and the readings to the OPC UA server, paces the run (<c>--speed</c>) or not, reports progress on
/// standard error, and stops cleanly when cancelled (Ctrl+C): the files then hold everything up to that step.
/// </summary>
internal static class RunHandler
{
    public const string Advisory =
        "Advisory only: tieflow-sim simulates a plant for testing and training; it is not a safety system and never writes to a control system.";

    public static async Task<int> RunAsync(RunSettings settings, TextWriter error, TimeProvider time, CancellationToken cancellationToken)
    {
        error.WriteLine(Advisory);
        Scenario scenario = ScenarioReader.Load(settings.ScenarioPath);
        if (settings.Serve is not null && InstrumentServer.Problems(scenario.Plant) is { Count: > 0 } problems)
        {
            throw new InputException(problems.Select(p => new InputProblem(settings.ScenarioPath, "plant", p)).ToArray());
        }

        var simulation = new PlantSimulation(scenario);
        double stepSeconds = scenario.Step.TotalSeconds;

        // With an anchor the run's clock is the wall clock: plant time = start + speed × (now − anchor). The steps
        // already due are simulated first, as fast as possible and before the server listens, so that a restarted
        // simulator continues the same deterministic plant at the time its clock says, and serves from there on.
        long started = time.GetTimestamp();
        double offsetSeconds = 0;
        long catchUp = 0;
        if (settings.Anchor is DateTimeOffset anchor && settings.Speed is double factor)
        {
            offsetSeconds = (time.GetUtcNow() - anchor).TotalSeconds;
            double plantSeconds = offsetSeconds * factor;
            if (plantSeconds >= scenario.Duration.TotalSeconds)
            {
                throw new ArgumentException(string.Create(CultureInfo.InvariantCulture,
                    $"--anchor {anchor:u} at --speed {factor:G6}: the plant time now would be {scenario.Start + TimeSpan.FromSeconds(plantSeconds):u}, past the scenario's end ({scenario.End:u}); give a later anchor or a longer scenario"));
            }

            catchUp = plantSeconds > 0 ? Math.Min(simulation.StepCount, (long)Math.Floor((plantSeconds / stepSeconds) + 1e-9)) : 0;
        }

        InstrumentServer? server = null;
        try
        {
            using var sink = new OutputSink(simulation, settings.HistoryPath, settings.LabsPath, settings.TruthPath, null);
            while (simulation.StepIndex < catchUp && !cancellationToken.IsCancellationRequested)
            {
                simulation.Step(sink);
            }

            if (settings.Anchor is DateTimeOffset a)
            {
                error.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"plant time follows the wall clock from the anchor {a:u}: {(catchUp > 0 ? $"resuming at {simulation.Time:u} ({catchUp} steps simulated to get there)" : $"starting at {scenario.Start:u}")}"));
            }

            if (settings.Serve is { } endpoint && !cancellationToken.IsCancellationRequested)
            {
                server = await InstrumentServer.StartAsync(scenario.Plant, endpoint, time, cancellationToken, settings.Pki).ConfigureAwait(false);
                sink.Server = server;
                error.WriteLine($"serving {scenario.Plant.Units.Sum(u => u.Instruments.Count)} instruments at {server.EndpointUrl}"
                    + (settings.Pki is null ? " (SecurityPolicy None)" : $" (None, Sign and SignAndEncrypt; certificate in {Path.Combine(settings.Pki, "own")})"));
            }

            bool completed = await LoopAsync(simulation, sink, settings.Speed, started, offsetSeconds, error, time, cancellationToken).ConfigureAwait(false);
            error.WriteLine(completed
                ? $"done: {simulation.StepIndex} steps, {scenario.Start:u} to {simulation.Time:u}"
                : $"stopped at {simulation.Time:u} after {simulation.StepIndex} of {simulation.StepCount} steps; the files hold everything up to then");
        }
        finally
        {
            if (server is not null)
            {
                await server.DisposeAsync().ConfigureAwait(false);
            }
        }

        return 0;
    }

    /// <summary>
    /// Steps the run to its end, each step at its due time when paced: step i is due <paramref name="offsetSeconds"/>
    /// less than i steps of plant time at <paramref name="speed"/> after <paramref name="started"/> (a step already due
    /// runs at once).
    /// </summary>
    private static async Task<bool> LoopAsync(PlantSimulation simulation, OutputSink sink, double? speed, long started, double offsetSeconds, TextWriter error, TimeProvider time, CancellationToken cancellationToken)
    {
        double stepSeconds = simulation.Scenario.Step.TotalSeconds;
        long lastReport = time.GetTimestamp();
        while (!simulation.Finished)
        {
            if (cancellationToken.IsCancellationRequested)
            {
                return false;
            }

            if (speed is double factor)
            {
                // The wall-clock time at which this step is due; wait only when ahead by more than a few milliseconds.
                double due = (simulation.StepIndex * stepSeconds / factor) - offsetSeconds;
                double ahead = due - time.GetElapsedTime(started).TotalSeconds;
                if (ahead > 0.005)
                {
                    sink.Flush();
                    try
                    {
                        await Task.Delay(TimeSpan.FromSeconds(ahead), time, cancellationToken).ConfigureAwait(false);
                    }
                    catch (OperationCanceledException)
                    {
                        return false;
                    }
                }
            }

            simulation.Step(sink);
            if (time.GetElapsedTime(lastReport) >= TimeSpan.FromSeconds(2))
            {
                lastReport = time.GetTimestamp();
                TimeSpan done = simulation.Time - simulation.Scenario.Start;
                error.WriteLine(string.Create(CultureInfo.InvariantCulture, $"simulated {done:c} of {simulation.Scenario.Duration:c} ({100.0 * simulation.StepIndex / simulation.StepCount:F0} %)"));
            }
        }

        Debug.Assert(simulation.Finished, "the loop ends when the run is finished or cancelled");
        return true;
    }
}
