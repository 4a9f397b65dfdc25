using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Runtime.InteropServices;
using System.Text;

namespace Tieflow.Service.Tests.Sources;

/// <summary>
/// <c>tieflow-sim run --serve</c> as a child process (the built tieflow-sim.dll next to the tests), so that a test can
/// stop, restart, freeze (SIGSTOP) and thaw (SIGCONT) a real OPC UA server.
/// </summary>
internal sealed class SimulatorProcess : IDisposable
{
    private const int SigTerm = 15;
    private const int SigStop = 19;
    private const int SigCont = 18;

    private readonly Process _process;
    private readonly StringBuilder _error = new();
    private readonly TaskCompletionSource _serving = new(TaskCreationOptions.RunContinuationsAsynchronously);

    private SimulatorProcess(Process process) => _process = process;

    public string Errors
    {
        get
        {
            lock (_error)
            {
                return _error.ToString();
            }
        }
    }

    /// <summary>A TCP port nothing listens on right now.</summary>
    public static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    /// <summary>
    /// Starts the simulator serving <paramref name="scenario"/> on <paramref name="port"/> and waits until it serves;
    /// with <paramref name="anchor"/>, plant time follows the wall clock from it (<c>--anchor</c>), so that a restart
    /// resumes the plant where the clock says.
    /// </summary>
    public static async Task<SimulatorProcess> StartAsync(string scenario, int port, double speed, string? history = null, DateTimeOffset? anchor = null)
    {
        string dll = Path.Combine(AppContext.BaseDirectory, "tieflow-sim.dll");
        Assert.True(File.Exists(dll), $"the simulator is not built next to the tests: {dll}");
        var start = new ProcessStartInfo(Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") ?? "dotnet")
        {
            RedirectStandardError = true,
            RedirectStandardOutput = true,
            UseShellExecute = false,
        };
        foreach (string a in new[] { dll, "run", "--scenario", scenario, "--serve", $"opc.tcp://127.0.0.1:{port}", "--speed", speed.ToString(System.Globalization.CultureInfo.InvariantCulture) })
        {
            start.ArgumentList.Add(a);
        }

        if (history is not null)
        {
            start.ArgumentList.Add("--history");
            start.ArgumentList.Add(history);
        }

        if (anchor is DateTimeOffset at)
        {
            start.ArgumentList.Add("--anchor");
            start.ArgumentList.Add(at.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss.fff'Z'", System.Globalization.CultureInfo.InvariantCulture));
        }

        var process = new Process { StartInfo = start, EnableRaisingEvents = true };
        var result = new SimulatorProcess(process);
        process.ErrorDataReceived += (_, e) =>
        {
            if (e.Data is null)
            {
                return;
            }

            lock (result._error)
            {
                result._error.AppendLine(e.Data);
            }

            if (e.Data.StartsWith("serving ", StringComparison.Ordinal))
            {
                result._serving.TrySetResult();
            }
        };
        process.OutputDataReceived += (_, _) => { };
        process.Exited += (_, _) => result._serving.TrySetException(new InvalidOperationException("the simulator ended before serving"));
        process.Start();
        process.BeginErrorReadLine();
        process.BeginOutputReadLine();
        try
        {
            await result._serving.Task.WaitAsync(TimeSpan.FromSeconds(60));
        }
        catch (Exception e)
        {
            result.Dispose();
            throw new InvalidOperationException($"tieflow-sim did not start serving on port {port}: {e.Message}\n{result.Errors}", e);
        }

        return result;
    }

    public int Id => _process.Id;

    /// <summary>Asks the simulator to stop (SIGTERM) and waits; kills it when it does not end within the time.</summary>
    public void Stop()
    {
        if (_process.HasExited)
        {
            return;
        }

        _ = Kill(_process.Id, SigTerm);
        if (!_process.WaitForExit(TimeSpan.FromSeconds(20)))
        {
            _process.Kill();
            _process.WaitForExit(TimeSpan.FromSeconds(20));
        }
    }

    /// <summary>Ends the process at once (SIGKILL), the way a crash does.</summary>
    public void Crash()
    {
        if (!_process.HasExited)
        {
            _process.Kill();
            _process.WaitForExit(TimeSpan.FromSeconds(20));
        }
    }

    public void Freeze() => Assert.Equal(0, Kill(_process.Id, SigStop));

    public void Thaw() => Assert.Equal(0, Kill(_process.Id, SigCont));

    public void Dispose()
    {
        try
        {
            if (!_process.HasExited)
            {
                _ = Kill(_process.Id, SigCont);
                _process.Kill();
                _process.WaitForExit(TimeSpan.FromSeconds(20));
            }
        }
        catch (InvalidOperationException)
        {
            // Never started.
        }

        _process.Dispose();
    }

    [DllImport("libc", EntryPoint = "kill", SetLastError = true)]
    private static extern int Kill(int pid, int signal);
}
