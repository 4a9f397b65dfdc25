using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using System.Text.Json;

namespace Tieflow.Storage.Tests.Influx;

/// <summary>
/// A real victoria-metrics (Debian package <c>victoria-metrics</c>, /usr/bin/victoria-metrics) on 127.0.0.1 with a
/// free port and a temporary data folder. It accepts InfluxDB.Client's writes at <c>/api/v2/write</c>.
/// </summary>
internal sealed class VictoriaMetricsServer : IDisposable
{
    public const string Binary = "/usr/bin/victoria-metrics";
    private readonly string _data;
    private readonly HttpClient _http = new() { Timeout = TimeSpan.FromSeconds(30) };
    private Process? _process;

    public VictoriaMetricsServer()
    {
        if (!File.Exists(Binary))
        {
            throw new InvalidOperationException($"{Binary} is missing: install the Debian package victoria-metrics (./test.sh does)");
        }

        _data = Path.Combine(Path.GetTempPath(), "tieflow-vm-" + Guid.NewGuid().ToString("N")[..12]);
        Directory.CreateDirectory(_data);
        Port = FreePort();
        Start();
    }

    public int Port { get; }

    public string Url => $"http://127.0.0.1:{Port}";

    public bool Running => _process is { HasExited: false };

    public void Start()
    {
        var start = new ProcessStartInfo(Binary)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add($"-httpListenAddr=127.0.0.1:{Port}");
        start.ArgumentList.Add($"-storageDataPath={_data}");
        start.ArgumentList.Add("-retentionPeriod=100y");
        start.ArgumentList.Add("-loggerLevel=ERROR");
        _process = Process.Start(start) ?? throw new InvalidOperationException("victoria-metrics did not start");
        _process.OutputDataReceived += (_, _) => { };
        _process.ErrorDataReceived += (_, _) => { };
        _process.BeginOutputReadLine();
        _process.BeginErrorReadLine();
        DateTime limit = DateTime.UtcNow.AddSeconds(30);
        while (true)
        {
            try
            {
                if (_http.GetStringAsync($"{Url}/health").GetAwaiter().GetResult().Trim() == "OK")
                {
                    return;
                }
            }
            catch (HttpRequestException)
            {
                // Not listening yet.
            }

            if (_process.HasExited || DateTime.UtcNow > limit)
            {
                throw new InvalidOperationException($"victoria-metrics did not become healthy on port {Port}");
            }

            Thread.Sleep(50);
        }
    }

    /// <summary>Stops the server the way a service manager does (SIGTERM: it finishes requests and flushes what it accepted).</summary>
    public void Stop()
    {
        if (_process is null || _process.HasExited)
        {
            return;
        }

        using (Process kill = Process.Start("kill", ["-TERM", _process.Id.ToString(CultureInfo.InvariantCulture)]))
        {
            kill.WaitForExit();
        }

        if (!_process.WaitForExit(TimeSpan.FromSeconds(30)))
        {
            _process.Kill();
            _process.WaitForExit();
        }

        _process.Dispose();
        _process = null;
    }

    /// <summary>Every sample of the series whose name starts with <c>tieflow_</c>: key "name{sorted labels}@ms" to the values seen.</summary>
    /// <remarks>
    /// The server makes accepted samples searchable in the background: with <paramref name="expected"/> it looks again
    /// (up to about 20 s) until at least that many samples are there, then returns what it holds.
    /// </remarks>
    public async Task<Dictionary<string, List<double>>> ExportAsync(int expected = 0)
    {
        Dictionary<string, List<double>> result = await ExportOnceAsync();
        for (int attempt = 0; attempt < 40 && result.Values.Sum(v => v.Count) < expected; attempt++)
        {
            await Task.Delay(500);
            result = await ExportOnceAsync();
        }

        return result;
    }

    private async Task<Dictionary<string, List<double>>> ExportOnceAsync()
    {
        (await _http.GetAsync($"{Url}/internal/force_flush")).EnsureSuccessStatusCode();
        var form = new FormUrlEncodedContent([new("match[]", "{__name__=~\"tieflow_.*\"}"), new("start", "0")]);
        using HttpResponseMessage response = await _http.PostAsync($"{Url}/api/v1/export", form);
        response.EnsureSuccessStatusCode();
        var result = new Dictionary<string, List<double>>(StringComparer.Ordinal);
        using var reader = new StreamReader(await response.Content.ReadAsStreamAsync());
        while (await reader.ReadLineAsync() is { } line)
        {
            if (line.Length == 0)
            {
                continue;
            }

            using JsonDocument doc = JsonDocument.Parse(line);
            JsonElement metric = doc.RootElement.GetProperty("metric");
            string name = metric.GetProperty("__name__").GetString()!;
            var labels = metric.EnumerateObject().Where(p => p.Name != "__name__").Select(p => $"{p.Name}={p.Value.GetString()}").Order(StringComparer.Ordinal);
            string series = $"{name}{{{string.Join(',', labels)}}}";
            var values = doc.RootElement.GetProperty("values").EnumerateArray().ToList();
            var times = doc.RootElement.GetProperty("timestamps").EnumerateArray().ToList();
            for (int i = 0; i < values.Count; i++)
            {
                double v = values[i].ValueKind == JsonValueKind.Number ? values[i].GetDouble() : double.Parse(values[i].GetString()!, CultureInfo.InvariantCulture);
                string key = $"{series}@{times[i].GetInt64().ToString(CultureInfo.InvariantCulture)}";
                if (!result.TryGetValue(key, out List<double>? list))
                {
                    result[key] = list = [];
                }

                list.Add(v);
            }
        }

        return result;
    }

    public void Dispose()
    {
        Stop();
        _http.Dispose();
        try
        {
            Directory.Delete(_data, recursive: true);
        }
        catch (IOException)
        {
            // Left in the temporary folder.
        }
    }

    private static int FreePort()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        return ((IPEndPoint)listener.LocalEndpoint).Port;
    }
}
