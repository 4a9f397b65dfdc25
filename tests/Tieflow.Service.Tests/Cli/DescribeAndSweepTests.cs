using System.Text.Json;
using Tieflow.Service.Tests.Input;

namespace Tieflow.Service.Tests.Cli;

/// <summary><c>tieflow describe system</c>, <c>--sweep</c> and the cross-current solvent list (issue 10 §3).</summary>
public sealed class DescribeAndSweepTests
{
    private static string Sample(string name) => Path.Combine(RepositoryPaths.ConfigSamples, name);

    [Fact]
    public void Describe_TieLineSystem_GivesTheFitsOfThePublishedTable()
    {
        CliRun run = CliRun.Of("describe", "system", Sample("acetone-water-tce.system.json"), "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = JsonDocument.Parse(run.Output);
        JsonElement root = doc.RootElement;
        Assert.Equal(7, root.GetProperty("tieLines").GetArrayLength());

        // Othmer-Tobias a = 0.6815, b = 1.1173 (R^2 0.99992) and Hand a' = 0.6217, b' = 1.0763 (R^2 0.99992): least-squares
        // fits (natural logs) to the seven tie lines of Treybal, Weber and Daley, Ind. Eng. Chem. 38, 817 (1946), as
        // tabulated in Treybal, Mass-Transfer Operations, 3rd ed., ch. 10 (computed; docs/reference-data.md §1).
        JsonElement ot = root.GetProperty("othmerTobias");
        Assert.Equal(0.6815, ot.GetProperty("a").GetDouble(), 1e-4);
        Assert.Equal(1.1173, ot.GetProperty("b").GetDouble(), 1e-4);
        Assert.Equal(0.99992, ot.GetProperty("rSquared").GetDouble(), 1e-5);
        JsonElement hand = root.GetProperty("hand");
        Assert.Equal(0.6217, hand.GetProperty("a").GetDouble(), 1e-4);
        Assert.Equal(1.0763, hand.GetProperty("b").GetDouble(), 1e-4);
        Assert.Equal(JsonValueKind.Object, root.GetProperty("plaitPoint").ValueKind);
        Assert.StartsWith("Advisory only", root.GetProperty("notice").GetString(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("ethanol-water-ethyl-acetate.nrtl.system.json")]
    [InlineData("benzene-heptane-acetonitrile.uniquac.system.json")]
    [InlineData("dilute-demo.distribution.system.json")]
    public void Describe_EverySampleSystem_PrintsTieLinesWithKAndSelectivity(string sample)
    {
        CliRun run = CliRun.Of("describe", "system", Sample(sample));
        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Contains("selectivity", run.Output, StringComparison.Ordinal);
        Assert.DoesNotContain("NaN", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Describe_CaseFile_SaysItIsNotASystemFile()
    {
        CliRun run = CliRun.Of("describe", "system", Sample("x300-split.case.json"));
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("tieflow calc split", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Sweep_CascadeOverSolvent_OneCsvRowPerValueWithRisingRecovery()
    {
        CliRun run = CliRun.Of("calc", "cascade", "--case", Sample("x300-countercurrent.case.json"), "--sweep", "solvent=200:1000:5");

        Assert.True(run.ExitCode == 0, run.Error);
        string[] lines = run.Output.Trim().Split('\n');
        Assert.Equal("solvent,solventToFeed,recovery,raffinateSolute,extractSolute,raffinateFlow,extractFlow,status,message", lines[0]);
        Assert.Equal(6, lines.Length);
        double[] recovery = lines.Skip(1).Select(l => double.Parse(l.Split(',')[2], System.Globalization.CultureInfo.InvariantCulture)).ToArray();
        Assert.True(recovery.Zip(recovery.Skip(1)).All(p => p.Second > p.First), string.Join(", ", recovery));
    }

    [Fact]
    public void Sweep_DesignOverEfficiency_JsonCarriesEveryPoint()
    {
        CliRun run = CliRun.Of("calc", "design", "--case", Sample("x300-design-stages.case.json"), "--sweep", "efficiency=0.6:1:3", "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = JsonDocument.Parse(run.Output);
        JsonElement points = doc.RootElement.GetProperty("points");
        Assert.Equal(3, points.GetArrayLength());
        Assert.True(points[0].GetProperty("fractionalStages").GetDouble() > points[2].GetProperty("fractionalStages").GetDouble());
        Assert.True(doc.RootElement.TryGetProperty("notice", out _));
    }

    [Theory]
    [InlineData("solvent=1:2")]
    [InlineData("trays=1:2:3")]
    [InlineData("efficiency=0:1:3")]
    [InlineData("solvent=1:2:5000")]
    public void Sweep_BadSpecification_ExitsTwo(string sweep)
    {
        CliRun run = CliRun.Of("calc", "cascade", "--case", Sample("x300-countercurrent.case.json"), "--sweep", sweep);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("--sweep", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Crosscurrent_SolventFlowPerStage_EqualListMatchesOneFlow()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", BadInputTests.System);
        string one = folder.Write("one.json", BadInputTests.CascadeCase.Replace("countercurrent", "crosscurrent", StringComparison.Ordinal));
        string list = folder.Write("list.json", BadInputTests.CascadeCase.Replace("countercurrent", "crosscurrent", StringComparison.Ordinal)
            .Replace("\"flow\": 80", "\"flow\": [80, 80, 80]", StringComparison.Ordinal));
        string falling = folder.Write("falling.json", BadInputTests.CascadeCase.Replace("countercurrent", "crosscurrent", StringComparison.Ordinal)
            .Replace("\"flow\": 80", "\"flow\": [120, 80, 40]", StringComparison.Ordinal));

        CliRun a = CliRun.Of("calc", "cascade", "--case", one, "--json");
        CliRun b = CliRun.Of("calc", "cascade", "--case", list, "--json");
        CliRun c = CliRun.Of("calc", "cascade", "--case", falling, "--json");

        Assert.True(a.ExitCode == 0 && b.ExitCode == 0 && c.ExitCode == 0, a.Error + b.Error + c.Error);
        double Recovery(CliRun r) => JsonDocument.Parse(r.Output).RootElement.GetProperty("recovery").GetDouble();
        Assert.Equal(Recovery(a), Recovery(b), 1e-9);
        Assert.NotEqual(Recovery(a), Recovery(c), 1e-6);
    }

    [Fact]
    public void Crosscurrent_SolventListOnACountercurrentCase_IsBadInput()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", BadInputTests.System);
        string file = folder.Write("case.json", BadInputTests.CascadeCase.Replace("\"flow\": 80", "\"flow\": [80, 80, 80]", StringComparison.Ordinal));
        CliRun run = CliRun.Of("check", file);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("$.solvent.flow", run.Error, StringComparison.Ordinal);
        Assert.Contains("for cross-current cascades", run.Error, StringComparison.Ordinal);
    }
}
