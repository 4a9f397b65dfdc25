using System.Net;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Diagnostics.HealthChecks;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Http;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Diagnostics.HealthChecks;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using Tieflow.Service.Monitor;
using Tieflow.Service.Settings;

namespace Tieflow.Service.Health;

/// <summary>
/// <c>/health</c> and <c>/status</c> on the loopback interface only (ASP.NET Core's health checks on a small Kestrel
/// application of its own): <c>/health</c> answers <c>Healthy</c>, <c>Degraded: reason</c> (HTTP 200) or
/// <c>Unhealthy: reason</c> (503); <c>/status</c> the JSON of <see cref="StatusJson"/>. Port 0 takes a free port
/// (<see cref="Address"/> says which).
/// </summary>
internal sealed class HealthServer(IOptions<HealthOptions> options, MonitorStatus status, ILoggerFactory loggerFactory) : IHostedService, IAsyncDisposable
{
    private readonly ILogger _logger = loggerFactory.CreateLogger("Tieflow.Health");
    private WebApplication? _app;

    /// <summary>The base address served (<c>http://127.0.0.1:PORT/</c>), once started.</summary>
    public Uri? Address { get; private set; }

    public async Task StartAsync(CancellationToken cancellationToken)
    {
        WebApplicationBuilder builder = WebApplication.CreateSlimBuilder(new WebApplicationOptions { ApplicationName = "tieflow-health", ContentRootPath = AppContext.BaseDirectory });
        builder.Logging.ClearProviders();
        builder.Services.Replace(ServiceDescriptor.Singleton(loggerFactory));
        builder.Services.AddSingleton(status);
        builder.Services.AddHealthChecks().AddCheck<MonitorHealthCheck>("monitor");
        builder.WebHost.ConfigureKestrel(k => k.Listen(IPAddress.Loopback, options.Value.Port));
        WebApplication app = builder.Build();
        app.MapHealthChecks("/health", new HealthCheckOptions
        {
            ResponseWriter = (context, report) =>
            {
                context.Response.ContentType = "text/plain; charset=utf-8";
                string reasons = string.Join("; ", report.Entries.Values.Where(e => e.Status != HealthStatus.Healthy).Select(e => e.Description));
                return context.Response.WriteAsync(report.Status == HealthStatus.Healthy ? "Healthy" : $"{report.Status}: {reasons}");
            },
        });
        app.MapGet("/status", () => Results.Text(StatusJson.Write(status.Current), "application/json; charset=utf-8"));
        try
        {
            await app.StartAsync(cancellationToken).ConfigureAwait(false);
        }
        catch
        {
            await app.DisposeAsync().ConfigureAwait(false);
            throw;
        }

        _app = app;
        string first = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First();
        Address = new Uri(first.EndsWith('/') ? first : first + "/");
        Log.HealthListening(_logger, Address.ToString());
    }

    public async Task StopAsync(CancellationToken cancellationToken)
    {
        if (_app is not null)
        {
            await _app.StopAsync(cancellationToken).ConfigureAwait(false);
        }
    }

    public async ValueTask DisposeAsync()
    {
        if (_app is not null)
        {
            await _app.DisposeAsync().ConfigureAwait(false);
            _app = null;
        }
    }
}
