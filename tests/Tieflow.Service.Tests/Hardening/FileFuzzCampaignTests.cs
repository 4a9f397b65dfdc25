using System.Diagnostics;
using System.Globalization;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using Xunit.Abstractions;

namespace Tieflow.Service.Tests.Hardening;

/// <summary>
/// A fuzz campaign over every file kind the calculator reads (issue 12 §7): the sample system and case files,
/// mutated at the byte level (truncation, deleted, inserted and changed characters) and at the JSON level (extreme
/// numbers, hostile strings and ids, removed and repeated keys, values of the wrong type, deep nesting), each run
/// through <c>tieflow check</c> and the command that takes it, with and without <c>--json</c>. Fixed seed; the number
/// of mutants is fixed and a time budget only stops the campaign early on a slow machine (the counts are printed).
/// What must hold for every run: exit code 0, 1 or 2, never 3 (no internal error); no NaN or infinity in any output;
/// JSON output that parses; and check and calc agree on whether the input is valid.
/// </summary>
[Trait("Category", "Fuzz")]
public sealed class FileFuzzCampaignTests(ITestOutputHelper output)
{
    private const int Seed = 20261202;
    private const int MutantsPerFile = 40;
    private static readonly TimeSpan Budget = TimeSpan.FromSeconds(90);

    private static readonly (string Sample, string? Verb)[] Samples =
    [
        ("acetone-water-tce.system.json", null),
        ("ethanol-water-ethyl-acetate.nrtl.system.json", null),
        ("benzene-heptane-acetonitrile.uniquac.system.json", null),
        ("dilute-demo.distribution.system.json", null),
        ("leach-demo.distribution.system.json", null),
        ("x300-split.case.json", "split"),
        ("e500-nrtl-split.case.json", "split"),
        ("x300-countercurrent.case.json", "cascade"),
        ("x300-crosscurrent.case.json", "cascade"),
        ("dilute-kremser-countercurrent.case.json", "cascade"),
        ("x300-design-stages.case.json", "design"),
        ("x300-design-solvent.case.json", "design"),
        ("x300-design-minimum-solvent.case.json", "design"),
        ("hx-bypass-reconcile.case.json", "reconcile"),
        ("x350-two-stage-reconcile.case.json", "reconcile"),
        ("brackenmoor.plant.json", null),
    ];

    private static readonly string[] HostileStrings = ["", " ", "a[b", "[red]acetone[/]", "x\u0000y", "\u0007", new string('z', 5000), "../../etc/passwd", "/dev/zero", "NaN", "1e308", "water"];

    private static readonly double[] ExtremeNumbers = [0, -1, 1e308, -1e308, 1e-300, -1e-300, 1e9, 1e15, 0.5, 1, 2, 200, 201, 1e-6, 0.999999999999];

    [Fact]
    public async Task Campaign_EveryMutant_EndsCleanlyAndCheckAgreesWithCalc()
    {
        var random = new Random(Seed);
        using var folder = new TempFolder();
        foreach (string file in Directory.EnumerateFiles(RepositoryPaths.ConfigSamples, "*.json"))
        {
            File.Copy(file, Path.Combine(folder.Path, Path.GetFileName(file)));
        }

        var counts = new Dictionary<string, int>();
        var failures = new List<string>();
        int files = 0, runs = 0;
        var clock = Stopwatch.StartNew();
        foreach (var (sample, verb) in Samples)
        {
            string original = File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, sample));
            for (int m = 0; m < MutantsPerFile && clock.Elapsed < Budget; m++)
            {
                (string text, string how) = Mutate(original, random);
                string name = $"m{files}.{(verb is null ? "system" : "case")}.json";
                string path = Path.Combine(folder.Path, name);
                File.WriteAllText(path, text);
                files++;

                // A mutated system file is also read through a case that names it.
                string? viaCase = null;
                if (verb is null)
                {
                    viaCase = Path.Combine(folder.Path, $"m{files}.via.case.json");
                    File.WriteAllText(viaCase, File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "x300-split.case.json"))
                        .Replace("acetone-water-tce.system.json", name, StringComparison.Ordinal));
                }

                string target = viaCase ?? path;
                string command = verb ?? "split";
                CliRun check = await Run(["check", target]);
                CliRun calc = await Run(["calc", command, "--case", target]);
                CliRun json = await Run(["calc", command, "--case", target, "--json"]);
                runs += 3;
                foreach (var (label, run) in new[] { ("check", check), ("calc", calc), ("calc --json", json) })
                {
                    string key = $"{label} exit {run.ExitCode}";
                    counts[key] = counts.GetValueOrDefault(key) + 1;
                    string problem = Problem(run, label == "calc --json");
                    if (problem.Length > 0)
                    {
                        failures.Add($"{sample} ({how}) {label}: {problem}\n  stderr: {Cut(run.Error)}");
                    }
                }

                // check and calc run the same validation: both say bad input, or neither does.
                if ((check.ExitCode == 2) != (calc.ExitCode == 2) || calc.ExitCode != json.ExitCode)
                {
                    failures.Add($"{sample} ({how}): check exit {check.ExitCode}, calc exit {calc.ExitCode}, calc --json exit {json.ExitCode}\n" +
                        $"  check: {Cut(check.Error + check.Output)}\n  calc: {Cut(calc.Error)}");
                }
            }
        }

        output.WriteLine($"fuzz campaign: seed {Seed}, {files} mutated files, {runs} runs in {clock.Elapsed.TotalSeconds:F1} s");
        foreach (var (key, n) in counts.OrderBy(c => c.Key, StringComparer.Ordinal))
        {
            output.WriteLine($"  {key}: {n}");
        }

        Assert.True(files >= Samples.Length, "the time budget stopped the campaign before every sample was mutated once");
        Assert.True(failures.Count == 0, $"{failures.Count} failure(s):\n" + string.Join("\n", failures.Take(20)));
    }

    private static async Task<CliRun> Run(string[] args)
    {
        Task<CliRun> run = Task.Run(() => CliRun.Of(args));
        try
        {
            return await run.WaitAsync(TimeSpan.FromSeconds(120));
        }
        catch (TimeoutException)
        {
            return new CliRun(-1, string.Empty, $"did not end within 120 s: {string.Join(' ', args)}");
        }
    }

    private static string Problem(CliRun run, bool json)
    {
        if (run.ExitCode is < 0 or > 2)
        {
            return $"exit code {run.ExitCode}";
        }

        if (run.Error.Contains("internal error", StringComparison.Ordinal))
        {
            return "internal error";
        }

        foreach (string bad in new[] { "NaN", "Infinity", "∞" })
        {
            if (run.Output.Contains(bad, StringComparison.Ordinal) && !run.Output.Contains("\"NaN\"", StringComparison.Ordinal))
            {
                return $"'{bad}' in the output";
            }
        }

        if (json && run.ExitCode == 0)
        {
            try
            {
                using var doc = JsonDocument.Parse(run.Output);
                if (!doc.RootElement.TryGetProperty("notice", out _))
                {
                    return "JSON output without the notice";
                }
            }
            catch (JsonException e)
            {
                return $"JSON output does not parse: {e.Message}";
            }
        }

        if (json && run.ExitCode != 0 && run.Error.Length > 0)
        {
            try
            {
                using var doc = JsonDocument.Parse(run.Error);
                _ = doc.RootElement.GetProperty("error").GetProperty("message");
            }
            catch (Exception e) when (e is JsonException or KeyNotFoundException or InvalidOperationException)
            {
                return $"error under --json is not JSON: {e.Message}";
            }
        }

        return string.Empty;
    }

    private static (string Text, string How) Mutate(string text, Random random)
    {
        int kind = random.Next(10);
        if (kind < 3)
        {
            return ByteMutation(text, random);
        }

        JsonNode? root;
        try
        {
            root = JsonNode.Parse(text, documentOptions: new JsonDocumentOptions { CommentHandling = JsonCommentHandling.Skip });
        }
        catch (JsonException)
        {
            return ByteMutation(text, random);
        }

        var nodes = new List<JsonNode>();
        Collect(root!, nodes);
        JsonNode target = nodes[random.Next(nodes.Count)];
        string how;
        switch (kind)
        {
            case 3:
            case 4:
                var numbers = nodes.OfType<JsonValue>().Where(v => v.GetValueKind() == JsonValueKind.Number).ToList();
                if (numbers.Count == 0)
                {
                    return ByteMutation(text, random);
                }

                JsonValue number = numbers[random.Next(numbers.Count)];
                double extreme = ExtremeNumbers[random.Next(ExtremeNumbers.Length)];
                how = $"number at {number.GetPath()} -> {extreme.ToString("R", CultureInfo.InvariantCulture)}";
                Replace(number, JsonValue.Create(extreme));
                break;
            case 5:
                var strings = nodes.OfType<JsonValue>().Where(v => v.GetValueKind() == JsonValueKind.String).ToList();
                if (strings.Count == 0)
                {
                    return ByteMutation(text, random);
                }

                JsonValue str = strings[random.Next(strings.Count)];
                string hostile = HostileStrings[random.Next(HostileStrings.Length)];
                how = $"string at {str.GetPath()} -> {hostile[..Math.Min(hostile.Length, 20)]}";
                Replace(str, JsonValue.Create(hostile));
                break;
            case 6:
                var members = nodes.Where(n => n.Parent is JsonObject).ToList();
                JsonNode member = members[random.Next(members.Count)];
                how = $"removed {member.GetPath()}";
                ((JsonObject)member.Parent!).Remove(member.GetPropertyName());
                break;
            case 7:
                var arrays = nodes.OfType<JsonArray>().Where(a => a.Count > 0).ToList();
                if (arrays.Count == 0)
                {
                    return ByteMutation(text, random);
                }

                JsonArray array = arrays[random.Next(arrays.Count)];
                how = random.Next(2) == 0 ? $"emptied {array.GetPath()}" : $"repeated an item of {array.GetPath()}";
                if (how.StartsWith("emptied", StringComparison.Ordinal))
                {
                    array.Clear();
                }
                else
                {
                    array.Add(array[random.Next(array.Count)]!.DeepClone());
                }

                break;
            case 8:
                how = $"wrong type at {target.GetPath()}";
                JsonNode replacement = random.Next(4) switch
                {
                    0 => JsonValue.Create("text")!,
                    1 => new JsonObject(),
                    2 => new JsonArray(1, 2, 3),
                    _ => JsonValue.Create(true)!,
                };
                if (target.Parent is null)
                {
                    return (replacement.ToJsonString(), how);
                }

                Replace(target, replacement);
                break;
            default:
                how = $"deep nesting at {target.GetPath()}";
                string deep = new string('[', 100) + new string(']', 100);
                if (target.Parent is null)
                {
                    return (deep, how);
                }

                var nested = new JsonArray();
                for (int level = 1; level < 100; level++)
                {
                    nested = new JsonArray(nested);
                }

                Replace(target, nested);
                break;
        }

        return (root!.ToJsonString(), how);
    }

    private static (string, string) ByteMutation(string text, Random random)
    {
        var sb = new StringBuilder(text);
        int at = random.Next(Math.Max(sb.Length, 1));
        switch (random.Next(4))
        {
            case 0:
                return (text[..at], $"truncated at {at}");
            case 1:
                sb.Remove(at, 1);
                return (sb.ToString(), $"deleted character {at}");
            case 2:
                char c = "{}[],:\"0123456789.-eE \\\u0000x"[random.Next(25)];
                sb.Insert(at, c);
                return (sb.ToString(), $"inserted U+{(int)c:X4} at {at}");
            default:
                sb[at] = (char)random.Next(32, 127);
                return (sb.ToString(), $"changed character {at}");
        }
    }

    private static void Collect(JsonNode node, List<JsonNode> into)
    {
        into.Add(node);
        switch (node)
        {
            case JsonObject o:
                foreach (var (_, child) in o.ToList())
                {
                    if (child is not null)
                    {
                        Collect(child, into);
                    }
                }

                break;
            case JsonArray a:
                foreach (JsonNode? child in a.ToList())
                {
                    if (child is not null)
                    {
                        Collect(child, into);
                    }
                }

                break;
        }
    }

    private static void Replace(JsonNode node, JsonNode? replacement)
    {
        switch (node.Parent)
        {
            case JsonObject o:
                o[node.GetPropertyName()] = replacement;
                break;
            case JsonArray a:
                a[node.GetElementIndex()] = replacement;
                break;
        }
    }

    private static string Cut(string s) => s.Length <= 400 ? s.Trim() : s[..400] + "...";
}
