using Microsoft.Extensions.Configuration;
using Tieflow.Service.Settings;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>Every problem of the settings is listed by its key path, at start (exit 2, nothing started) and by <c>tieflow check</c>.</summary>
public sealed class SettingsValidationTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private static IReadOnlyList<string> Problems(Dictionary<string, string?> values, Func<string, string?>? environment = null, string? baseDirectory = null)
    {
        IConfiguration configuration = new ConfigurationBuilder().AddInMemoryCollection(values).Build();
        return [.. SettingsCheck.Problems(new SettingsContext(configuration, baseDirectory ?? RepositoryPaths.ConfigSamples, checkEnvironment: true, environment ?? (_ => null))).Select(p => p.ToString())];
    }

    [Fact]
    public void Problems_ValidSimulatorSettings_None()
    {
        Assert.Empty(Problems(new()
        {
            ["Tieflow:Source:Kind"] = "simulator",
            ["Tieflow:Source:Scenario"] = "scenarios/clean.scenario.json",
            ["Tieflow:Source:Speed"] = "60",
        }));
    }

    [Fact]
    public void Problems_ManyMistakes_EachListedByKeyPath()
    {
        IReadOnlyList<string> problems = Problems(new()
        {
            ["Tieflow:Plnat"] = "x.plant.json",
            ["Tieflow:Source:Kind"] = "opcua",
            ["Tieflow:Source:Endpoint"] = "http://plant:4840",
            ["Tieflow:Source:Security"] = "Encrypt",
            ["Tieflow:Source:User"] = "tieflow",
            ["Tieflow:Source:Speed"] = "fast",
            ["Tieflow:Store:Kind"] = "influxdb",
            ["Tieflow:Store:OutboxMaxBytes"] = "12",
            ["Tieflow:Store:Gzip"] = "sometimes",
            ["Tieflow:Store:WriteSignals"] = "yes",
            ["Tieflow:Health:Port"] = "70000",
            ["Tieflow:Units:0"] = "X300",
            ["Tieflow:Units:1"] = "X300",
        });

        string[] expected =
        [
            "Tieflow:Plnat: unknown key",
            "Tieflow:Plant: missing",
            "Tieflow:Source:Endpoint: 'http://plant:4840' is not an OPC UA URL; expected opc.tcp://HOST:PORT",
            "Tieflow:Source:Security: Security 'Encrypt': unknown mode 'Encrypt'; expected None, Sign or SignAndEncrypt",
            "Tieflow:Source:User: a user is named, but the environment variable TIEFLOW_OPCUA_PASSWORD",
            "Tieflow:Source:Speed: expected a number, found 'fast'",
            "Tieflow:Store:Url: missing",
            "Tieflow:Store:Org: missing",
            "Tieflow:Store:Bucket: missing",
            "Tieflow:Store:OutboxPath: missing",
            "Tieflow:Store:OutboxMaxBytes: expected at least 1048576",
            "Tieflow:Store:Gzip: expected true or false, found 'sometimes'",
            "Tieflow:Store:WriteSignals: expected true or false, found 'yes'",
            "Tieflow:Store:Kind: the influxdb store needs its token in the environment variable TIEFLOW_INFLUX_TOKEN",
            "Tieflow:Health:Port: expected a port from 0",
            "Tieflow:Units:1: unit 'X300' is listed twice",
        ];
        foreach (string e in expected)
        {
            Assert.True(problems.Any(p => p.StartsWith(e, StringComparison.Ordinal)), $"missing '{e}' in:\n{string.Join("\n", problems)}");
        }

        Assert.Equal(expected.Length, problems.Count);
    }

    [Fact]
    public void Problems_SecretsInTheEnvironment_Accepted()
    {
        var env = new Dictionary<string, string> { ["TIEFLOW_OPCUA_PASSWORD"] = "pw", ["TIEFLOW_INFLUX_TOKEN"] = "tok" };
        Assert.Empty(Problems(
            new()
            {
                ["Tieflow:Plant"] = "brackenmoor.plant.json",
                ["Tieflow:Source:Kind"] = "opcua",
                ["Tieflow:Source:Endpoint"] = "opc.tcp://127.0.0.1:4840",
                ["Tieflow:Source:User"] = "tieflow",
                ["Tieflow:Store:Kind"] = "influxdb",
                ["Tieflow:Store:Url"] = "http://127.0.0.1:8086",
                ["Tieflow:Store:Org"] = "site",
                ["Tieflow:Store:Bucket"] = "tieflow",
                ["Tieflow:Store:OutboxPath"] = "outbox.db",
            },
            v => env.GetValueOrDefault(v)));
    }

    [Fact]
    public void Problems_MissingFilesAndKind_Named()
    {
        IReadOnlyList<string> problems = Problems(new() { ["Tieflow:Plant"] = "nowhere.plant.json", ["Tieflow:Store:Path"] = "x.db" });
        Assert.Contains(problems, p => p.StartsWith("Tieflow:Plant: the file 'nowhere.plant.json' does not exist", StringComparison.Ordinal));
        Assert.Contains(problems, p => p.StartsWith("Tieflow:Source:Kind: missing", StringComparison.Ordinal));
    }

    [Fact]
    public void Run_BadSettingsFile_Exit2WithEveryProblemAndNothingStarted()
    {
        string settings = _folder.Write("appsettings.json", """
            { "Tieflow": { "Plant": "missing.plant.json", "Source": { "Kind": "modbus" }, "Stroe": { }, "Store": { "Kind": "sqlite", "Path": " " } } }
            """);

        CliRun run = CliRun.Of("run", "--settings", settings, "--Tieflow:Health:Port=0");

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("error: Tieflow:Plant: the file 'missing.plant.json' does not exist", run.Error, StringComparison.Ordinal);
        Assert.Contains("error: Tieflow:Source:Kind: expected 'opcua' or 'simulator', found 'modbus'", run.Error, StringComparison.Ordinal);
        Assert.Contains("error: Tieflow:Stroe: unknown key", run.Error, StringComparison.Ordinal);
        Assert.Contains("error: Tieflow:Store:Path: expected a non-empty value, or leave the key out", run.Error, StringComparison.Ordinal);
        Assert.Contains("4 problems in the settings; nothing was started.", run.Error, StringComparison.Ordinal);
        Assert.False(Directory.Exists(_folder.PathOf("tieflow-data")));
    }

    [Fact]
    public void Run_BadValueOnTheCommandLine_Exit2NamingIt()
    {
        CliRun run = CliRun.Of("run", "--settings", Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.settings.json"), "--Tieflow:Source:Speed=-3", "--Tieflow:Health:Port=0");

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("error: Tieflow:Source:Speed: expected a factor above 0", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Run_GzipNotABoolean_Exit2NamingIt()
    {
        CliRun run = CliRun.Of("run", "--settings", Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.settings.json"), "--Tieflow:Store:Gzip=off", "--Tieflow:Health:Port=0");

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("error: Tieflow:Store:Gzip: expected true or false, found 'off'", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Run_UnitNotInPlant_Exit2NamingTheKey()
    {
        HostRun run = HostRun.Of(HostRun.Request(_folder.Path, "--Tieflow:Units:0=X999"));

        Assert.Equal(2, run.ExitCode);
        Assert.Contains("Tieflow:Units:0: the plant has no unit 'X999'", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Problems_OpcUaDurationThatDoesNotParse_StillListsTheEndpointAndSecurity()
    {
        IReadOnlyList<string> problems = Problems(new()
        {
            ["Tieflow:Plant"] = "x.plant.json",
            ["Tieflow:Source:Kind"] = "opcua",
            ["Tieflow:Source:Endpoint"] = "opc.tcp://:4840",
            ["Tieflow:Source:Security"] = "Sign:Rot13",
            ["Tieflow:Source:PublishingInterval"] = "soon",
        });

        Assert.Contains(problems, p => p.StartsWith("Tieflow:Source:Endpoint: 'opc.tcp://:4840' is not an OPC UA URL", StringComparison.Ordinal));
        Assert.Contains(problems, p => p.StartsWith("Tieflow:Source:Security: Security 'Sign:Rot13': unknown policy 'Rot13'", StringComparison.Ordinal));
        Assert.Single(problems, p => p.StartsWith("Tieflow:Source:PublishingInterval:", StringComparison.Ordinal));
    }

    [Fact]
    public void Check_SettingsFile_ValidatedWithTheSameValidators()
    {
        string good = _folder.Write("good.settings.json", """
            { "Tieflow": { "Plant": "p.plant.json", "Source": { "Kind": "opcua", "Endpoint": "opc.tcp://plant:4840", "User": "tieflow" }, "Store": { "Kind": "sqlite", "Path": "t.db" } } }
            """);
        _folder.Write("p.plant.json", File.ReadAllText(Path.Combine(RepositoryPaths.ConfigSamples, "brackenmoor.plant.json")));
        string bad = _folder.Write("bad.settings.json", """
            { "Tieflow": { "Plant": "p.plant.json", "Source": { "Kind": "opcua" }, "Health": { "Port": "http" } } }
            """);

        CliRun ok = CliRun.Of("check", good);
        CliRun refused = CliRun.Of("check", bad);

        Assert.True(ok.ExitCode == 0, ok.Error);
        Assert.Contains("(settings)", ok.Output, StringComparison.Ordinal);
        Assert.Equal(2, refused.ExitCode);
        Assert.Contains("Tieflow:Source:Endpoint: missing", refused.Error, StringComparison.Ordinal);
        Assert.Contains("Tieflow:Health:Port: expected a port number, found 'http'", refused.Error, StringComparison.Ordinal);
        Assert.DoesNotContain("Tieflow:Store:Path", refused.Error, StringComparison.Ordinal);
    }
}
