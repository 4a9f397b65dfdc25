using System.CommandLine;
using System.Text.Json;
using Tieflow.Files;
using Tieflow.Service.Output;
using Tieflow.Service.Settings;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow check FILE... [--json]</c>: validates input files and lists every problem of each. Each file is
/// classified by <see cref="CaseKinds"/> and read by the reader of its kind in <see cref="Readers"/> (the same readers
/// the commands use, so that check and calc accept the same files). With <c>--json</c>:
/// <c>{ "files": [{ "file", "kind", "valid", "problems": [{ "file", "path", "message" }] }], "valid", "notice" }</c>.
/// </summary>
internal static class CheckCommand
{
    /// <summary>The reader of each kind of file; a new kind adds a row here and one in <see cref="CaseKinds.Table"/>.</summary>
    public static readonly IReadOnlyDictionary<string, Func<JsonValue, object?>> Readers = new Dictionary<string, Func<JsonValue, object?>>
    {
        [CaseKinds.System] = v => SystemFileReader.Read(v),
        [CaseKinds.Split] = v => CaseReader.ReadSplit(v),
        [CaseKinds.Cascade] = v => CaseReader.ReadCascade(v),
        [CaseKinds.Design] = v => CaseReader.ReadDesign(v),
        [CaseKinds.Reconcile] = v => ReconcileCaseReader.Read(v),
        [CaseKinds.Plant] = v => PlantReader.Read(v),
        [CaseKinds.Scenario] = v => ScenarioReader.Read(v),
    };

    public static Command Create(CliContext context)
    {
        var files = new Argument<string[]>("FILE") { Description = "Plant, scenario, settings, system or case files to validate", Arity = ArgumentArity.OneOrMore };
        Option<bool> json = CommonOptions.Json();
        var command = new Command("check", "Validates plant, scenario, settings, system and case files; exit 0 when all are valid, 2 with every problem listed otherwise.") { files, json };
        command.SetAction(parsed => CommandRunner.Run(context, () => Run(context, parsed.GetValue(files)!, parsed.GetValue(json))));
        return command;
    }

    public static int Run(CliContext context, IReadOnlyList<string> paths, bool json = false)
    {
        var results = paths.Select(path => (Path: path, Problems: Check(path, out string kind, out object? value), Kind: kind, Value: value)).ToList();
        int bad = results.Count(r => r.Problems.Count > 0);
        if (json)
        {
            JsonOutput.Print(context.Output, w =>
            {
                w.WriteStartObject();
                w.WriteStartArray("files");
                foreach (var (path, problems, kind, _) in results)
                {
                    w.WriteStartObject();
                    w.WriteString("file", path);
                    w.WriteString("kind", kind);
                    w.WriteBoolean("valid", problems.Count == 0);
                    w.WriteStartArray("problems");
                    foreach (InputProblem p in problems)
                    {
                        w.WriteStartObject();
                        w.WriteString("file", p.File);
                        w.WriteString("path", p.JsonPath);
                        w.WriteString("message", p.Message);
                        w.WriteEndObject();
                    }

                    w.WriteEndArray();
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                w.WriteBoolean("valid", bad == 0);
                JsonOutput.WriteNotice(w);
                w.WriteEndObject();
            });
            return bad == 0 ? ExitCodes.Success : ExitCodes.BadInput;
        }

        foreach (var (path, problems, kind, value) in results)
        {
            if (problems.Count == 0)
            {
                context.Output.WriteLine($"ok: {path} ({kind})");
                if (value is SystemFile { Model: Core.Equilibrium.TieLines.TieLineTableModel table })
                {
                    foreach (string advice in table.SparseTableAdvice())
                    {
                        context.Output.WriteLine($"  warning: {advice}");
                    }
                }

                continue;
            }

            context.Error.WriteLine($"{path}: {problems.Count} problem{(problems.Count == 1 ? string.Empty : "s")}{(kind == CaseKinds.Unknown ? string.Empty : $" ({kind})")}");
            foreach (InputProblem p in problems)
            {
                context.Error.WriteLine($"  error: {p}");
            }
        }

        return bad == 0 ? ExitCodes.Success : ExitCodes.BadInput;
    }

    /// <summary>Every problem of one file; <paramref name="kind"/> says what the file was taken to be.</summary>
    public static IReadOnlyList<InputProblem> Check(string path, out string kind) => Check(path, out kind, out _);

    /// <summary>As above, with what the file was read into (null when it could not be read).</summary>
    public static IReadOnlyList<InputProblem> Check(string path, out string kind, out object? value)
    {
        kind = CaseKinds.Unknown;
        value = null;
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
            kind = CaseKinds.Classify(doc.RootElement);
            if (kind == CaseKinds.Settings)
            {
                // Settings are read through the host's configuration layers and judged by the validators the host runs at start.
                return [.. SettingsCheck.ProblemsOfFile(path).Select(p => new InputProblem(path, p.KeyPath, p.Message))];
            }

            if (!Readers.TryGetValue(kind, out Func<JsonValue, object?>? read))
            {
                problems.Add(path, "$", "cannot tell what kind of file this is; expected a plant file (with \"site\" and \"units\"), a scenario file (with \"plant\" and \"duration\"), a settings file (with a \"Tieflow\" section), a system file (with \"components\" and \"equilibrium\") or a case file (with \"system\" and \"inlets\", \"arrangement\" or \"find\", or with \"nodes\" for a reconcile case)");
            }
            else
            {
                value = read(root);
            }

            return problems.Items;
        }
    }
}
