using System.Text.Json;

namespace Tieflow.Service.Tests.Cli;

public sealed class ReconcileCommandTests
{
    private static string Sample(string name) => Path.Combine(RepositoryPaths.ConfigSamples, name);

    // Narasimhan and Jordache, "Data Reconciliation and Gross Error Detection" (Gulf, 2000), heat exchanger with
    // bypass, reconciled values and tests as computed in docs/reference-data.md §4.
    [Fact]
    public void Json_HeatExchangerSample_MatchesReference()
    {
        CliRun run = CliRun.Of("calc", "reconcile", "--case", Sample("hx-bypass-reconcile.case.json"), "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        JsonElement root = doc.RootElement;
        double[] reconciled = [100.22, 64.50, 35.72, 64.50, 35.72, 100.22];
        JsonElement[] streams = [.. root.GetProperty("streams").EnumerateArray()];
        Assert.Equal(6, streams.Length);
        for (int i = 0; i < 6; i++)
        {
            JsonElement flow = streams[i].GetProperty("flow");
            Assert.True(Math.Abs(flow.GetProperty("value").GetDouble() - reconciled[i]) < 0.01);
            Assert.Equal("redundant", flow.GetProperty("status").GetString());
            Assert.True(flow.GetProperty("measured").GetDouble() > 0);
            Assert.True(flow.GetProperty("sigma").GetDouble() > 0);
        }

        JsonElement global = root.GetProperty("globalTest");
        Assert.True(Math.Abs(global.GetProperty("statistic").GetDouble() - 6.4075) < 1e-3);
        Assert.Equal(4, global.GetProperty("dof").GetInt32());
        Assert.True(Math.Abs(global.GetProperty("critical").GetDouble() - 9.488) < 1e-3);
        Assert.True(global.GetProperty("passed").GetBoolean());
        Assert.InRange(global.GetProperty("pValue").GetDouble(), 0, 1);
        JsonElement first = root.GetProperty("measurementTests")[0];
        Assert.Equal("S1", first.GetProperty("stream").GetString());
        Assert.Equal("flow", first.GetProperty("quantity").GetString());
        Assert.Equal(JsonValueKind.Null, first.GetProperty("component").ValueKind);
        Assert.True(Math.Abs(Math.Abs(first.GetProperty("normalized").GetDouble()) - 2.070) < 1e-3);
        Assert.True(Math.Abs(first.GetProperty("critical").GetDouble() - 2.631) < 1e-3);
        Assert.False(first.GetProperty("suspect").GetBoolean());
        Assert.Empty(root.GetProperty("suspects").EnumerateArray());
    }

    [Fact]
    public void Json_HeatExchangerVariant_NamesStreamTwo()
    {
        // Constructed variant of the same reference (docs/reference-data.md §4): +5 on stream 2.
        using var folder = new TempFolder();
        string file = folder.Write("case.json", File.ReadAllText(Sample("hx-bypass-reconcile.case.json")).Replace("64.45", "69.45", StringComparison.Ordinal));

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file, "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        JsonElement root = doc.RootElement;
        Assert.True(Math.Abs(root.GetProperty("globalTest").GetProperty("statistic").GetDouble() - 22.574) < 1e-3);
        Assert.False(root.GetProperty("globalTest").GetProperty("passed").GetBoolean());
        JsonElement[] suspects = [.. root.GetProperty("suspects").EnumerateArray()];
        Assert.Single(suspects);
        Assert.Equal("S2", suspects[0].GetProperty("stream").GetString());
        Assert.Equal("flow", suspects[0].GetProperty("quantity").GetString());
    }

    [Fact]
    public void Table_TernarySample_PrintsGlobalTest()
    {
        CliRun run = CliRun.Of("calc", "reconcile", "--case", Sample("x350-two-stage-reconcile.case.json"));

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("Global test", run.Output, StringComparison.Ordinal);
        Assert.Contains("raffinate-1", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Json_TernarySample_ClosesEveryBalance()
    {
        CliRun run = CliRun.Of("calc", "reconcile", "--case", Sample("x350-two-stage-reconcile.case.json"), "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using JsonDocument doc = JsonDocument.Parse(run.Output);
        var streams = doc.RootElement.GetProperty("streams").EnumerateArray().ToDictionary(
            s => s.GetProperty("id").GetString()!,
            s => (Flow: s.GetProperty("flow").GetProperty("value").GetDouble(),
                  Fractions: s.GetProperty("fractions").EnumerateObject().ToDictionary(p => p.Name, p => p.Value.GetProperty("value").GetDouble())));
        foreach (string c in new[] { "acetone", "water", "trichloroethane" })
        {
            double Component(string id) => streams[id].Flow * streams[id].Fractions[c];
            double stage1 = Component("feed") + Component("extract-2") - Component("raffinate-1") - Component("extract");
            double stage2 = Component("raffinate-1") + Component("solvent") - Component("raffinate") - Component("extract-2");
            Assert.True(Math.Abs(stage1) < 1e-6 && Math.Abs(stage2) < 1e-6, $"{c}: {stage1}, {stage2}");
        }
    }

    [Fact]
    public void Reconcile_NothingRedundant_SaysSoWithZeroDegreesOfFreedom()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", """
            { "nodes": ["A"], "streams": [{ "id": "in", "to": "A" }, { "id": "out", "from": "A" }],
              "measurements": [{ "stream": "in", "quantity": "flow", "value": 10, "sigma": 0.5 }] }
            """);

        CliRun json = CliRun.Of("calc", "reconcile", "--case", file, "--json");
        CliRun text = CliRun.Of("calc", "reconcile", "--case", file);

        Assert.True(json.ExitCode == 0, json.Error);
        using JsonDocument doc = JsonDocument.Parse(json.Output);
        Assert.Equal(0, doc.RootElement.GetProperty("globalTest").GetProperty("dof").GetInt32());
        Assert.Equal("nothing-redundant", doc.RootElement.GetProperty("status").GetString());
        JsonElement outFlow = doc.RootElement.GetProperty("streams")[1].GetProperty("flow");
        Assert.Equal("observable", outFlow.GetProperty("status").GetString());
        Assert.True(Math.Abs(outFlow.GetProperty("value").GetDouble() - 10) < 1e-12);
        Assert.Equal(0, text.ExitCode);
        Assert.Contains("Nothing is redundant", text.Output, StringComparison.Ordinal);
        Assert.Contains("0 degrees of freedom", text.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Reconcile_UnobservableStreams_GetNullValuesAndAreNamed()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", File.ReadAllText(Sample("hx-bypass-reconcile.case.json"))
            .Replace("""    { "stream": "S2", "quantity": "flow", "value": 64.45, "sigma": 1.0 },""", string.Empty, StringComparison.Ordinal)
            .Replace("""    { "stream": "S4", "quantity": "flow", "value": 64.20, "sigma": 1.0 },""", string.Empty, StringComparison.Ordinal)
            .Replace("""    { "stream": "S3", "quantity": "flow", "value": 34.65, "sigma": 1.0 },""", string.Empty, StringComparison.Ordinal)
            .Replace("""    { "stream": "S5", "quantity": "flow", "value": 36.44, "sigma": 1.0 },""", string.Empty, StringComparison.Ordinal));

        CliRun json = CliRun.Of("calc", "reconcile", "--case", file, "--json");
        CliRun text = CliRun.Of("calc", "reconcile", "--case", file);

        Assert.True(json.ExitCode == 0, json.Error);
        using JsonDocument doc = JsonDocument.Parse(json.Output);
        JsonElement s2 = doc.RootElement.GetProperty("streams")[1].GetProperty("flow");
        Assert.Equal("unobservable", s2.GetProperty("status").GetString());
        Assert.Equal(JsonValueKind.Null, s2.GetProperty("value").ValueKind);
        Assert.Equal(JsonValueKind.Null, s2.GetProperty("measured").ValueKind);
        Assert.Contains("not observable", text.Output, StringComparison.Ordinal);
        Assert.Contains("S2 flow", text.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Reconcile_NoConvergence_ExitsOneWithMessage()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", File.ReadAllText(Sample("x350-two-stage-reconcile.case.json"))
            .Replace("\"significance\": 0.05,", "\"significance\": 0.05, \"maxIterations\": 1,", StringComparison.Ordinal));

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file, "--json");

        Assert.Equal(1, run.ExitCode);
        Assert.Contains("did not converge", run.Error, StringComparison.Ordinal);
        Assert.Contains("after 1 iterations", run.Error, StringComparison.Ordinal);
        Assert.Empty(run.Output);
    }
}
