namespace Tieflow.Service.Settings;

/// <summary>Validates <c>Tieflow:Source</c>: the kind and the keys that kind needs.</summary>
internal sealed class SourceOptionsValidator(SettingsContext context) : SettingsValidator<SourceOptions>(context)
{
    /// <summary>Environment variable that holds the OPC UA password (never a settings key, never logged).</summary>
    public const string PasswordVariable = Cli.UaSession.PasswordVariable;

    public override IReadOnlyList<SettingsProblem> Problems(SourceOptions options)
    {
        var problems = new List<SettingsProblem>();
        const string p = SourceOptions.Section;
        if (!Required(problems, $"{p}:Kind", options.Kind, $"'{SourceOptions.OpcUa}' or '{SourceOptions.Simulator}'"))
        {
            return problems;
        }

        switch (options.Kind)
        {
            case SourceOptions.OpcUa:
                // The endpoint, the user, the security choice and the intervals are judged where the source's options
                // are made (OpcUaSourceOptions.Problems; the security names by the OPC UA library's own parser).
                NotBlank(problems, $"{p}:Pki", options.Pki);
                Sources.OpcUaSourceFactory.ToSourceOptions(options, null, problems);
                if (Context.CheckEnvironment && !string.IsNullOrWhiteSpace(options.User) && Context.Secret(PasswordVariable) is null)
                {
                    problems.Add(new SettingsProblem($"{p}:User", $"a user is named, but the environment variable {PasswordVariable} that holds the password is not set"));
                }

                break;
            case SourceOptions.Simulator:
                if (Required(problems, $"{p}:Scenario", options.Scenario, "the scenario file to simulate"))
                {
                    FileExists(problems, $"{p}:Scenario", options.Scenario!);
                }

                if (options.Speed is double speed && !(speed > 0 && double.IsFinite(speed)))
                {
                    problems.Add(new SettingsProblem($"{p}:Speed", $"expected a factor above 0 (1 is real time, 60 a simulated hour a minute), found {speed}"));
                }

                break;
            default:
                problems.Add(new SettingsProblem($"{p}:Kind", $"expected '{SourceOptions.OpcUa}' or '{SourceOptions.Simulator}', found '{options.Kind}'"));
                break;
        }

        return problems;
    }
}
