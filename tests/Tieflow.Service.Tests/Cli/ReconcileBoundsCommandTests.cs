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
    public void Json_MeterWithoutInformation_LeavesThreeDegreesOfFreedom()
    {
        // Heat exchanger with bypass (Narasimhan and Jordache, Data Reconciliation and Gross Error Detection, Gulf 2000)
        // with sigma 1e308 on S2: in effect unmeasured.
        using var folder = new TempFolder();
        string file = folder.Write("case.json", """
            { "nodes": ["splitter", "exchanger", "bypass", "mixer"],
              "streams": [{ "id": "S1", "to": "splitter" }, { "id": "S2", "from": "splitter", "to": "exchanger" }, { "id": "S3", "from": "splitter", "to": "bypass" },
                          { "id": "S4", "from": "exchanger", "to": "mixer" }, { "id": "S5", "from": "bypass", "to": "mixer" }, { "id": "S6", "from": "mixer" }],
              "measurements": [
                { "stream": "S1", "quantity": "flow", "value": 101.91, "sigma": 1 }, { "stream": "S2", "quantity": "flow", "value": 64.45, "sigma": 1e308 },
                { "stream": "S3", "quantity": "flow", "value": 34.65, "sigma": 1 }, { "stream": "S4", "quantity": "flow", "value": 64.20, "sigma": 1 },
                { "stream": "S5", "quantity": "flow", "value": 36.44, "sigma": 1 }, { "stream": "S6", "quantity": "flow", "value": 98.88, "sigma": 1e-300 } ] }
            """);

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file, "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.DoesNotContain("NaN", run.Output, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", run.Output, StringComparison.Ordinal);
        using JsonDocument doc = JsonDocument.Parse(run.Output);

        // S2 unmeasured and S6 exact: S1 = S6 is fixed, leaving S2 + S3 = S6 (S2 = S4), S3 = S5 and S4 + S5 = S6 over S3, S4, S5.
        Assert.Equal(3, doc.RootElement.GetProperty("globalTest").GetProperty("dof").GetInt32());
        Assert.Equal(98.88, doc.RootElement.GetProperty("streams")[0].GetProperty("flow").GetProperty("value").GetDouble(), 9);
    }

    [Fact]
    public void Calc_ExactReadingsThatContradict_ExitsOneSayingWhy()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", """
            { "nodes": ["N1"], "streams": [{ "id": "S1", "to": "N1" }, { "id": "S2", "from": "N1" }],
              "measurements": [
                { "stream": "S1", "quantity": "flow", "value": 100, "sigma": 1e-12 },
                { "stream": "S2", "quantity": "flow", "value": 98, "sigma": 1e-12 } ] }
            """);

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file);

        Assert.Equal(1, run.ExitCode);
        Assert.Contains("cannot be reconciled within the bounds", run.Error, StringComparison.Ordinal);
        Assert.Contains("S1 flow", run.Error, StringComparison.Ordinal);
    }
}
