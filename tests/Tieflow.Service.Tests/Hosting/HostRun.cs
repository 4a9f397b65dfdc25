using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Tieflow.Service.Cli;
using Tieflow.Service.Hosting;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>Runs <c>tieflow run</c> in process on a request, capturing the console summary and standard error.</summary>
internal sealed record HostRun(int ExitCode, string Output, string Error)
{
    /// <summary>A request for the embedded default in <paramref name="workingDirectory"/>, fast, with the health endpoints on a free port.</summary>
    public static RunRequest Request(string workingDirectory, params string[] hostArgs) =>
        new(null, null, null, workingDirectory, ["--Tieflow:Health:Port=0", .. hostArgs], TextWriter.Null, Terminal: false)
        {
            Environment = _ => null,
            SummaryInterval = TimeSpan.FromMilliseconds(200),
        };

    public static HostRun Of(RunRequest request, Action<IServiceCollection>? overrides = null, Action<IHost>? started = null)
    {
        using var output = new StringWriter();
        using var error = new StringWriter();
        TextWriter safeOutput = TextWriter.Synchronized(output);
        var context = new CliContext(safeOutput, error);
        int code = RunCommand.Run(context, request with { Output = safeOutput }, overrides, started);
        return new HostRun(code, output.ToString(), error.ToString());
    }
}
