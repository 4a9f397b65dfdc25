using System.Text.Json;

namespace Tieflow.Service.Tests.Cli;

/// <summary>Reproducers of the physical-bounds findings of a fuzz campaign (invented networks and readings).</summary>
public sealed class ReconcileBoundsCommandTests
{
    [Fact]
    public void Json_MixedFractionOutsideItsInlets_HoldsAnInletAtZero()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", """
            { "components": ["a", "b"], "nodes": ["M"],
              "streams": [{ "id": "S1", "to": "M" }, { "id": "S2", "to": "M" }, { "id": "S3", "from": "M" }],
              "measurements": [
                { "stream": "S1", "quantity": "fraction", "component": "a", "value": 0.300, "sigma": 0.002 },
                { "stream": "S2", "quantity": "fraction", "component": "a", "value": 0.310, "sigma": 0.002 },
                { "stream": "S3", "quantity": "fraction", "component": "a", "value": 0.312, "sigma": 0.002 },
                { "stream": "S3", "quantity": "flow", "value": 100, "sigma": 1 } ] }
            """);

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file, "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        JsonElement s1 = doc.RootElement.GetProperty("streams")[0].GetProperty("flow");
        Assert.Equal(0, s1.GetProperty("value").GetDouble());
        Assert.True(s1.GetProperty("atBound").GetBoolean());
        JsonElement bound = doc.RootElement.GetProperty("activeBounds")[0];
        Assert.Equal("S1", bound.GetProperty("stream").GetString());
        Assert.Equal("flow", bound.GetProperty("quantity").GetString());
        foreach (JsonElement stream in doc.RootElement.GetProperty("streams").EnumerateArray())
        {
            Assert.True(stream.GetProperty("flow").GetProperty("value").GetDouble() >= 0);
        }

        CliRun text = CliRun.Of("calc", "reconcile", "--case", file);
        Assert.Contains("Held at a bound", text.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Calc_SigmasThatCarryNoInformationOrAreExact_AreRefusedAtTheBoundary()
    {
        // The engine treats a sigma of 1e308 as unmeasured and one of 1e-300 as exact (Core tests of the heat exchanger
        // with bypass, Narasimhan and Jordache, Data Reconciliation and Gross Error Detection, Gulf 2000); the command
        // line refuses both with the range it accepts, so that a typo in a case file never silently drops a meter.
        using var folder = new TempFolder();
        string file = folder.Write("case.json", """
            { "nodes": ["N1"], "streams": [{ "id": "S1", "to": "N1" }, { "id": "S2", "from": "N1" }],
              "measurements": [
                { "stream": "S1", "quantity": "flow", "value": 100, "sigma": 1e308 },
                { "stream": "S2", "quantity": "flow", "value": 98, "sigma": 1e-300 } ] }
            """);

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file);

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("$.measurements[0].sigma", run.Error, StringComparison.Ordinal);
        Assert.Contains("$.measurements[1].sigma", run.Error, StringComparison.Ordinal);
        Assert.Contains("leave a quantity unmeasured", run.Error, StringComparison.Ordinal);
    }
}
