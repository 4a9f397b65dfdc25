using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Options;
using Tieflow.Service.Health;
using Tieflow.Service.Monitor;
using Tieflow.Service.Output;
using Tieflow.Service.Settings;
using Tieflow.Service.Sources;
using Tieflow.Service.Sources.Simulator;

namespace Tieflow.Service.Hosting;

/// <summary>The composition root of <c>tieflow run</c>: one extension method per concern.</summary>
internal static class TieflowServices
{
    /// <summary>
    /// The settings sections bound to their options classes, each with its validator, all validated at start
    /// (<c>ValidateOnStart</c>); values whose shape is wrong are left out of the binding and reported by key path.
    /// </summary>
    public static IServiceCollection AddTieflowSettings(this IServiceCollection services, IConfiguration configuration, string baseDirectory, string workingDirectory, Func<string, string?> environment)
    {
        var context = new SettingsContext(configuration, baseDirectory, checkEnvironment: true, environment, workingDirectory);
        IConfiguration good = SettingsShape.WithoutBadKeys(configuration);
        services.AddSingleton(context);
        services.AddOptions<TieflowOptions>().Bind(good.GetSection(TieflowOptions.Section)).ValidateOnStart();
        services.AddOptions<SourceOptions>().Bind(good.GetSection(SourceOptions.Section)).ValidateOnStart();
        services.AddOptions<LabsOptions>().Bind(good.GetSection(LabsOptions.Section)).ValidateOnStart();
        services.AddOptions<StoreOptions>().Bind(good.GetSection(StoreOptions.Section)).ValidateOnStart();
        services.AddOptions<HealthOptions>().Bind(good.GetSection(HealthOptions.Section)).ValidateOnStart();
        services.AddSingleton<IValidateOptions<TieflowOptions>, TieflowOptionsValidator>();
        services.AddSingleton<IValidateOptions<SourceOptions>, SourceOptionsValidator>();
        services.AddSingleton<IValidateOptions<LabsOptions>, LabsOptionsValidator>();
        services.AddSingleton<IValidateOptions<StoreOptions>, StoreOptionsValidator>();
        services.AddSingleton<IValidateOptions<HealthOptions>, HealthOptionsValidator>();
        return services;
    }

    /// <summary>
    /// The sources: one <see cref="ISignalSourceFactory"/> per kind of <c>Tieflow:Source:Kind</c> (and those beside the
    /// kind, such as the lab drop folder), chosen at start by <see cref="SignalSources"/>. A new source kind adds its
    /// factory here.
    /// </summary>
    public static IServiceCollection AddTieflowSource(this IServiceCollection services)
    {
        services.AddSingleton<ISignalSourceFactory, SimulatorSourceFactory>();
        services.AddSingleton<ISignalSourceFactory, OpcUaSourceFactory>();
        services.AddSingleton<ISignalSourceFactory, LabFolderSourceFactory>();
        services.AddSingleton<SignalSources>();
        return services;
    }

    /// <summary>The monitor (analysis and store) and the status it publishes.</summary>
    public static IServiceCollection AddTieflowMonitor(this IServiceCollection services)
    {
        services.AddSingleton<MonitorStatus>();
        services.AddSingleton<RunOutcome>();
        services.AddSingleton<MonitorService>();
        services.AddHostedService(sp => sp.GetRequiredService<MonitorService>());
        return services;
    }

    /// <summary><c>/health</c> and <c>/status</c> on loopback, unless <c>Tieflow:Health:Enabled</c> is false.</summary>
    public static IServiceCollection AddTieflowHealth(this IServiceCollection services, IConfiguration configuration)
    {
        IConfiguration good = SettingsShape.WithoutBadKeys(configuration);
        if (!good.GetValue($"{HealthOptions.Section}:Enabled", true))
        {
            return services;
        }

        services.AddSingleton<HealthServer>();
        services.AddHostedService(sp => sp.GetRequiredService<HealthServer>());
        return services;
    }

    /// <summary>The console summary (live display on a terminal, periodic lines otherwise) and the run-time limit.</summary>
    public static IServiceCollection AddTieflowConsole(this IServiceCollection services, RunRequest request)
    {
        services.AddSingleton(request);
        services.AddHostedService<ConsoleSummary>();
        if (request.MaxRuntime is TimeSpan limit)
        {
            services.AddHostedService(sp => ActivatorUtilities.CreateInstance<RunLimit>(sp, limit));
        }

        return services;
    }

    /// <summary>The clock of the run (tests replace it).</summary>
    public static IServiceCollection AddTieflowClock(this IServiceCollection services)
    {
        services.AddSingleton(TimeProvider.System);
        return services;
    }

    /// <summary>Runs as a systemd service or a Windows service when started by one (no effect otherwise).</summary>
    public static IServiceCollection AddTieflowServiceLifetime(this IServiceCollection services)
    {
        services.AddSystemd();
        services.AddWindowsService(o => o.ServiceName = "Tieflow");
        return services;
    }
}
