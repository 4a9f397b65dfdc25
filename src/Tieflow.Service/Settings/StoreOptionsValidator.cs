namespace Tieflow.Service.Settings;

/// <summary>Validates <c>Tieflow:Store</c>: the kind and the keys that kind needs.</summary>
internal sealed class StoreOptionsValidator(SettingsContext context) : SettingsValidator<StoreOptions>(context)
{
    public override IReadOnlyList<SettingsProblem> Problems(StoreOptions options)
    {
        var problems = new List<SettingsProblem>();
        const string p = StoreOptions.Section;
        switch (options.Kind)
        {
            case StoreOptions.Sqlite:
                NotBlank(problems, $"{p}:Path", options.Path);
                break;
            case StoreOptions.InfluxDb:
                if (Required(problems, $"{p}:Url", options.Url, "the InfluxDB server, for example http://influx:8086")
                    && !(Uri.TryCreate(options.Url, UriKind.Absolute, out Uri? uri) && (uri.Scheme == Uri.UriSchemeHttp || uri.Scheme == Uri.UriSchemeHttps)))
                {
                    problems.Add(new SettingsProblem($"{p}:Url", $"expected an http:// or https:// URL, found '{options.Url}'"));
                }

                Required(problems, $"{p}:Org", options.Org, "the InfluxDB organisation");
                Required(problems, $"{p}:Bucket", options.Bucket, "the InfluxDB bucket the records go to");
                Required(problems, $"{p}:OutboxPath", options.OutboxPath, "the SQLite file that holds records until InfluxDB has taken them");
                if (options.OutboxMaxBytes is long max && max < 1024 * 1024)
                {
                    problems.Add(new SettingsProblem($"{p}:OutboxMaxBytes", $"expected at least 1048576 bytes (1 MiB), found {max}"));
                }

                if (Context.CheckEnvironment && Context.Secret(StoreOptions.TokenVariable) is null)
                {
                    problems.Add(new SettingsProblem($"{p}:Kind", $"the influxdb store needs its token in the environment variable {StoreOptions.TokenVariable}, which is not set"));
                }

                break;
            default:
                problems.Add(new SettingsProblem($"{p}:Kind", $"expected '{StoreOptions.Sqlite}' or '{StoreOptions.InfluxDb}', found '{options.Kind}'"));
                break;
        }

        return problems;
    }
}
