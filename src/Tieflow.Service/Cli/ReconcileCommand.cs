using System.Text.Json;
using Spectre.Console;
using Tieflow.Core.Reconciliation;
using Tieflow.Files;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow calc reconcile</c>: reconciles the measurements of a process network and tests for gross errors.
/// The global and measurement tests are those of the reconciliation with every measurement; the estimates are those
/// after serial elimination of the suspects (the same when there is none).
/// </summary>
internal static class ReconcileCommand
{
    public static int Run(CliContext context, string casePath, bool json)
    {
        ReconcileCase c = ReconcileCaseReader.Load(casePath);
        var options = new ReconciliationOptions { Significance = c.Significance, MaxIterations = c.MaxIterations };
        ReconciliationReport report = DataReconciler.Reconcile(c.Network, c.Measurements, options);
        if (json)
        {
            JsonOutput.Print(context.Output, w => WriteJson(w, c, report));
        }
        else
        {
            WriteText(context.Console, c, report);
        }

        return ExitCodes.Success;
    }

    private static void WriteJson(Utf8JsonWriter w, ReconcileCase c, ReconciliationReport report)
    {
        ProcessNetwork network = c.Network;
        var readings = c.Measurements.ToDictionary(m => m.Key, m => m.Value);
        var suspects = new HashSet<QuantityKey>(report.Suspects);
        w.WriteStartObject();
        w.WriteString("status", report.Initial.Status == ReconciliationStatus.Reconciled ? "reconciled" : "nothing-redundant");
        w.WriteStartArray("streams");
        foreach (NetworkStream s in network.Streams)
        {
            w.WriteStartObject();
            w.WriteString("id", s.Id);
            w.WritePropertyName("flow");
            WriteEstimate(w, report.Final.Flow(s.Id), readings, suspects);
            w.WriteStartObject("fractions");
            foreach (string component in network.Components)
            {
                w.WritePropertyName(component);
                WriteEstimate(w, report.Final.Fraction(s.Id, component), readings, suspects);
            }

            w.WriteEndObject();
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WritePropertyName("globalTest");
        WriteGlobalTest(w, report.Initial.GlobalTest);
        w.WriteStartArray("measurementTests");
        foreach (MeasurementTest t in report.Initial.MeasurementTests)
        {
            w.WriteStartObject();
            WriteKey(w, t.Key);
            JsonOutput.WriteNumber(w, "adjustment", t.Adjustment);
            JsonOutput.WriteNumber(w, "normalized", t.Normalized);
            JsonOutput.WriteNumber(w, "critical", t.Critical);
            w.WriteBoolean("suspect", t.Suspect);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartArray("suspects");
        foreach (QuantityKey key in report.Suspects)
        {
            w.WriteStartObject();
            WriteKey(w, key);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartObject("afterElimination");
        w.WriteNumber("removed", report.Suspects.Count);
        w.WritePropertyName("globalTest");
        WriteGlobalTest(w, report.Final.GlobalTest);
        w.WriteEndObject();
        w.WriteNumber("significance", c.Significance);
        w.WriteNumber("iterations", report.Initial.Iterations);
        JsonOutput.WriteNotice(w);
        w.WriteEndObject();
    }

    private static void WriteEstimate(Utf8JsonWriter w, QuantityEstimate e, Dictionary<QuantityKey, double> readings, HashSet<QuantityKey> suspects)
    {
        w.WriteStartObject();
        WriteNumberOrNull(w, "value", e.Value);
        WriteNumberOrNull(w, "sigma", e.Sigma);
        if (readings.TryGetValue(e.Key, out double reading))
        {
            JsonOutput.WriteNumber(w, "measured", reading);
        }
        else
        {
            w.WriteNull("measured");
        }

        // The file format (docs/file-formats.md) knows three statuses; a measurement that no balance checks is determined (observable) but
        // not adjusted, which "classification" says.
        w.WriteString("status", e.Status switch
        {
            QuantityStatus.Redundant => "redundant",
            QuantityStatus.Unobservable => "unobservable",
            _ => "observable",
        });
        w.WriteString("classification", Classification(e.Status));
        if (suspects.Contains(e.Key))
        {
            w.WriteBoolean("suspect", true);
        }

        w.WriteEndObject();
    }

    private static void WriteGlobalTest(Utf8JsonWriter w, GlobalTest g)
    {
        w.WriteStartObject();
        JsonOutput.WriteNumber(w, "statistic", g.Statistic);
        w.WriteNumber("dof", g.DegreesOfFreedom);
        JsonOutput.WriteNumber(w, "critical", g.Critical);
        JsonOutput.WriteNumber(w, "pValue", g.PValue);
        w.WriteBoolean("passed", g.Passed);
        w.WriteEndObject();
    }

    private static void WriteKey(Utf8JsonWriter w, QuantityKey key)
    {
        w.WriteString("stream", key.Stream);
        w.WriteString("quantity", key.Quantity == MeasuredQuantity.Flow ? "flow" : "fraction");
        if (key.Component is null)
        {
            w.WriteNull("component");
        }
        else
        {
            w.WriteString("component", key.Component);
        }
    }

    private static void WriteNumberOrNull(Utf8JsonWriter w, string name, double value)
    {
        if (double.IsFinite(value))
        {
            w.WriteNumber(name, JsonOutput.Round(value));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static string Classification(QuantityStatus status) => status switch
    {
        QuantityStatus.Redundant => "redundant",
        QuantityStatus.NonRedundant => "non-redundant",
        QuantityStatus.Observable => "observable",
        _ => "unobservable",
    };

    private static void WriteText(IAnsiConsole console, ReconcileCase c, ReconciliationReport report)
    {
        ProcessNetwork network = c.Network;
        ReconciliationResult initial = report.Initial;
        ReconciliationResult final = report.Final;
        var readings = c.Measurements.ToDictionary(m => m.Key, m => m.Value);
        console.WriteLine($"Reconciliation of {Path.GetFileName(c.Path)}: {network.Nodes.Count} node(s), {network.Streams.Count} stream(s), " +
            (network.IsFlowOnly ? "flow only" : $"components {string.Join(", ", network.Components)}") + $", {c.Measurements.Count} measurement(s)");

        console.WriteLine(report.Suspects.Count == 0
            ? "No suspect was removed: the estimates, their sigmas and every test are from the one run with every measurement."
            : $"The estimates and their sigmas are from the run after removing the {report.Suspects.Count} suspect{(report.Suspects.Count == 1 ? string.Empty : "s")} (\"after\"); " +
              "the normalised adjustments and the tests are from the run with every measurement (\"all\").");
        var table = new Table().Border(TableBorder.Simple);
        table.AddColumn(TextOutput.Column("stream", right: false));
        table.AddColumn(TextOutput.Column("quantity", right: false));
        table.AddColumn(TextOutput.Column("unit", right: false));
        table.AddColumn(TextOutput.Column("measured", right: true));
        table.AddColumn(TextOutput.Column(report.Suspects.Count == 0 ? "estimate" : "estimate (after)", right: true));
        table.AddColumn(TextOutput.Column("sigma", right: true));
        table.AddColumn(TextOutput.Column("status", right: false));
        table.AddColumn(TextOutput.Column("normalised adj. (all)", right: true));
        table.AddColumn(TextOutput.Column("test (all)", right: false));
        for (int v = 0; v < network.QuantityCount; v++)
        {
            QuantityEstimate e = final.Estimates[v];
            string format = e.Key.Quantity == MeasuredQuantity.Flow ? "F3" : "F5";
            string measured = readings.TryGetValue(e.Key, out double r) ? Num(r, format) : "-";
            MeasurementTest? test = initial.TestOf(e.Key);
            bool suspect = report.Suspects.Contains(e.Key);
            table.AddRow(
                Markup.Escape(e.Key.Stream),
                Markup.Escape(e.Key.Quantity == MeasuredQuantity.Flow ? "flow" : $"x {e.Key.Component}"),
                e.Key.Quantity == MeasuredQuantity.Flow ? "case flow unit" : "fraction",
                measured,
                e.HasValue ? Num(e.Value, format) : "-",
                e.HasValue ? Num(e.Sigma, format) : "-",
                Classification(e.Status),
                test is { } t ? Num(t.Normalized, "F3") : "-",
                suspect ? $"suspect #{report.Suspects.ToList().IndexOf(e.Key) + 1}" : test is { Suspect: true } ? "above critical" : string.Empty);
        }

        console.Write(table);
        GlobalTest g = initial.GlobalTest;
        if (initial.Status == ReconciliationStatus.NothingRedundant)
        {
            console.WriteLine("Nothing is redundant: no balance checks any measurement, so nothing was adjusted (0 degrees of freedom). " +
                "Add measurements to test the instruments.");
        }
        else
        {
            console.WriteLine($"Tests of the run with every measurement. Global test: statistic {Num(g.Statistic, "F4")} on {g.DegreesOfFreedom} degree(s) of freedom, critical {Num(g.Critical, "F3")} " +
                $"at significance {Num(c.Significance, "G3")}, p = {Num(g.PValue, "G4")}: {(g.Passed ? "passed, no gross error detected" : "failed")}.");
            if (initial.MeasurementTests.Count > 0)
            {
                console.WriteLine($"Measurement test: critical {Num(initial.MeasurementTests[0].Critical, "F3")} for {initial.MeasurementTests.Count} test(s) (Sidak correction).");
            }
        }

        if (report.Suspects.Count > 0)
        {
            console.WriteLine($"Suspects, most suspect first: {string.Join("; ", report.Suspects)}. The estimates above are from the run after removing them " +
                $"(its global test: statistic {Num(final.GlobalTest.Statistic, "F4")} on {final.GlobalTest.DegreesOfFreedom} dof, {(final.GlobalTest.Passed ? "passed" : "failed")}).");
        }

        int unobservable = final.Estimates.Count(e => e.Status == QuantityStatus.Unobservable);
        if (unobservable > 0)
        {
            console.WriteLine($"{unobservable} unmeasured quantit{(unobservable == 1 ? "y is" : "ies are")} not observable and got no value: " +
                string.Join("; ", final.Estimates.Where(e => e.Status == QuantityStatus.Unobservable).Select(e => e.Key)) + ".");
        }

        TextOutput.WriteNotice(console);
    }

    private static string Num(double v, string format) => TextOutput.Num(v, format);
}
