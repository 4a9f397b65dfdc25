using Microsoft.Extensions.Configuration;

namespace Tieflow.Service.Settings;

/// <summary>
/// What the validators need besides the options: the merged configuration (for the shape check and the secrets, which
/// arrive as environment variables), the folder relative paths are resolved against, and whether the environment is
/// part of the check (at start it is; <c>tieflow check FILE</c> checks only the file).
/// </summary>
internal sealed class SettingsContext(IConfiguration configuration, string baseDirectory, bool checkEnvironment)
{
    public IConfiguration Configuration { get; } = configuration;

    public string BaseDirectory { get; } = baseDirectory;

    public bool CheckEnvironment { get; } = checkEnvironment;

    /// <summary>A path of the settings made absolute against <see cref="BaseDirectory"/>.</summary>
    public string Resolve(string path) => Path.GetFullPath(path, BaseDirectory);

    /// <summary>A secret from the environment (through the configuration's environment layer), or null.</summary>
    public string? Secret(string variable) => Configuration[variable] is { Length: > 0 } value ? value : null;
}
