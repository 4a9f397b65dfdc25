using System.Text.Json;
using Tieflow.Service.Tests.Input;

namespace Tieflow.Service.Tests.Hardening;

/// <summary>Non-finite numbers never reach an output (issue 12 §2).</summary>
public sealed class NonFiniteOutputTests
{
    private static readonly string NoSoluteSplit = BadInputTests.SplitCase.Replace("\"acetone\": 0.3, \"water\": 0.7", "\"acetone\": 0, \"water\": 1", StringComparison.Ordinal);

    [Fact]
    public void Split_InletsWithoutSolute_KAndSelectivityAreNullInJson()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", BadInputTests.System);
        string file = folder.Write("case.json", NoSoluteSplit);

        CliRun run = CliRun.Of("calc", "split", "--case", file, "--json");

        Assert.True(run.ExitCode == 0, run.Error);
        using var doc = JsonDocument.Parse(run.Output);
        if (doc.RootElement.GetProperty("phases").GetInt32() == 2)
        {
            Assert.Equal(JsonValueKind.Null, doc.RootElement.GetProperty("distributionCoefficient").ValueKind);
            Assert.Equal(JsonValueKind.Null, doc.RootElement.GetProperty("selectivity").ValueKind);
        }

        Assert.DoesNotContain("NaN", run.Output, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", run.Output, StringComparison.Ordinal);
    }

    [Fact]
    public void Split_InletsWithoutSolute_TextSaysNotDefined()
    {
        using var folder = new TempFolder();
        folder.Write("system.json", BadInputTests.System);
        string file = folder.Write("case.json", NoSoluteSplit);

        CliRun run = CliRun.Of("calc", "split", "--case", file);

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.DoesNotContain("NaN", run.Output, StringComparison.Ordinal);
        Assert.DoesNotContain("∞", run.Output, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", run.Output, StringComparison.Ordinal);
        if (run.Output.Contains("distribution coefficient", StringComparison.Ordinal))
        {
            Assert.Contains("K = not defined", run.Output, StringComparison.Ordinal);
        }
    }
}
