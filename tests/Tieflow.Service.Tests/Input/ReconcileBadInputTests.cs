namespace Tieflow.Service.Tests.Input;

/// <summary>Malformed reconcile cases: exit code 2 and a message naming the file, the JSON path and what was expected.</summary>
public sealed class ReconcileBadInputTests
{
    // A valid base case (invented two-node ternary network); each row below breaks one thing.
    private const string Case = """
        {
          "components": ["a", "b"],
          "nodes": ["N1", "N2"],
          "streams": [
            { "id": "S1", "to": "N1" },
            { "id": "S2", "from": "N1", "to": "N2" },
            { "id": "S3", "from": "N2" }
          ],
          "measurements": [
            { "stream": "S1", "quantity": "flow", "value": 100, "sigma": 1 },
            { "stream": "S2", "quantity": "flow", "value": 99, "sigma": 1 },
            { "stream": "S3", "quantity": "flow", "value": 101, "sigma": 1 },
            { "stream": "S1", "quantity": "fraction", "component": "a", "value": 0.3, "sigma": 0.01 }
          ]
        }
        """;

    /// <summary>(name, case text, JSON path expected, words expected).</summary>
    public static TheoryData<string, string, string, string> Cases() => new()
    {
        { "stream names an unknown node", Case.Replace("\"from\": \"N1\", \"to\": \"N2\"", "\"from\": \"N1\", \"to\": \"N9\""), "$.streams[1].to", "'N9' is not a node" },
        { "node without streams", Case.Replace("\"nodes\": [\"N1\", \"N2\"]", "\"nodes\": [\"N1\", \"N2\", \"N3\"]"), "$.nodes[2]", "has no stream" },
        { "duplicate measurement", Case.Replace("\"stream\": \"S2\", \"quantity\": \"flow\"", "\"stream\": \"S1\", \"quantity\": \"flow\""), "$.measurements[1]", "measures S1 flow again" },
        { "sigma zero", Case.Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"sigma\": 0"), "$.measurements[1].sigma", "above 0" },
        { "sigma negative", Case.Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"sigma\": -2"), "$.measurements[1].sigma", "above 0" },
        { "sigma NaN", Case.Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"sigma\": NaN"), "$", "NaN" },
        { "fraction above one", Case.Replace("\"value\": 0.3", "\"value\": 1.3"), "$.measurements[3].value", "between 0 and 1" },
        { "fraction below zero", Case.Replace("\"value\": 0.3", "\"value\": -0.1"), "$.measurements[3].value", "between 0 and 1" },
        { "undeclared component", Case.Replace("\"component\": \"a\"", "\"component\": \"z\""), "$.measurements[3].component", "'z' is not a declared component" },
        { "empty network", Case.Replace("\"nodes\": [\"N1\", \"N2\"]", "\"nodes\": []"), "$.nodes", "at least 1 item" },
        { "no streams", Case[..Case.IndexOf("\"streams\"", StringComparison.Ordinal)] + "\"streams\": [], \"measurements\": [] }", "$.streams", "at least 1 item" },
        { "unknown key", Case.Replace("\"nodes\":", "\"nodez\": [], \"nodes\":"), "$.nodez", "unknown key 'nodez'" },
        { "unknown key in measurement", Case.Replace("\"sigma\": 0.01", "\"sigma\": 0.01, \"unit\": \"-\""), "$.measurements[3].unit", "unknown key 'unit'" },
        { "stream with no ends", Case.Replace("{ \"id\": \"S1\", \"to\": \"N1\" }", "{ \"id\": \"S1\" }"), "$.streams[0]", "neither \"from\" nor \"to\"" },
        { "stream to itself", Case.Replace("\"from\": \"N1\", \"to\": \"N2\"", "\"from\": \"N1\", \"to\": \"N1\""), "$.streams[1].to", "same node" },
        { "duplicate stream", Case.Replace("{ \"id\": \"S3\"", "{ \"id\": \"S2\""), "$.streams[2].id", "declared twice" },
        { "duplicate node", Case.Replace("\"nodes\": [\"N1\", \"N2\"]", "\"nodes\": [\"N1\", \"N2\", \"N1\"]"), "$.nodes[2]", "declared twice" },
        { "measurement of an unknown stream", Case.Replace("\"stream\": \"S3\"", "\"stream\": \"S7\""), "$.measurements[2].stream", "'S7' is not a stream" },
        { "unknown quantity", Case.Replace("\"quantity\": \"fraction\"", "\"quantity\": \"fractoin\""), "$.measurements[3].quantity", "expected one of" },
        { "fraction without component", Case.Replace("\"component\": \"a\", ", string.Empty), "$.measurements[3].component", "required key is missing" },
        { "flow with a component", Case.Replace("\"quantity\": \"flow\", \"value\": 100", "\"quantity\": \"flow\", \"component\": \"a\", \"value\": 100"), "$.measurements[0].component", "has no component" },
        { "fraction in a flow-only network", Case.Replace("\"components\": [\"a\", \"b\"],", string.Empty), "$.measurements[3].quantity", "no components" },
        { "flow as text", Case.Replace("\"value\": 100", "\"value\": \"100\""), "$.measurements[0].value", "expected a finite number" },
        { "significance out of range", Case.Replace("\"nodes\":", "\"significance\": 0.7, \"nodes\":"), "$.significance", "between 1E-06 and 0.5" },
        // Reproducers of the fuzz campaign (issue 12): numbers at the boundary that once reached the writer as NaN or infinity.
        { "significance 1e-300", Case.Replace("\"nodes\":", "\"significance\": 1e-300, \"nodes\":"), "$.significance", "between 1E-06 and 0.5" },
        { "sigma 1e-300", Case.Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"sigma\": 1e-300"), "$.measurements[1].sigma", "expected a sigma between" },
        { "sigma 1e308", Case.Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"sigma\": 1e308"), "$.measurements[1].sigma", "leave a quantity unmeasured" },
        { "fraction sigma above one", Case.Replace("\"sigma\": 0.01", "\"sigma\": 2"), "$.measurements[3].sigma", "between 1E-06 and 1" },
        { "flow reading 1e308", Case.Replace("\"value\": 99,", "\"value\": 1e308,"), "$.measurements[1].value", "between -1E+09 and 1E+09" },
        { "flow reading -1e308", Case.Replace("\"value\": 99,", "\"value\": -1e308,"), "$.measurements[1].value", "between -1E+09 and 1E+09" },
        { "relative sigma 1e-300", Case.Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"relativeSigma\": 1e-300"), "$.measurements[1].relativeSigma", "between 1E-06 and 1" },
        { "component id with markup", Case.Replace("[\"a\", \"b\"]", "[\"a[b\", \"b\"]"), "$.components[0]", "not a valid id" },
        { "stream id with colour markup", Case.Replace("\"id\": \"S3\"", "\"id\": \"[red]S3[/]\"").Replace("\"stream\": \"S3\"", "\"stream\": \"[red]S3[/]\""), "$.streams[2].id", "not a valid id" },
        { "node id with a control character", Case.Replace("[\"N1\", \"N2\"]", "[\"N1\", \"N\\u00072\"]"), "$.nodes[1]", "not a valid id" },
        { "sigma missing", Case.Replace(", \"sigma\": 0.01", string.Empty), "$.measurements[3]", "standard deviation is missing" },
        { "sigma and relative sigma", Case.Replace("\"sigma\": 0.01", "\"sigma\": 0.01, \"relativeSigma\": 0.02"), "$.measurements[3]", "not both" },
        { "relative sigma of a zero reading", Case.Replace("\"value\": 100, \"sigma\": 1", "\"value\": 0, \"relativeSigma\": 0.01"), "$.measurements[0].relativeSigma", "zero reading" },
        { "measurements missing", Case[..Case.IndexOf(",\n  \"measurements\"", StringComparison.Ordinal)] + "}", "$.measurements", "required key is missing" },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Calc_MalformedCase_ExitsTwoNamingFilePathAndExpectation(string name, string text, string path, string words)
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", text);

        foreach (string[] args in new[] { new[] { "calc", "reconcile", "--case", file }, new[] { "check", file } })
        {
            CliRun run = CliRun.Of(args);

            Assert.True(run.ExitCode == 2, $"{name} ({args[0]}): expected exit code 2, got {run.ExitCode}; stdout: {run.Output} stderr: {run.Error}");
            string line = run.Error.Split('\n').FirstOrDefault(l => l.Contains("error:", StringComparison.Ordinal) && l.Contains(path, StringComparison.Ordinal)) ?? string.Empty;
            Assert.True(line.Length > 0, $"{name}: no error line names the path {path}; stderr: {run.Error}");
            Assert.Contains(file, line, StringComparison.Ordinal);
            Assert.Contains(words, line, StringComparison.Ordinal);
            if (args[0] == "calc")
            {
                Assert.Empty(run.Output);
            }
        }
    }

    [Fact]
    public void Calc_CaseWithSeveralProblems_ListsEveryOne()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", Case
            .Replace("\"value\": 99, \"sigma\": 1", "\"value\": 99, \"sigma\": 0")
            .Replace("\"component\": \"a\"", "\"component\": \"z\"")
            .Replace("\"to\": \"N2\"", "\"to\": \"N9\""));

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file);

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("$.measurements[1].sigma", run.Error, StringComparison.Ordinal);
        Assert.Contains("$.measurements[3].component", run.Error, StringComparison.Ordinal);
        Assert.Contains("$.streams[1].to", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Calc_RelativeSigma_IsAFractionOfTheReading()
    {
        // S1 = S2 = S3 with sigma 2 % of each reading: the flows reconcile to the weighted mean (weights 1/sigma^2);
        // the readings are close enough for the global test to pass, so nothing is eliminated.
        using var folder = new TempFolder();
        string file = folder.Write("case.json", """
            { "nodes": ["N1", "N2"], "streams": [{ "id": "S1", "to": "N1" }, { "id": "S2", "from": "N1", "to": "N2" }, { "id": "S3", "from": "N2" }],
              "measurements": [
                { "stream": "S1", "quantity": "flow", "value": 100, "relativeSigma": 0.02 },
                { "stream": "S2", "quantity": "flow", "value": 98, "relativeSigma": 0.02 },
                { "stream": "S3", "quantity": "flow", "value": 102, "sigma": 2.04 } ] }
            """);

        CliRun run = CliRun.Of("calc", "reconcile", "--case", file, "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = System.Text.Json.JsonDocument.Parse(run.Output);
        double[] sigma = [2.0, 1.96, 2.04];
        double[] value = [100, 98, 102];
        double mean = value.Select((v, i) => v / (sigma[i] * sigma[i])).Sum() / sigma.Sum(s => 1 / (s * s));
        double reconciled = doc.RootElement.GetProperty("streams")[0].GetProperty("flow").GetProperty("value").GetDouble();
        Assert.True(Math.Abs(reconciled - mean) < 1e-9, $"{reconciled} vs {mean}");
    }

    [Fact]
    public void Check_ValidCase_ExitsZero()
    {
        using var folder = new TempFolder();
        string file = folder.Write("case.json", Case);
        CliRun run = CliRun.Of("check", file);
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("reconcile case", run.Output, StringComparison.Ordinal);
    }
}
