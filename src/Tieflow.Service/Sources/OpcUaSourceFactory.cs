using Tieflow.Service.Settings;

namespace Tieflow.Service.Sources;

/// <summary>The OPC UA source of <c>Tieflow:Source:Kind = opcua</c>: every instrument of the watched units.</summary>
internal sealed class OpcUaSourceFactory : ISignalSourceFactory
{
    /// <inheritdoc />
    public string? Kind => SourceOptions.OpcUa;

    /// <inheritdoc />
    public IReadOnlyList<ISignalSource> Create(SourceContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        var problems = new List<SettingsProblem>();
        OpcUaSourceOptions options = ToSourceOptions(context.Source, context.Settings, problems);
        if (problems.Count > 0)
        {
            // The validator has already listed these at start; a factory called without it still refuses them.
            throw new SignalSourceException(2, string.Join(Environment.NewLine, problems.Select(p => $"{p.KeyPath}: {p.Message}")));
        }

        return [new OpcUaSource(context.Plant, options, context.Time, context.LoggerFactory, context.Settings.Secret)];
    }

    /// <summary>The source's options from the settings (durations in the duration grammar of every input file).</summary>
    /// <param name="settings">The bound settings.</param>
    /// <param name="context">Resolves the certificate store's path; null when only validating.</param>
    /// <param name="problems">Receives every problem by key path.</param>
    public static OpcUaSourceOptions ToSourceOptions(SourceOptions settings, SettingsContext? context, List<SettingsProblem> problems)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(problems);
        var o = new OpcUaSourceOptions
        {
            Endpoint = settings.Endpoint,
            User = settings.User,
            Security = settings.Security,
            Pki = settings.Pki is null || context is null ? settings.Pki : context.Resolve(settings.Pki),
            ConnectAttempts = settings.ConnectAttempts ?? 0,
            RequireAllNodes = settings.RequireAllNodes ?? false,
        };
        o.SamplingInterval = SettingsDuration.Parse(problems, $"{SourceOptions.Section}:SamplingInterval", settings.SamplingInterval, o.SamplingInterval);
        o.PublishingInterval = SettingsDuration.Parse(problems, $"{SourceOptions.Section}:PublishingInterval", settings.PublishingInterval, o.PublishingInterval);
        o.KeepAliveInterval = SettingsDuration.Parse(problems, $"{SourceOptions.Section}:KeepAliveInterval", settings.KeepAliveInterval, o.KeepAliveInterval);
        o.ConnectRetryDelay = SettingsDuration.Parse(problems, $"{SourceOptions.Section}:ConnectRetryDelay", settings.ConnectRetryDelay, o.ConnectRetryDelay);
        o.ConnectRetryMaxDelay = SettingsDuration.Parse(problems, $"{SourceOptions.Section}:ConnectRetryMaxDelay", settings.ConnectRetryMaxDelay, o.ConnectRetryMaxDelay);
        // Every value the options judge themselves; a duration that did not parse is listed once, by its parser.
        var listed = problems.Select(p => p.KeyPath).ToHashSet(StringComparer.Ordinal);
        foreach (string problem in o.Problems())
        {
            int colon = problem.IndexOf(": ", StringComparison.Ordinal);
            string key = colon > 0 ? problem[..colon] : SourceOptions.Section;
            if (!listed.Contains(key))
            {
                problems.Add(new SettingsProblem(key, colon > 0 ? problem[(colon + 2)..] : problem));
            }
        }

        return o;
    }
}
