namespace Tieflow.Service.Tests.Cli;

public sealed class HelpTests
{
    [Theory]
    [InlineData("--help")]
    [InlineData("calc", "--help")]
    [InlineData("calc", "split", "--help")]
    [InlineData("calc", "cascade", "--help")]
    [InlineData("calc", "design", "--help")]
    [InlineData("check", "--help")]
    public void Help_EveryCommand_ExitsZeroWithUsage(params string[] args)
    {
        CliRun run = CliRun.Of(args);
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("Usage:", run.Output, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("calc", "split")]
    [InlineData("calc", "frobnicate", "--case", "x.json")]
    [InlineData("nonsense")]
    public void Usage_Wrong_ExitsTwo(params string[] args)
    {
        CliRun run = CliRun.Of(args);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("error:", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Design_InfeasibleTarget_ExitsOneSayingWhatToChange()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", Input.BadInputTests.System);
        // 80 kg/h of solvent for 1000 kg/h of 30% feed cannot reach 1% acetone however many stages there are.
        string file = folder.Write("case.json", Input.BadInputTests.DesignCase.Replace("\"flow\": 100", "\"flow\": 1000").Replace("0.05", "0.01"));

        CliRun run = CliRun.Of("calc", "design", "--case", file);

        Assert.Equal(1, run.ExitCode);
        Assert.Contains("raise the solvent flow above", run.Error, StringComparison.Ordinal);
    }
}
