using Microsoft.Extensions.Configuration;

namespace Tieflow.Service.Settings;

/// <summary>
/// What the validators need besides the options: the merged configuration (for the shape check), the folder relative
/// paths are resolved against, the environment the secrets come from (never a settings key or the command line), and
/// whether the environment is part of the check (at start it is; <c>tieflow check FILE</c> checks only the file).
/// </summary>
internal sealed class SettingsContext(IConfiguration configuration, string baseDirectory, bool checkEnvironment, Func<string, string?>? environment = null, string? workingDirectory = null)
{
    private readonly Func<string, string?> _environment = environment ?? Environment.GetEnvironmentVariable;

    public IConfiguration Configuration { get; } = configuration;

    public string BaseDirectory { get; } = baseDirectory;

    public bool CheckEnvironment { get; } = checkEnvironment;

    /// <summary>The working directory of the run (the default store lives under it).</summary>
    public string WorkingDirectory { get; } = workingDirectory ?? baseDirectory;

    /// <summary>A path of the settings made absolute against <see cref="BaseDirectory"/>.</summary>
    public string Resolve(string path) => Path.GetFullPath(path, BaseDirectory);

    /// <summary>A secret from the environment, or null when the variable is not set or empty.</summary>
    public string? Secret(string variable) => _environment(variable) is { Length: > 0 } value ? value : null;
}
