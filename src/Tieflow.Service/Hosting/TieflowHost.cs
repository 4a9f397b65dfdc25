using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Logging.Console;

namespace Tieflow.Service.Hosting;

/// <summary>
/// Builds the generic host of <c>tieflow run</c>. Settings layers, lowest first: the embedded default (without
/// <c>--settings</c>: the simulated demo train), <c>appsettings.json</c> in the working directory or the file of
/// <c>--settings</c>, environment variables (<c>TIEFLOW__SOURCE__ENDPOINT</c> for <c>Tieflow:Source:Endpoint</c>; the
/// secrets <c>TIEFLOW_OPCUA_PASSWORD</c> and <c>TIEFLOW_INFLUX_TOKEN</c>), the command line
/// (<c>--Tieflow:Source:Speed=600</c>), and last <c>--store FILE</c>. Relative paths resolve against the folder of the
/// settings file, or the working directory without one; the default store, <c>tieflow-data/tieflow.db</c>, is under the
/// working directory. Logs go to standard error.
/// </summary>
internal static class TieflowHost
{
    public static IHost Build(RunRequest request, Action<IServiceCollection>? overrides = null)
    {
        ArgumentNullException.ThrowIfNull(request);
        HostApplicationBuilder builder = Host.CreateApplicationBuilder(new HostApplicationBuilderSettings
        {
            DisableDefaults = true,
            ApplicationName = "tieflow",
            ContentRootPath = request.WorkingDirectory,
        });
        ConfigurationManager configuration = builder.Configuration;
        string baseDirectory = request.WorkingDirectory;
        configuration.AddInMemoryCollection(new Dictionary<string, string?>
        {
            ["Logging:LogLevel:Default"] = request.Terminal ? "Warning" : "Information",
            ["Logging:LogLevel:Microsoft"] = "Warning",
            ["Logging:LogLevel:Polly"] = "Warning",

            // The host's own report of a failed start repeats, with a stack trace, what the run command prints by key path.
            ["Logging:LogLevel:Microsoft.Extensions.Hosting.Internal.Host"] = "Critical",
        });
        if (request.SettingsFile is null)
        {
            configuration.AddInMemoryCollection(DemoDefaults.Settings());
            configuration.AddJsonFile(Path.Combine(request.WorkingDirectory, "appsettings.json"), optional: true, reloadOnChange: false);
        }
        else
        {
            string settings = Path.GetFullPath(request.SettingsFile, request.WorkingDirectory);
            baseDirectory = Path.GetDirectoryName(settings)!;
            configuration.AddJsonFile(settings, optional: false, reloadOnChange: false);
        }

        configuration.AddEnvironmentVariables();
        configuration.AddCommandLine([.. request.HostArgs]);
        if (request.StoreFile is { } store)
        {
            configuration.AddInMemoryCollection(new Dictionary<string, string?>
            {
                ["Tieflow:Store:Kind"] = "sqlite",
                ["Tieflow:Store:Path"] = Path.GetFullPath(store, request.WorkingDirectory),
            });
        }

        builder.Logging.AddConfiguration(configuration.GetSection("Logging"));
        builder.Logging.AddSimpleConsole(o =>
        {
            o.SingleLine = true;
            o.TimestampFormat = "HH:mm:ss ";
            o.UseUtcTimestamp = true;
            o.ColorBehavior = LoggerColorBehavior.Disabled;
        });
        builder.Services.Configure<ConsoleLoggerOptions>(o => o.LogToStandardErrorThreshold = LogLevel.Trace);
        builder.Services.Configure<HostOptions>(o => o.ShutdownTimeout = TimeSpan.FromSeconds(30));

        builder.Services
            .AddTieflowClock()
            .AddTieflowSettings(configuration, baseDirectory, request.WorkingDirectory, request.Environment)
            .AddTieflowSource()
            .AddTieflowMonitor()
            .AddTieflowHealth(configuration)
            .AddTieflowConsole(request)
            .AddTieflowServiceLifetime();
        overrides?.Invoke(builder.Services);
        return builder.Build();
    }
}
