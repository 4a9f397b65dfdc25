using System.Text.RegularExpressions;

namespace Tieflow.Service.Settings;

/// <summary>Validates <c>Tieflow:Source</c>: the kind and the keys that kind needs.</summary>
internal sealed partial class SourceOptionsValidator(SettingsContext context) : SettingsValidator<SourceOptions>(context)
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
                if (Required(problems, $"{p}:Endpoint", options.Endpoint, "the plant's OPC UA endpoint URL, for example opc.tcp://plant-server:4840")
                    && !(Uri.TryCreate(options.Endpoint, UriKind.Absolute, out Uri? uri) && uri.Scheme == "opc.tcp" && uri.Host.Length > 0))
                {
                    problems.Add(new SettingsProblem($"{p}:Endpoint", $"expected an opc.tcp://HOST:PORT URL, found '{options.Endpoint}'"));
                }

                NotBlank(problems, $"{p}:User", options.User);
                if (options.Security is not null && !SecurityPattern().IsMatch(options.Security))
                {
                    problems.Add(new SettingsProblem($"{p}:Security", $"expected MODE[:POLICY] with MODE None, Sign or SignAndEncrypt and POLICY Basic256Sha256, Aes128_Sha256_RsaOaep or Aes256_Sha256_RsaPss, found '{options.Security}'"));
                }

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

    [GeneratedRegex("^(?:None|Sign|SignAndEncrypt)(?::(?:Basic256Sha256|Aes128_Sha256_RsaOaep|Aes256_Sha256_RsaPss))?$", RegexOptions.CultureInvariant)]
    private static partial Regex SecurityPattern();
}
