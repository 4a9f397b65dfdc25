namespace Tieflow.Service.Tests.Input;

/// <summary>
/// Malformed files: each must end with exit code 2 and a message that names the file, the JSON path and what was
/// expected. The valid base data are tie lines 1, 3 and 5 of the water - acetone - 1,1,2-trichloroethane table at
/// 25 C (Treybal, Weber and Daley, Ind. Eng. Chem. 38, 817 (1946), as tabulated in Treybal, Mass-Transfer Operations,
/// 3rd ed., ch. 10); the faults are ours.
/// </summary>
public sealed class BadInputTests
{
    internal const string System = """
        {
          "name": "water - acetone - trichloroethane",
          "basis": "mass",
          "components": [
            { "id": "acetone", "role": "solute", "molarMass": 58.08 },
            { "id": "water", "role": "diluent", "molarMass": 18.015 },
            { "id": "tce", "role": "solvent", "molarMass": 133.4 }
          ],
          "equilibrium": { "model": "tie-lines", "temperature": 298.15, "tieLines": [
            { "raffinate": { "acetone": 0.0596, "water": 0.9352, "tce": 0.0052 }, "extract": { "acetone": 0.0875, "water": 0.0032, "tce": 0.9093 } },
            { "raffinate": { "acetone": 0.1397, "water": 0.8535, "tce": 0.0068 }, "extract": { "acetone": 0.2078, "water": 0.009, "tce": 0.7832 } },
            { "raffinate": { "acetone": 0.2763, "water": 0.7133, "tce": 0.0104 }, "extract": { "acetone": 0.3939, "water": 0.024, "tce": 0.5821 } }
          ] }
        }
        """;

    internal const string Nrtl = """
        {
          "name": "ethanol - water - ethyl acetate",
          "basis": "mole",
          "components": [
            { "id": "ethanol", "role": "solute", "molarMass": 46.069 },
            { "id": "water", "role": "diluent", "molarMass": 18.015 },
            { "id": "ethyl-acetate", "role": "solvent", "molarMass": 88.106 }
          ],
          "equilibrium": { "model": "nrtl", "pairs": [
            { "i": "ethyl-acetate", "j": "water", "alpha": 0.4, "aij": 0, "aji": 0, "gij": 1335, "gji": 2510, "units": "cal/mol" },
            { "i": "ethyl-acetate", "j": "ethanol", "alpha": 0.3, "aij": 0, "aji": 0, "gij": 301, "gji": 322, "units": "cal/mol" },
            { "i": "water", "j": "ethanol", "alpha": 0.3, "aij": 0, "aji": 0, "gij": 976, "gji": 88, "units": "cal/mol" }
          ] }
        }
        """;

    internal const string Distribution = """
        {
          "name": "dilute solute, immiscible liquids",
          "basis": "mass",
          "components": [
            { "id": "solute", "role": "solute", "molarMass": 100 },
            { "id": "water", "role": "diluent", "molarMass": 18.015 },
            { "id": "oil", "role": "solvent", "molarMass": 170 }
          ],
          "equilibrium": { "model": "distribution", "temperature": 298.15, "k": 1.5 }
        }
        """;

    internal const string Feed = """{ "flow": 100, "composition": { "acetone": 0.3, "water": 0.7, "tce": 0 } }""";

    internal const string Solvent = """{ "flow": 80, "composition": { "acetone": 0, "water": 0, "tce": 1 } }""";

    internal static readonly string SplitCase = $$"""{ "system": "system.json", "temperature": 298.15, "inlets": [ {{Feed}}, {{Solvent}} ] }""";

    internal static readonly string CascadeCase = $$"""{ "system": "system.json", "temperature": 298.15, "arrangement": "countercurrent", "stages": 3, "feed": {{Feed}}, "solvent": {{Solvent}}, "efficiency": 1.0 }""";

    internal static readonly string DesignCase = $$"""{ "system": "system.json", "temperature": 298.15, "arrangement": "countercurrent", "feed": {{Feed}}, "solvent": {{Solvent}}, "find": "stages", "target": { "raffinateFraction": 0.05 } }""";

    /// <summary>(name, file checked, system file text, case text or null, JSON path expected, words expected).</summary>
    public static TheoryData<string, string, string, string?, string, string> Cases() => new()
    {
        { "missing component", "system.json", System.Replace("18.015 },", "18.015 }").Replace("{ \"id\": \"tce\", \"role\": \"solvent\", \"molarMass\": 133.4 }", string.Empty), null, "$.components", "missing the solvent" },
        { "duplicate component", "system.json", System.Replace("\"id\": \"water\"", "\"id\": \"acetone\""), null, "$.components[1].id", "declared twice" },
        { "two solutes", "system.json", System.Replace("\"role\": \"diluent\"", "\"role\": \"solute\""), null, "$.components[1].role", "only one solute" },
        { "fractions do not sum to one", "system.json", System.Replace("\"water\": 0.9352", "\"water\": 0.8352"), null, "$.equilibrium.tieLines[0].raffinate", "sum to 0.9" },
        { "fraction above one", "system.json", System.Replace("\"water\": 0.9352", "\"water\": 1.9352"), null, "$.equilibrium.tieLines[0].raffinate.water", "between 0 and 1" },
        { "unknown key", "system.json", System.Replace("\"temperature\": 298.15", "\"temprature\": 298.15"), null, "$.equilibrium.temprature", "unknown key 'temprature'" },
        { "unknown model", "system.json", System.Replace("\"tie-lines\"", "\"tielines\""), null, "$.equilibrium.model", "expected one of" },
        { "unknown basis", "system.json", System.Replace("\"mass\"", "\"weight\""), null, "$.basis", "\"mass\", \"mole\"" },
        { "zero molar mass", "system.json", System.Replace("58.08", "0"), null, "$.components[0].molarMass", "above 0" },
        { "inverted tie line", "system.json", System.Replace("""{ "raffinate": { "acetone": 0.0596, "water": 0.9352, "tce": 0.0052 }, "extract": { "acetone": 0.0875, "water": 0.0032, "tce": 0.9093 } }""", """{ "raffinate": { "acetone": 0.0875, "water": 0.0032, "tce": 0.9093 }, "extract": { "acetone": 0.0596, "water": 0.9352, "tce": 0.0052 } }"""), null, "$.equilibrium.tieLines[0]", "invert" },
        { "crossing tie lines", "system.json", System.Replace("""{ "acetone": 0.2078, "water": 0.009, "tce": 0.7832 }""", """{ "acetone": 0.0700, "water": 0.003, "tce": 0.927 }"""), null, "$.equilibrium.tieLines[", "cross" },
        { "one tie line", "system.json", Cut(System, ",\n    { \"raffinate\": { \"acetone\": 0.1397", "\n  ]"), null, "$.equilibrium.tieLines", "at least 2" },
        { "nrtl pair missing", "system.json", Cut(Nrtl, ",\n    { \"i\": \"water\", \"j\": \"ethanol\"", "\n  ]"), null, "$.equilibrium.pairs", "ethanol/water is missing" },
        { "nrtl pair names an unknown component", "system.json", Nrtl.Replace("\"i\": \"water\"", "\"i\": \"h2o\""), null, "$.equilibrium.pairs[2].i", "'h2o' is not a declared component" },
        { "nrtl pair given twice", "system.json", Nrtl.Replace("\"j\": \"ethanol\", \"alpha\": 0.3, \"aij\": 0, \"aji\": 0, \"gij\": 976", "\"j\": \"ethyl-acetate\", \"alpha\": 0.3, \"aij\": 0, \"aji\": 0, \"gij\": 976"), null, "$.equilibrium.pairs[2]", "given twice" },
        { "nrtl alpha negative", "system.json", Nrtl.Replace("\"alpha\": 0.4", "\"alpha\": -0.4"), null, "$.equilibrium.pairs[0].alpha", "above 0 and at most 1" },
        { "uniquac without r and q", "system.json", Nrtl.Replace("\"nrtl\"", "\"uniquac\""), null, "$.components[0].r", "required key is missing" },
        { "distribution with k and isotherm", "system.json", Distribution.Replace("\"k\": 1.5", "\"k\": 1.5, \"isotherm\": [[0, 0], [0.1, 0.2]]"), null, "$.equilibrium", "not both" },
        { "falling isotherm", "system.json", Distribution.Replace("\"k\": 1.5", "\"isotherm\": [[0, 0], [0.1, 0.2], [0.2, 0.1]]"), null, "$.equilibrium.isotherm[2]", "must rise" },
        { "repeated key", "system.json", System.Replace("\"basis\": \"mass\",", "\"basis\": \"mass\", \"basis\": \"mole\","), null, "$.basis", "appears twice" },
        { "not json", "system.json", "{ \"name\": \"x\", ", null, "$", "not valid JSON" },
        { "nan flow", "case.json", System, SplitCase.Replace("\"flow\": 100", "\"flow\": NaN"), "$", "NaN" },
        { "negative flow", "case.json", System, SplitCase.Replace("\"flow\": 100", "\"flow\": -5"), "$.inlets[0].flow", "between 0 and" },
        { "flow as text", "case.json", System, SplitCase.Replace("\"flow\": 100", "\"flow\": \"100\""), "$.inlets[0].flow", "expected a finite number in kg/h" },
        { "undeclared component in stream", "case.json", System, SplitCase.Replace("\"tce\": 0 }", "\"tce\": 0, \"benzene\": 0 }"), "$.inlets[0].composition.benzene", "unknown key 'benzene'" },
        { "component missing in stream", "case.json", System, SplitCase.Replace("\"water\": 0.7, ", string.Empty), "$.inlets[0].composition.water", "required key is missing" },
        { "stream fractions do not sum to one", "case.json", System, SplitCase.Replace("\"water\": 0.7", "\"water\": 0.6"), "$.inlets[0].composition", "sum to 0.9" },
        { "system file does not exist", "case.json", System, SplitCase.Replace("system.json", "missing-system.json"), "$.system", "does not exist" },
        { "temperature far outside the data", "case.json", System, SplitCase.Replace("\"temperature\": 298.15", "\"temperature\": 350"), "$.temperature", "outside the temperatures" },
        { "no inlets", "case.json", System, $$"""{ "system": "system.json", "temperature": 298.15, "inlets": [] }""", "$.inlets", "at least 1 item" },
        { "unknown arrangement", "case.json", System, CascadeCase.Replace("countercurrent", "counter"), "$.arrangement", "expected one of" },
        { "zero stages", "case.json", System, CascadeCase.Replace("\"stages\": 3", "\"stages\": 0"), "$.stages", "between 1 and 200" },
        { "efficiency above one", "case.json", System, CascadeCase.Replace("\"efficiency\": 1.0", "\"efficiency\": 1.2"), "$.efficiency", "above 0 and at most 1" },
        { "efficiency list of wrong length", "case.json", System, CascadeCase.Replace("\"efficiency\": 1.0", "\"efficiency\": [0.9, 0.8]"), "$.efficiency", "one efficiency per stage (3)" },
        { "feed without solute", "case.json", System, CascadeCase.Replace("\"acetone\": 0.3, \"water\": 0.7", "\"acetone\": 0, \"water\": 1"), "$.feed.composition", "no solute" },
        { "design with two targets", "case.json", System, DesignCase.Replace("\"raffinateFraction\": 0.05", "\"raffinateFraction\": 0.05, \"recovery\": 0.9"), "$.target", "not both" },
        { "design goal unknown", "case.json", System, DesignCase.Replace("\"find\": \"stages\"", "\"find\": \"trays\""), "$.find", "expected one of" },
        { "design target above the feed", "case.json", System, DesignCase.Replace("0.05", "0.4"), "$.target.raffinateFraction", "not below the feed" },
        { "design recovery of one", "case.json", System, DesignCase.Replace("\"raffinateFraction\": 0.05", "\"recovery\": 1"), "$.target.recovery", "infinitely many stages" },
        // Reproducers of the fuzz campaign (issue 12).
        { "isotherm point 1e308", "system.json", Distribution.Replace("\"k\": 1.5", "\"isotherm\": [[0, 0], [1e308, 1e308]]"), null, "$.equilibrium.isotherm[1][0]", "between 0 and 1000" },
        { "distribution k 1e308", "system.json", Distribution.Replace("\"k\": 1.5", "\"k\": 1e308"), null, "$.equilibrium.k", "between 1E-06 and 1E+06" },
        { "name with a terminal escape", "system.json", System.Replace("\"name\": \"water - acetone - trichloroethane\"", "\"name\": \"\\u001b[31mred\""), null, "$.name", "without control characters" },
        { "component id with an open bracket", "system.json", System.Replace("\"id\": \"tce\"", "\"id\": \"a[b\""), null, "$.components[2].id", "not a valid id" },
        { "component id as colour markup", "system.json", System.Replace("\"id\": \"tce\"", "\"id\": \"[red]acetone[/]\""), null, "$.components[2].id", "not a valid id" },
        { "NUL in the system path", "case.json", System, SplitCase.Replace("system.json", "system\\u0000.json"), "$.system", "NUL character" },
        { "design crosscurrent", "case.json", System, DesignCase.Replace("countercurrent", "crosscurrent"), "$.arrangement", "design calculations are for counter-current cascades" },
        { "design solvent without stages", "case.json", System, DesignCase.Replace("\"find\": \"stages\"", "\"find\": \"solvent\""), "$.stages", "required key is missing" },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Check_MalformedFile_ExitsTwoNamingFilePathAndExpectation(string name, string checkedFile, string system, string? caseText, string path, string words)
    {
        using var folder = new TempFolder();
        string systemFile = folder.Write("system.json", system);
        string target = caseText is null ? systemFile : folder.Write("case.json", caseText);
        Assert.Equal(checkedFile, Path.GetFileName(target));

        CliRun run = CliRun.Of("check", target);

        Assert.True(run.ExitCode == 2, $"{name}: expected exit code 2, got {run.ExitCode}; stdout: {run.Output} stderr: {run.Error}");
        string expectedFile = caseText is not null && path.StartsWith("$.equilibrium", StringComparison.Ordinal) ? systemFile : target;
        string line = run.Error.Split('\n').FirstOrDefault(l => l.Contains("error:", StringComparison.Ordinal) && l.Contains(path, StringComparison.Ordinal)) ?? string.Empty;
        Assert.True(line.Length > 0, $"{name}: no error line names the path {path}; stderr: {run.Error}");
        Assert.Contains(expectedFile, line, StringComparison.Ordinal);
        Assert.Contains(words, line, StringComparison.Ordinal);
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void CalcCommand_MalformedFile_ExitsTwo(string name, string checkedFile, string system, string? caseText, string path, string words)
    {
        _ = (checkedFile, path, words);
        if (caseText is null)
        {
            return;
        }

        using var folder = new TempFolder();
        folder.Write("system.json", system);
        string target = folder.Write("case.json", caseText);
        string verb = caseText.Contains("\"find\"", StringComparison.Ordinal) ? "design" : caseText.Contains("\"arrangement\"", StringComparison.Ordinal) ? "cascade" : "split";

        CliRun run = CliRun.Of("calc", verb, "--case", target);

        Assert.True(run.ExitCode == 2, $"{name}: expected exit code 2, got {run.ExitCode}; stderr: {run.Error}");
        Assert.Contains(target, run.Error, StringComparison.Ordinal);
        Assert.Empty(run.Output);
    }

    [Fact]
    public void Check_FileWithSeveralProblems_ListsEveryOne()
    {
        using var folder = new TempFolder();
        string file = folder.Write("system.json", System
            .Replace("\"mass\"", "\"weight\"")
            .Replace("58.08", "-1")
            .Replace("\"temperature\": 298.15", "\"temprature\": 298.15"));

        CliRun run = CliRun.Of("check", file);

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("$.basis", run.Error, StringComparison.Ordinal);
        Assert.Contains("$.components[0].molarMass", run.Error, StringComparison.Ordinal);
        Assert.Contains("$.equilibrium.temprature", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Check_ValidFiles_ExitsZero()
    {
        using var folder = new TempFolder();
        string system = folder.Write("system.json", System);
        string split = folder.Write("split.json", SplitCase);
        string cascade = folder.Write("cascade.json", CascadeCase);
        string design = folder.Write("design.json", DesignCase);

        CliRun run = CliRun.Of("check", system, split, cascade, design);

        Assert.True(run.ExitCode == 0, run.Error);
        Assert.Equal(4, run.Output.Split('\n').Count(l => l.StartsWith("ok: ", StringComparison.Ordinal)));
    }

    private static string Cut(string text, string from, string to)
    {
        int start = text.IndexOf(from, StringComparison.Ordinal);
        Assert.True(start >= 0, $"'{from}' not found");
        if (to.Length == 0)
        {
            return text.Remove(start, from.Length);
        }

        int end = text.IndexOf(to, start + from.Length, StringComparison.Ordinal);
        return text.Remove(start, end - start);
    }
}
