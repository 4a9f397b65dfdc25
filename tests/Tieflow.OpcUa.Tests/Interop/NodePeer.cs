using System.ComponentModel;
using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Runtime.InteropServices;
using System.Text.Json;
using System.Threading.Channels;

namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>
/// A node-opcua process started from tests/interop: the simulated-plant server (<c>plant-peer.mjs</c>), kept
/// running until disposed, or the probe client (<c>probe.mjs</c>, see <see cref="RunProbeAsync"/>).
/// Only our own lines are kept from stdout (READY, OK, ERR and JSON objects): node-opcua writes its diagnostics to
/// stdout too.
/// </summary>
public sealed class NodePeer : IDisposable
{
    private const int SigTerm = 15;
    private const int SigCont = 18;
    private const int SigStop = 19;

    private static readonly TimeSpan ReadyTimeout = TimeSpan.FromSeconds(30);

    private readonly string[] _extraArgs;
    private readonly Channel<string> _replies = Channel.CreateUnbounded<string>();
    private readonly List<string> _diagnostics = [];
    private Process? _process;
    private bool _frozen;

    private NodePeer(int port, string[] extraArgs)
    {
        Port = port;
        _extraArgs = extraArgs;
    }

    /// <summary>The password of the user that secured peers accept and that the probe logs in with (passed through the environment).</summary>
    public const string PeerPassword = "Interop-Pw-5813";

    /// <summary>The TCP port the server listens on (kept across restarts).</summary>
    public int Port { get; }

    /// <summary>The endpoint URL, <c>opc.tcp://127.0.0.1:PORT/sim</c>.</summary>
    public string EndpointUrl => $"opc.tcp://127.0.0.1:{Port}/sim";

    /// <summary>The process id of the running server.</summary>
    public int ProcessId => _process?.Id ?? throw new InvalidOperationException("the peer is not running");

    /// <summary>The repository root (the folder holding Monitor.sln), found from the test's base directory.</summary>
    public static string RepositoryRoot { get; } = FindRepositoryRoot();

    /// <summary>tests/interop, where the node scripts and their node_modules live.</summary>
    public static string InteropDirectory { get; } = Path.Combine(RepositoryRoot, "tests", "interop");

    /// <summary>Starts plant-peer.mjs on a free loopback port and waits for its READY line.</summary>
    public static async Task<NodePeer> StartServerAsync(params string[] extraArgs)
    {
        var peer = new NodePeer(FindFreePort(), extraArgs);
        try
        {
            await peer.StartProcessAsync().ConfigureAwait(false);
        }
        catch
        {
            peer.Dispose();
            throw;
        }
        return peer;
    }

    /// <summary>Sends one stdin command (pause, resume, set ...) and returns the peer's OK/ERR answer.</summary>
    public async Task<string> CommandAsync(string line)
    {
        var process = _process ?? throw new InvalidOperationException("the peer is not running");
        await process.StandardInput.WriteLineAsync(line).ConfigureAwait(false);
        await process.StandardInput.FlushAsync().ConfigureAwait(false);
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        while (true)
        {
            var reply = await _replies.Reader.ReadAsync(cts.Token).ConfigureAwait(false);
            if (reply.StartsWith("OK ", StringComparison.Ordinal) || reply.StartsWith("ERR ", StringComparison.Ordinal))
            {
                return reply;
            }
        }
    }

    /// <summary>Freezes the server with SIGSTOP: its sockets stay open but nothing is answered.</summary>
    public void Freeze()
    {
        Signal(SigStop);
        _frozen = true;
    }

    /// <summary>Lets a frozen server run again (SIGCONT).</summary>
    public void Thaw()
    {
        Signal(SigCont);
        _frozen = false;
    }

    /// <summary>Stops the server process cleanly (SIGTERM, sessions answered with Bad_SessionClosed).</summary>
    public async Task StopAsync()
    {
        var process = _process;
        if (process is null)
        {
            return;
        }
        if (_frozen)
        {
            Thaw();
        }
        Signal(SigTerm);
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        try
        {
            await process.WaitForExitAsync(cts.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
        }
        process.Dispose();
        _process = null;
    }

    /// <summary>Stops the server process and starts a new one on the same port.</summary>
    public async Task RestartAsync()
    {
        await StopAsync().ConfigureAwait(false);
        await StartProcessAsync().ConfigureAwait(false);
    }

    /// <summary>
    /// Runs probe.mjs against <paramref name="url"/> to completion and returns its JSON lines.
    /// </summary>
    /// <exception cref="InvalidOperationException">The probe failed or timed out; the message holds its output.</exception>
    public static async Task<IReadOnlyList<JsonElement>> RunProbeAsync(string url, TimeSpan timeout, params string[] args)
    {
        using var process = CreateNodeProcess("probe.mjs", [url, .. args]);
        var lines = new List<string>();
        var all = new List<string>();
        process.OutputDataReceived += (_, e) =>
        {
            if (e.Data is null)
            {
                return;
            }
            lock (all)
            {
                all.Add(e.Data);
                if (e.Data.StartsWith('{'))
                {
                    lines.Add(e.Data);
                }
            }
        };
        process.ErrorDataReceived += (_, e) =>
        {
            if (e.Data is not null)
            {
                lock (all)
                {
                    all.Add(e.Data);
                }
            }
        };
        StartOrExplain(process);
        process.StandardInput.Close();
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        using var cts = new CancellationTokenSource(timeout);
        try
        {
            await process.WaitForExitAsync(cts.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new InvalidOperationException($"probe.mjs did not finish within {timeout}; output:\n{Joined(all)}");
        }
        // WaitForExitAsync returns once the output streams are drained as well.
        List<JsonElement> parsed;
        lock (all)
        {
            parsed = [.. lines.Select(l => JsonDocument.Parse(l).RootElement.Clone())];
        }
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"probe.mjs exited with {process.ExitCode}; output:\n{Joined(all)}");
        }
        return parsed;
    }

    /// <inheritdoc/>
    public void Dispose()
    {
        var process = _process;
        _process = null;
        if (process is null)
        {
            return;
        }
        try
        {
            if (!process.HasExited)
            {
                if (_frozen)
                {
                    _ = kill(process.Id, SigCont);
                }
                // Closing stdin stops the peer cleanly (--stdin-eof-exit); kill the tree if it lingers.
                process.StandardInput.Close();
                if (!process.WaitForExit(TimeSpan.FromSeconds(5)))
                {
                    process.Kill(entireProcessTree: true);
                    process.WaitForExit(TimeSpan.FromSeconds(5));
                }
            }
        }
        catch (InvalidOperationException)
        {
            // The process is already gone: nothing left to stop.
        }
        finally
        {
            process.Dispose();
        }
    }

    private async Task StartProcessAsync()
    {
        var process = CreateNodeProcess("plant-peer.mjs", ["--port", Port.ToString(System.Globalization.CultureInfo.InvariantCulture), "--stdin-eof-exit", .. _extraArgs]);
        var ready = new TaskCompletionSource<string>(TaskCreationOptions.RunContinuationsAsynchronously);
        process.OutputDataReceived += (_, e) =>
        {
            if (e.Data is null)
            {
                ready.TrySetException(new InvalidOperationException($"plant-peer.mjs exited before READY; output:\n{Diagnostics()}"));
                return;
            }
            lock (_diagnostics)
            {
                _diagnostics.Add(e.Data);
                if (_diagnostics.Count > 400)
                {
                    _diagnostics.RemoveAt(0);
                }
            }
            if (e.Data.StartsWith("READY ", StringComparison.Ordinal))
            {
                ready.TrySetResult(e.Data["READY ".Length..]);
            }
            else if (e.Data.StartsWith("OK ", StringComparison.Ordinal) || e.Data.StartsWith("ERR ", StringComparison.Ordinal) || e.Data.StartsWith('{'))
            {
                _replies.Writer.TryWrite(e.Data);
            }
        };
        process.ErrorDataReceived += (_, e) =>
        {
            if (e.Data is not null)
            {
                lock (_diagnostics)
                {
                    _diagnostics.Add(e.Data);
                }
            }
        };
        StartOrExplain(process);
        _process = process;
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        var finished = await Task.WhenAny(ready.Task, Task.Delay(ReadyTimeout)).ConfigureAwait(false);
        if (finished != ready.Task)
        {
            throw new TimeoutException($"plant-peer.mjs printed no READY line within {ReadyTimeout}; output:\n{Diagnostics()}");
        }
        var url = await ready.Task.ConfigureAwait(false);
        if (!string.Equals(url, EndpointUrl, StringComparison.Ordinal))
        {
            throw new InvalidOperationException($"plant-peer.mjs reported {url}, expected {EndpointUrl}");
        }
    }

    private string Diagnostics()
    {
        lock (_diagnostics)
        {
            return Joined(_diagnostics);
        }
    }

    private static string Joined(IEnumerable<string> lines) => string.Join('\n', lines.TakeLast(60));

    private static Process CreateNodeProcess(string script, string[] args)
    {
        if (!File.Exists(Path.Combine(InteropDirectory, script)))
        {
            throw new InvalidOperationException($"{script} is missing from {InteropDirectory}");
        }
        if (!Directory.Exists(Path.Combine(InteropDirectory, "node_modules", "node-opcua-server")))
        {
            throw new InvalidOperationException(
                $"the node-opcua packages are not installed in {InteropDirectory}/node_modules: run `npm ci` there " +
                "(test.sh does it when node_modules is missing)");
        }
        var info = new ProcessStartInfo("node")
        {
            WorkingDirectory = InteropDirectory,
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        info.Environment["TIEFLOW_PEER_PASSWORD"] = PeerPassword;
        info.Environment["TIEFLOW_PROBE_PASSWORD"] = PeerPassword;
        info.ArgumentList.Add(script);
        foreach (var arg in args)
        {
            info.ArgumentList.Add(arg);
        }
        return new Process { StartInfo = info };
    }

    private static void StartOrExplain(Process process)
    {
        try
        {
            process.Start();
        }
        catch (Win32Exception e)
        {
            throw new InvalidOperationException(
                "cannot start `node`: Node.js 20 or later must be on PATH for the interop tests (Debian package nodejs; test.sh installs it)", e);
        }
    }

    private void Signal(int signal)
    {
        var process = _process ?? throw new InvalidOperationException("the peer is not running");
        if (kill(process.Id, signal) != 0)
        {
            throw new InvalidOperationException($"kill({process.Id}, {signal}) failed with errno {Marshal.GetLastPInvokeError()}");
        }
    }

    private static int FindFreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }

    private static string FindRepositoryRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "Monitor.sln")))
            {
                return dir.FullName;
            }
        }
        throw new InvalidOperationException($"no Monitor.sln found above {AppContext.BaseDirectory}");
    }

    [DllImport("libc", SetLastError = true)]
#pragma warning disable SYSLIB1054 // Two ints: no marshalling to generate.
    private static extern int kill(int pid, int sig);
#pragma warning restore SYSLIB1054
}
