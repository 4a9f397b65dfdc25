using System.Diagnostics;
using System.Text;

namespace Tieflow.Service.Tests.Hosting;

/// <summary>The built <c>tieflow</c> run as a child process in a working directory of the test's, with its output captured line by line.</summary>
internal sealed class TieflowProcess : IDisposable
{
    private readonly Process _process;
    private readonly StringBuilder _output = new();
    private readonly StringBuilder _error = new();
    private readonly Lock _gate = new();

    public TieflowProcess(string workingDirectory, IReadOnlyDictionary<string, string>? environment, params string[] args)
    {
        var start = new ProcessStartInfo(Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") ?? "dotnet")
        {
            WorkingDirectory = workingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "tieflow.dll"));
        foreach (string a in args)
        {
            start.ArgumentList.Add(a);
        }

        foreach (var (k, v) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[k] = v;
        }

        _process = new Process { StartInfo = start };
        _process.OutputDataReceived += (_, e) => Append(_output, e.Data);
        _process.ErrorDataReceived += (_, e) => Append(_error, e.Data);
        _process.Start();
        _process.BeginOutputReadLine();
        _process.BeginErrorReadLine();
    }

    /// <summary>The process id.</summary>
    public int Id => _process.Id;

    /// <summary>Whether the process has ended.</summary>
    public bool HasExited => _process.HasExited;

    public string Output
    {
        get
        {
            lock (_gate)
            {
                return _output.ToString();
            }
        }
    }

    public string Error
    {
        get
        {
            lock (_gate)
            {
                return _error.ToString();
            }
        }
    }

    /// <summary>Waits until standard error holds <paramref name="text"/>; false when the process ends or <paramref name="patience"/> passes first.</summary>
    public bool WaitForError(string text, TimeSpan patience) => WaitUntil(() => Error.Contains(text, StringComparison.Ordinal), patience);

    /// <summary>Waits until <paramref name="condition"/> holds; false when the process ends or <paramref name="patience"/> passes first.</summary>
    public bool WaitUntil(Func<bool> condition, TimeSpan patience)
    {
        var clock = Stopwatch.StartNew();
        while (clock.Elapsed < patience)
        {
            if (condition())
            {
                return true;
            }

            if (_process.HasExited)
            {
                return condition();
            }

            Thread.Sleep(50);
        }

        return false;
    }

    /// <summary>Sends SIGTERM, as systemd does to stop a service.</summary>
    public void Terminate()
    {
        using var kill = Process.Start("kill", ["-TERM", _process.Id.ToString(System.Globalization.CultureInfo.InvariantCulture)]);
        kill.WaitForExit();
    }

    /// <summary>Kills the process with SIGKILL, as a power cut or the out-of-memory killer would, and waits for it to end.</summary>
    public void KillHard()
    {
        _process.Kill();
        _process.WaitForExit();
    }

    /// <summary>The exit code, once the process has ended (killed after <paramref name="patience"/>: then -1).</summary>
    public int WaitForExit(TimeSpan patience)
    {
        if (!_process.WaitForExit(patience))
        {
            _process.Kill(entireProcessTree: true);
            return -1;
        }

        _process.WaitForExit();
        return _process.ExitCode;
    }

    public void Dispose()
    {
        if (!_process.HasExited)
        {
            _process.Kill(entireProcessTree: true);
        }

        _process.Dispose();
    }

    private void Append(StringBuilder target, string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (_gate)
        {
            target.AppendLine(line);
        }
    }
}
