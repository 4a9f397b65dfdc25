using Microsoft.Extensions.Configuration;

namespace Tieflow.Service.Settings;

/// <summary>
/// Every problem of a configuration's <c>Tieflow</c> section, by key path: the shape, then each section bound and
/// judged by its validator (the same validators the host runs at start). Used by <c>tieflow check</c> and by tests.
/// </summary>
internal static class SettingsCheck
{
    public static IReadOnlyList<SettingsProblem> Problems(SettingsContext context)
    {
        IConfiguration good = SettingsShape.WithoutBadKeys(context.Configuration);
        var problems = new List<SettingsProblem>();
        problems.AddRange(new TieflowOptionsValidator(context).Problems(Bind<TieflowOptions>(good, TieflowOptions.Section)));
        problems.AddRange(new SourceOptionsValidator(context).Problems(Bind<SourceOptions>(good, SourceOptions.Section)));
        problems.AddRange(new LabsOptionsValidator(context).Problems(Bind<LabsOptions>(good, LabsOptions.Section)));
        problems.AddRange(new StoreOptionsValidator(context).Problems(Bind<StoreOptions>(good, StoreOptions.Section)));
        problems.AddRange(new HealthOptionsValidator(context).Problems(Bind<HealthOptions>(good, HealthOptions.Section)));
        return problems;
    }

    /// <summary>Problems of one settings file, as <c>tieflow check</c> sees it: relative paths against the file's folder, no environment.</summary>
    public static IReadOnlyList<SettingsProblem> ProblemsOfFile(string path)
    {
        string full = Path.GetFullPath(path);
        IConfiguration configuration = new ConfigurationBuilder().AddJsonFile(full, optional: false, reloadOnChange: false).Build();
        return Problems(new SettingsContext(configuration, Path.GetDirectoryName(full)!, checkEnvironment: false));
    }

    private static T Bind<T>(IConfiguration configuration, string section)
        where T : new()
    {
        var options = new T();
        configuration.GetSection(section).Bind(options);
        return options;
    }
}
