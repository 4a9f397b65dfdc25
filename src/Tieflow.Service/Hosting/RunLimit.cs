using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace Tieflow.Service.Hosting;

/// <summary><c>--max-runtime</c>: asks the host to stop, cleanly, after that much time of the injected clock.</summary>
internal sealed class RunLimit(TimeSpan limit, IHostApplicationLifetime lifetime, TimeProvider time, ILoggerFactory loggerFactory) : BackgroundService
{
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        try
        {
            await Task.Delay(limit, time, stoppingToken).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            return;
        }

        Log.MaxRuntimeReached(loggerFactory.CreateLogger("Tieflow.Run"), limit);
        lifetime.StopApplication();
    }
}
