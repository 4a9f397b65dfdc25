using System.Text.Json;

namespace Tieflow.Service.Tests.Samples;

/// <summary>
/// The JSON that people and scripts read, pinned in golden files under tests/Tieflow.Service.Tests/Golden.
/// Numbers compare within 1e-9 relative so that the last bits of floating point do not matter.
/// Regenerate after an intended change with: <c>TIEFLOW_UPDATE_GOLDEN=1 dotnet test tests/Tieflow.Service.Tests --filter GoldenOutputTests</c>
/// and review the diff.
/// </summary>
public sealed class GoldenOutputTests
{
    private static string GoldenFolder => Path.Combine(RepositoryPaths.Root, "tests", "Tieflow.Service.Tests", "Golden");

    public static TheoryData<string, string> Cases() => new()
    {
        { "split", "x300-split.case.json" },
        { "split", "e500-nrtl-split.case.json" },
        { "cascade", "x300-countercurrent.case.json" },
        { "cascade", "x300-crosscurrent.case.json" },
        { "cascade", "h10-leach-countercurrent.case.json" },
        { "cascade", "a700-uniquac-countercurrent.case.json" },
        { "cascade", "dilute-kremser-countercurrent.case.json" },
        { "design", "x300-design-stages.case.json" },
        { "design", "x300-design-solvent.case.json" },
        { "design", "x300-design-minimum-solvent.case.json" },
        { "reconcile", "hx-bypass-reconcile.case.json" },
        { "reconcile", "x350-two-stage-reconcile.case.json" },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void CalcJson_Sample_MatchesGoldenFile(string verb, string sample)
    {
        CliRun run = CliRun.Of("calc", verb, "--case", Path.Combine(RepositoryPaths.ConfigSamples, sample), "--json");
        Assert.True(run.ExitCode == 0, run.Error);
        string golden = Path.Combine(GoldenFolder, Path.ChangeExtension(sample, null).Replace(".case", string.Empty, StringComparison.Ordinal) + ".json");
        if (Environment.GetEnvironmentVariable("TIEFLOW_UPDATE_GOLDEN") == "1" || !File.Exists(golden))
        {
            Directory.CreateDirectory(GoldenFolder);
            File.WriteAllText(golden, run.Output);
            Assert.True(Environment.GetEnvironmentVariable("TIEFLOW_UPDATE_GOLDEN") == "1", $"golden file {golden} was missing and has been written; review and commit it");
            return;
        }

        using JsonDocument expected = JsonDocument.Parse(File.ReadAllText(golden));
        using JsonDocument actual = JsonDocument.Parse(run.Output);
        AssertSame(expected.RootElement, actual.RootElement, "$");
    }

    private static void AssertSame(JsonElement expected, JsonElement actual, string path)
    {
        Assert.True(expected.ValueKind == actual.ValueKind, $"{path}: expected {expected.ValueKind}, got {actual.ValueKind}");
        switch (expected.ValueKind)
        {
            case JsonValueKind.Object:
                string[] expectedKeys = expected.EnumerateObject().Select(p => p.Name).ToArray();
                string[] actualKeys = actual.EnumerateObject().Select(p => p.Name).ToArray();
                Assert.True(expectedKeys.SequenceEqual(actualKeys), $"{path}: keys differ: expected [{string.Join(", ", expectedKeys)}], got [{string.Join(", ", actualKeys)}]");
                foreach (JsonProperty p in expected.EnumerateObject())
                {
                    AssertSame(p.Value, actual.GetProperty(p.Name), $"{path}.{p.Name}");
                }

                break;
            case JsonValueKind.Array:
                Assert.True(expected.GetArrayLength() == actual.GetArrayLength(), $"{path}: expected {expected.GetArrayLength()} items, got {actual.GetArrayLength()}");
                for (int i = 0; i < expected.GetArrayLength(); i++)
                {
                    AssertSame(expected[i], actual[i], $"{path}[{i}]");
                }

                break;
            case JsonValueKind.Number:
                double e = expected.GetDouble(), a = actual.GetDouble();
                Assert.True(Math.Abs(e - a) <= 1e-9 * Math.Max(1, Math.Abs(e)), $"{path}: expected {e:R}, got {a:R}");
                break;
            default:
                Assert.Equal(expected.GetRawText(), actual.GetRawText());
                break;
        }
    }
}
