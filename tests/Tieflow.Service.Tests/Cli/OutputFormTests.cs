using System.Text.Json;
using Tieflow.Service.Tests.Input;

namespace Tieflow.Service.Tests.Cli;

/// <summary>Outputs that fit a person's habits (issue 10 §3): no wrapping, no trailing spaces, JSON everywhere, errors as JSON, the right command named.</summary>
public sealed class OutputFormTests
{
    private static string Sample(string name) => Path.Combine(RepositoryPaths.ConfigSamples, name);

    [Theory]
    [InlineData("split", "x300-split.case.json")]
    [InlineData("cascade", "x300-countercurrent.case.json")]
    [InlineData("design", "x300-design-stages.case.json")]
    [InlineData("reconcile", "hx-bypass-reconcile.case.json")]
    [InlineData("reconcile", "x350-two-stage-reconcile.case.json")]
    public void Text_RedirectedOutput_IsNotWrappedAndHasNoTrailingSpaces(string verb, string sample)
    {
        CliRun run = CliRun.Of("calc", verb, "--case", Sample(sample));
        Assert.True(run.ExitCode == 0, run.Error);
        string[] lines = run.Output.Split('\n');
        Assert.All(lines, l => Assert.False(l.TrimEnd('\r').EndsWith(' '), $"trailing space in '{l}'"));

        // The advisory notice is one sentence pair of about 150 characters: on one line, not broken at 120 columns.
        Assert.Contains(lines, l => l.StartsWith("Advisory only", StringComparison.Ordinal) && l.TrimEnd().EndsWith("govern.", StringComparison.Ordinal));
    }

    [Fact]
    public void Text_StreamTable_HeadersCarryBasisAndUnit()
    {
        CliRun run = CliRun.Of("calc", "cascade", "--case", Sample("x300-countercurrent.case.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("flow kg/h", run.Output, StringComparison.Ordinal);
        Assert.Contains("mass fr. acetone", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Text_Reconcile_SaysWhichRunTheTestsAndEstimatesComeFrom()
    {
        CliRun run = CliRun.Of("calc", "reconcile", "--case", Sample("hx-bypass-reconcile.case.json"));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("case flow unit", run.Output, StringComparison.Ordinal);
        Assert.Contains("from the one run with every measurement", run.Output, StringComparison.Ordinal);
        Assert.Contains("Tests of the run with every measurement", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Check_Json_ListsFilesKindsAndTheNotice()
    {
        using var folder = new TempFolder();
        string system = folder.Write("system.json", BadInputTests.System);
        string bad = folder.Write("case.json", BadInputTests.SplitCase.Replace("\"flow\": 100", "\"flow\": -5", StringComparison.Ordinal));

        CliRun run = CliRun.Of("check", system, bad, "--json");

        Assert.Equal(2, run.ExitCode);
        using var doc = JsonDocument.Parse(run.Output);
        JsonElement files = doc.RootElement.GetProperty("files");
        Assert.Equal("system", files[0].GetProperty("kind").GetString());
        Assert.True(files[0].GetProperty("valid").GetBoolean());
        Assert.False(files[1].GetProperty("valid").GetBoolean());
        Assert.Equal("$.inlets[0].flow", files[1].GetProperty("problems")[0].GetProperty("path").GetString());
        Assert.False(doc.RootElement.GetProperty("valid").GetBoolean());
        Assert.StartsWith("Advisory only", doc.RootElement.GetProperty("notice").GetString(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("split", "x300-split.case.json")]
    [InlineData("cascade", "x300-countercurrent.case.json")]
    [InlineData("cascade", "x300-crosscurrent.case.json")]
    [InlineData("design", "x300-design-stages.case.json")]
    [InlineData("design", "x300-design-minimum-solvent.case.json")]
    [InlineData("reconcile", "hx-bypass-reconcile.case.json")]
    public void Json_EveryCalcOutput_CarriesTheNotice(string verb, string sample)
    {
        CliRun run = CliRun.Of("calc", verb, "--case", Sample(sample), "--json");
        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = JsonDocument.Parse(run.Output);
        Assert.StartsWith("Advisory only", doc.RootElement.GetProperty("notice").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Json_BadInput_ErrorIsJsonOnStandardErrorWithTheSameExitCode()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", BadInputTests.System);
        string file = folder.Write("case.json", BadInputTests.SplitCase.Replace("\"flow\": 100", "\"flow\": -5", StringComparison.Ordinal));

        CliRun run = CliRun.Of("calc", "split", "--case", file, "--json");

        Assert.Equal(2, run.ExitCode);
        Assert.Empty(run.Output);
        using var doc = JsonDocument.Parse(run.Error);
        JsonElement error = doc.RootElement.GetProperty("error");
        Assert.Equal(file, error.GetProperty("file").GetString());
        Assert.Equal("$.inlets[0].flow", error.GetProperty("path").GetString());
        Assert.Contains("between 0 and", error.GetProperty("message").GetString(), StringComparison.Ordinal);
        Assert.Equal(2, doc.RootElement.GetProperty("exitCode").GetInt32());
    }

    [Fact]
    public void Json_UsageError_IsJsonOnStandardError()
    {
        CliRun run = CliRun.Of("calc", "split", "--json");
        Assert.Equal(2, run.ExitCode);
        using var doc = JsonDocument.Parse(run.Error);
        Assert.Contains("--case", doc.RootElement.GetProperty("error").GetProperty("message").GetString(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("split", "x300-countercurrent.case.json", "tieflow calc cascade")]
    [InlineData("cascade", "x300-design-stages.case.json", "tieflow calc design")]
    [InlineData("design", "x300-countercurrent.case.json", "tieflow calc cascade")]
    [InlineData("reconcile", "x300-split.case.json", "tieflow calc split")]
    [InlineData("split", "hx-bypass-reconcile.case.json", "tieflow calc reconcile")]
    public void Calc_CaseGivenToTheWrongCommand_NamesTheRightOne(string verb, string sample, string command)
    {
        CliRun run = CliRun.Of("calc", verb, "--case", Sample(sample));
        Assert.Equal(2, run.ExitCode);
        Assert.Contains(command, run.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("unknown key", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Version_PrintsTheVersion()
    {
        CliRun run = CliRun.Of("--version");
        Assert.Equal(0, run.ExitCode);
        Assert.Matches(@"^\d+\.\d+\.\d+", run.Output);
    }

    [Fact]
    public void Distribution_SystemWithoutTemperature_IsValidAtAnyTemperature()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", BadInputTests.Distribution.Replace("\"temperature\": 298.15, ", string.Empty, StringComparison.Ordinal));
        string feed = """{ "flow": 100, "composition": { "solute": 0.1, "water": 0.9, "oil": 0 } }""";
        string solvent = """{ "flow": 80, "composition": { "solute": 0, "water": 0, "oil": 1 } }""";
        string file = folder.Write("case.json", $$"""{ "system": "system.json", "temperature": 340, "arrangement": "countercurrent", "stages": 3, "feed": {{feed}}, "solvent": {{solvent}} }""");

        Assert.True(CliRun.Of("check", Path.Combine(folder.Path, "system.json")).ExitCode == 0);
        CliRun run = CliRun.Of("calc", "cascade", "--case", file, "--json");
        Assert.True(run.ExitCode == 0, run.Error);
    }
}
