using System.CommandLine;
using System.Text.Json;
using Tieflow.Files;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow check FILE...</c>: validates input files and lists every problem of each.</summary>
internal static class CheckCommand
{
    public static Command Create(CliContext context)
    {
        var files = new Argument<string[]>("FILE") { Description = "Plant, scenario, system or case files to validate", Arity = ArgumentArity.OneOrMore };
        var command = new Command("check", "Validates plant, scenario, system and case files; exit 0 when all are valid, 2 with every problem listed otherwise.") { files };
        command.SetAction(parsed => CommandRunner.Run(context, () => Run(context, parsed.GetValue(files)!)));
        return command;
    }

    public static int Run(CliContext context, IReadOnlyList<string> paths)
    {
        int bad = 0;
        foreach (string path in paths)
        {
            IReadOnlyList<InputProblem> problems = Check(path, out string kind);
            if (problems.Count == 0)
            {
                context.Output.WriteLine($"ok: {path} ({kind})");
                continue;
            }

            bad++;
            context.Error.WriteLine($"{path}: {problems.Count} problem{(problems.Count == 1 ? string.Empty : "s")}{(kind == "unknown" ? string.Empty : $" ({kind})")}");
            foreach (InputProblem p in problems)
            {
                context.Error.WriteLine($"  error: {p}");
            }
        }

        return bad == 0 ? ExitCodes.Success : ExitCodes.BadInput;
    }

    /// <summary>Every problem of one file; <paramref name="kind"/> says what the file was taken to be.</summary>
    public static IReadOnlyList<InputProblem> Check(string path, out string kind)
    {
        kind = "unknown";
        JsonDocument doc;
        try
        {
            doc = JsonInputFile.Load(path);
        }
        catch (InputException e)
        {
            return e.Problems;
        }

        using (doc)
        {
            var problems = new InputProblems();
            var root = new JsonValue(doc.RootElement, path, "$", problems);
            kind = Classify(doc.RootElement);
            Func<JsonValue, object?>? read = kind switch
            {
                "system" => v => SystemFileReader.Read(v),
                "split case" => v => CaseReader.ReadSplit(v),
                "cascade case" => v => CaseReader.ReadCascade(v),
                "design case" => v => CaseReader.ReadDesign(v),
                "reconcile case" => v => ReconcileCaseReader.Read(v),
                "plant" => v => PlantReader.Read(v),
                "scenario" => v => ScenarioReader.Read(v),
                _ => null,
            };
            if (read is null)
            {
                problems.Add(path, "$", "cannot tell what kind of file this is; expected a plant file (with \"site\" and \"units\"), a scenario file (with \"plant\" and \"duration\"), a system file (with \"components\" and \"equilibrium\") or a case file (with \"system\" and \"inlets\", \"arrangement\" or \"find\", or with \"nodes\" for a reconcile case)");
            }
            else
            {
                read(root);
            }

            return problems.Items;
        }
    }

    private static string Classify(JsonElement root)
    {
        if (root.ValueKind != JsonValueKind.Object)
        {
            return "unknown";
        }

        bool Has(string key) => root.TryGetProperty(key, out _);
        if (Has("units") && Has("site"))
        {
            return "plant";
        }

        if (Has("plant") && Has("duration"))
        {
            return "scenario";
        }

        if (Has("components") && Has("equilibrium"))
        {
            return "system";
        }

        if (Has("find"))
        {
            return "design case";
        }

        if (Has("arrangement"))
        {
            return "cascade case";
        }

        if (Has("inlets"))
        {
            return "split case";
        }

        if (Has("nodes"))
        {
            return "reconcile case";
        }

        return "unknown";
    }
}
