using System.Diagnostics;
using System.Text.RegularExpressions;
using Tieflow.Service.Hosting;

namespace Tieflow.Service.Tests.Deployment;

/// <summary>
/// The deployment at the repository root: docker-compose.yml is valid for <c>docker-compose config</c> (Debian package
/// docker-compose; test.sh installs it), every TIEFLOW__ setting it gives is a key Tieflow knows, and the files it
/// names exist in the images the Dockerfile builds. No Docker engine is needed.
/// </summary>
public sealed partial class DockerComposeTests
{
    private static string ComposeFile => Path.Combine(RepositoryPaths.Root, "docker-compose.yml");

    [RequiresDockerComposeFact]
    public void Config_ComposeFile_IsValidAndEverySettingIsAKnownKey()
    {
        (int exit, string output, string error) = Run("-f", ComposeFile, "config");

        Assert.True(exit == 0, $"docker-compose config failed ({exit}):\n{error}");
        var variables = EnvironmentLine().Matches(output).Select(m => (Name: m.Groups[1].Value, Value: m.Groups[2].Value.Trim())).ToList();
        Assert.NotEmpty(variables);
        foreach ((string name, _) in variables.Where(v => v.Name.StartsWith("TIEFLOW__", StringComparison.Ordinal)))
        {
            Assert.True(SettingsKeys.FromEnvironmentVariable(name) is not null, $"{name} names no Tieflow setting; known keys: {string.Join(", ", SettingsKeys.All)}");
        }

        foreach ((string name, _) in variables.Where(v => v.Name.StartsWith("TIEFLOW_", StringComparison.Ordinal) && !v.Name.StartsWith("TIEFLOW__", StringComparison.Ordinal)))
        {
            Assert.Contains(name, SettingsKeys.SecretVariables);
        }

        // What an OPC UA source and an InfluxDB store need (docs/sources.md).
        var given = variables.Where(v => v.Name.StartsWith("TIEFLOW__", StringComparison.Ordinal))
            .ToDictionary(v => SettingsKeys.FromEnvironmentVariable(v.Name)!, v => v.Value.Trim('\'', '"'), StringComparer.Ordinal);
        foreach (string key in new[]
        {
            SettingsKeys.Plant, SettingsKeys.SourceKind, SettingsKeys.SourceEndpoint, SettingsKeys.StoreKind, SettingsKeys.StoreUrl,
            SettingsKeys.StoreOrg, SettingsKeys.StoreBucket, SettingsKeys.StoreOutboxPath, SettingsKeys.StoreOutboxMaxBytes, SettingsKeys.StoreGzip,
        })
        {
            Assert.True(given.ContainsKey(key), $"docker-compose.yml does not set {key} ({SettingsKeys.EnvironmentVariable(key)})");
        }

        Assert.Equal("opcua", given[SettingsKeys.SourceKind]);
        Assert.Equal("influxdb", given[SettingsKeys.StoreKind]);
        Assert.StartsWith("opc.tcp://plant:", given[SettingsKeys.SourceEndpoint], StringComparison.Ordinal);
        Assert.True(long.TryParse(given[SettingsKeys.StoreOutboxMaxBytes], out long bytes) && bytes > 0, given[SettingsKeys.StoreOutboxMaxBytes]);
        Assert.True(bool.TryParse(given[SettingsKeys.StoreGzip], out _), $"{SettingsKeys.StoreGzip}: '{given[SettingsKeys.StoreGzip]}' is not true or false");
        Assert.Contains(variables, v => v.Name == SettingsKeys.InfluxTokenVariable);

        // The plant file lies in the image where the Dockerfile copies config-samples.
        Assert.StartsWith("/app/config-samples/", given[SettingsKeys.Plant], StringComparison.Ordinal);
        Assert.True(File.Exists(Path.Combine(RepositoryPaths.ConfigSamples, given[SettingsKeys.Plant]["/app/config-samples/".Length..])), given[SettingsKeys.Plant]);
    }

    [Fact]
    public void Dockerfile_BuildsBothExecutablesInTheTargetsTheComposeFileUses()
    {
        string dockerfile = File.ReadAllText(Path.Combine(RepositoryPaths.Root, "Dockerfile"));
        string compose = File.ReadAllText(ComposeFile);

        Assert.Contains("AS build", dockerfile, StringComparison.Ordinal);
        foreach (string target in new[] { "monitor", "simulator" })
        {
            Assert.Contains($"AS {target}", dockerfile, StringComparison.Ordinal);
            Assert.Contains($"target: {target}", compose, StringComparison.Ordinal);
        }

        Assert.Contains("dotnet publish src/Tieflow.Service/Tieflow.Service.csproj", dockerfile, StringComparison.Ordinal);
        Assert.Contains("dotnet publish simulator/Tieflow.Simulator/Tieflow.Simulator.csproj", dockerfile, StringComparison.Ordinal);
        foreach (Match m in ScenarioPath().Matches(compose + dockerfile))
        {
            Assert.True(File.Exists(Path.Combine(RepositoryPaths.ConfigSamples, m.Groups[1].Value)), m.Value);
        }

        // Every project the executables are built from is restored from its own project file.
        foreach (string project in Directory.GetFiles(Path.Combine(RepositoryPaths.Root, "src"), "*.csproj", SearchOption.AllDirectories)
            .Concat(Directory.GetFiles(Path.Combine(RepositoryPaths.Root, "simulator"), "*.csproj", SearchOption.AllDirectories)))
        {
            string relative = Path.GetRelativePath(RepositoryPaths.Root, project).Replace('\\', '/');
            Assert.Contains($"COPY {relative} ", dockerfile, StringComparison.Ordinal);
        }
    }

    private static (int Exit, string Output, string Error) Run(params string[] args)
    {
        var start = new ProcessStartInfo("docker-compose")
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            WorkingDirectory = RepositoryPaths.Root,
        };
        foreach (string a in args)
        {
            start.ArgumentList.Add(a);
        }

        using Process process = Process.Start(start)!;
        Task<string> output = process.StandardOutput.ReadToEndAsync();
        Task<string> error = process.StandardError.ReadToEndAsync();
        Assert.True(process.WaitForExit(TimeSpan.FromSeconds(60)), "docker-compose config did not end within 60 s");
        return (process.ExitCode, output.Result, error.Result);
    }

    [GeneratedRegex(@"^\s+(TIEFLOW\w*):(.*)$", RegexOptions.Multiline)]
    private static partial Regex EnvironmentLine();

    [GeneratedRegex(@"/app/config-samples/([\w./-]+\.json)")]
    private static partial Regex ScenarioPath();
}

/// <summary>A fact that is skipped, saying why, when the docker-compose binary is not installed.</summary>
public sealed class RequiresDockerComposeFactAttribute : FactAttribute
{
    public RequiresDockerComposeFactAttribute()
    {
        bool found = (Environment.GetEnvironmentVariable("PATH") ?? string.Empty).Split(Path.PathSeparator)
            .Any(dir => dir.Length > 0 && File.Exists(Path.Combine(dir, "docker-compose")));
        if (!found)
        {
            Skip = "docker-compose is not installed: install the Debian package docker-compose (test.sh does) to validate docker-compose.yml";
        }
    }
}
