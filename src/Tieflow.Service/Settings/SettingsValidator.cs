using Microsoft.Extensions.Options;

namespace Tieflow.Service.Settings;

/// <summary>Base of the validators of the settings sections: each lists every problem of its section by key path.</summary>
internal abstract class SettingsValidator<T>(SettingsContext context) : IValidateOptions<T>
    where T : class
{
    protected SettingsContext Context { get; } = context;

    /// <summary>Every problem of <paramref name="options"/>.</summary>
    public abstract IReadOnlyList<SettingsProblem> Problems(T options);

    public ValidateOptionsResult Validate(string? name, T options)
    {
        IReadOnlyList<SettingsProblem> problems = Problems(options);
        return problems.Count == 0 ? ValidateOptionsResult.Success : ValidateOptionsResult.Fail(problems.Select(p => p.ToString()));
    }

    /// <summary>Adds a problem when a required text value is missing or blank; true when it is there.</summary>
    protected static bool Required(List<SettingsProblem> problems, string keyPath, string? value, string what)
    {
        if (!string.IsNullOrWhiteSpace(value))
        {
            return true;
        }

        problems.Add(new SettingsProblem(keyPath, $"missing; expected {what}"));
        return false;
    }

    /// <summary>Adds a problem when a file named by the settings does not exist.</summary>
    protected void FileExists(List<SettingsProblem> problems, string keyPath, string path)
    {
        string full = Context.Resolve(path);
        if (!File.Exists(full))
        {
            problems.Add(new SettingsProblem(keyPath, $"the file '{path}' does not exist (looked for {full})"));
        }
    }

    /// <summary>Adds a problem when a value is given that is blank.</summary>
    protected static void NotBlank(List<SettingsProblem> problems, string keyPath, string? value)
    {
        if (value is not null && string.IsNullOrWhiteSpace(value))
        {
            problems.Add(new SettingsProblem(keyPath, "expected a non-empty value, or leave the key out"));
        }
    }
}
