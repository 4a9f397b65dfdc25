using Tieflow.Service.Settings;

namespace Tieflow.Service.Sources;

/// <summary>The lab drop folder of <c>Tieflow:Labs:Folder</c>, beside whatever source delivers the readings.</summary>
internal sealed class LabFolderSourceFactory : ISignalSourceFactory
{
    /// <inheritdoc />
    public string? Kind => null;

    /// <inheritdoc />
    public IReadOnlyList<ISignalSource> Create(SourceContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        if (string.IsNullOrWhiteSpace(context.Labs.Folder))
        {
            return [];
        }

        var problems = new List<SettingsProblem>();
        LabFolderOptions options = ToSourceOptions(context.Labs, context.Settings, problems);
        return problems.Count > 0
            ? throw new SignalSourceException(2, string.Join(Environment.NewLine, problems.Select(p => $"{p.KeyPath}: {p.Message}")))
            : [new LabFolderSource(options, context.Time, context.LoggerFactory)];
    }

    /// <summary>The folder source's options from the settings (durations in the duration grammar of every input file).</summary>
    /// <param name="settings">The bound settings.</param>
    /// <param name="context">Resolves the folder's path; null when only validating.</param>
    /// <param name="problems">Receives every problem by key path.</param>
    public static LabFolderOptions ToSourceOptions(LabsOptions settings, SettingsContext? context, List<SettingsProblem> problems)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(problems);
        var o = new LabFolderOptions { Folder = settings.Folder is null || context is null ? settings.Folder : context.Resolve(settings.Folder) };
        o.PollInterval = SettingsDuration.Parse(problems, $"{LabsOptions.Section}:PollInterval", settings.PollInterval, o.PollInterval);
        o.SettleTime = SettingsDuration.Parse(problems, $"{LabsOptions.Section}:SettleTime", settings.SettleTime, o.SettleTime);
        if (problems.Count == 0)
        {
            foreach (string problem in o.Problems())
            {
                int colon = problem.IndexOf(": ", StringComparison.Ordinal);
                problems.Add(colon > 0 ? new SettingsProblem(problem[..colon], problem[(colon + 2)..]) : new SettingsProblem(LabsOptions.Section, problem));
            }
        }

        return o;
    }
}
