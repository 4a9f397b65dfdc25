using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Influx;
using Tieflow.Storage.Outbox;
using StoreOutbox = Tieflow.Storage.Outbox.Outbox;

namespace Tieflow.Bench.Storage;

/// <summary>
/// Target: the outbox forwards at least 100,000 points per second to victoria-metrics. Starts /usr/bin/victoria-metrics
/// on a free loopback port with a temporary data folder, fills an outbox, times the forwarder draining it, and checks
/// the count the server holds afterwards. <c>dotnet run -c Release --project tests/Tieflow.Bench -- forward 300000 [BATCH [IN-FLIGHT [gzip|nogzip]]]</c>; after
/// the forwarding it also times the parts alone: reading the outbox, reading and removing it batch by batch (no
/// network), and the same batches written with and without gzip.
/// </summary>
internal static class ForwardingProbe
{
    public static async Task RunAsync(int count, int batchSize, int inFlight, bool gzip = true)
    {
        string folder = Path.Combine(Path.GetTempPath(), "tieflow-forward-" + Guid.NewGuid().ToString("N")[..8]);
        Directory.CreateDirectory(folder);
        int port;
        using (var listener = new TcpListener(IPAddress.Loopback, 0))
        {
            listener.Start();
            port = ((IPEndPoint)listener.LocalEndpoint).Port;
        }

        var start = new ProcessStartInfo("/usr/bin/victoria-metrics") { UseShellExecute = false, RedirectStandardError = true, RedirectStandardOutput = true };
        start.ArgumentList.Add($"-httpListenAddr=127.0.0.1:{port}");
        start.ArgumentList.Add($"-storageDataPath={Path.Combine(folder, "vm")}");
        start.ArgumentList.Add("-retentionPeriod=100y");
        start.ArgumentList.Add("-loggerLevel=ERROR");
        using Process server = Process.Start(start)!;
        server.BeginErrorReadLine();
        server.BeginOutputReadLine();
        string url = $"http://127.0.0.1:{port}";
        using var http = new HttpClient();
        try
        {
            for (int i = 0; ; i++)
            {
                try
                {
                    if ((await http.GetStringAsync($"{url}/health")).Trim() == "OK")
                    {
                        break;
                    }
                }
                catch (HttpRequestException) when (i < 200)
                {
                    await Task.Delay(50);
                }
            }

            List<MonitorRecord> records = BenchRecords.Make(count);
            using var outbox = new StoreOutbox(new OutboxOptions { Path = Path.Combine(folder, "outbox.db"), Site = "Brackenmoor", MaxBytes = 1L << 32 });
            var fill = Stopwatch.StartNew();
            foreach (MonitorRecord[] chunk in records.Chunk(10_000))
            {
                outbox.Append(chunk);
            }

            fill.Stop();

            // The parts on their own: reading the outbox in batches, and sending the same batches without the outbox.
            using Process me = Process.GetCurrentProcess();
            TimeSpan readCpu0 = me.TotalProcessorTime;
            var read = Stopwatch.StartNew();
            var batches = new List<string[]>();
            for (long after = long.MinValue; ;)
            {
                IReadOnlyList<OutboxEntry> batch = outbox.Peek(batchSize, after);
                if (batch.Count == 0)
                {
                    break;
                }

                batches.Add([.. batch.Select(e => e.Line)]);
                after = batch[^1].Id;
            }

            read.Stop();
            me.Refresh();
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"outbox read alone: {count:N0} points in {read.Elapsed.TotalSeconds:F2} s ({count / read.Elapsed.TotalSeconds:N0}/s, CPU {(me.TotalProcessorTime - readCpu0).TotalSeconds:F2} s), {batches.Sum(b => b.Sum(l => (long)l.Length + 1)) / 1e6:F1} MB of line protocol"));
            using var writer = new InfluxLineWriter(new InfluxWriterOptions { Url = url, Org = "tieflow", Bucket = "tieflow", Gzip = gzip });
            var forwarder = new OutboxForwarder(outbox, writer, new OutboxForwarderOptions { BatchSize = batchSize, MaxInFlight = inFlight }, TimeProvider.System);
            using var cts = new CancellationTokenSource();
            using Process self = Process.GetCurrentProcess();
            TimeSpan cpu0 = self.TotalProcessorTime;
            var clock = Stopwatch.StartNew();
            Task run = forwarder.RunAsync(cts.Token);
            await outbox.WaitUntilEmptyAsync(CancellationToken.None);
            clock.Stop();
            self.Refresh();
            TimeSpan cpu = self.TotalProcessorTime - cpu0;
            await cts.CancelAsync();
            await run;

            long signals = records.Count(r => r is SignalRecord);
            long samples = 0;
            var readBack = Stopwatch.StartNew();
            for (int attempt = 0; attempt < 20 && samples < signals; attempt++)
            {
                // The server makes what it accepted searchable in the background; look again until it is all there.
                (await http.GetAsync($"{url}/internal/force_flush")).EnsureSuccessStatusCode();
                string series = await http.GetStringAsync($"{url}/api/v1/export?match[]=tieflow_signal_value&start=0");
                samples = series.Split('\n', StringSplitOptions.RemoveEmptyEntries).Sum(line => (long)line.Split("\"values\":[")[1].Split(']')[0].Count(c => c == ',') + 1);
                if (samples < signals)
                {
                    await Task.Delay(500);
                }
            }

            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"outbox fill: {count:N0} records in {fill.Elapsed.TotalSeconds:F2} s ({count / fill.Elapsed.TotalSeconds:N0}/s)"));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"forwarding: {forwarder.Forwarded:N0} points in {clock.Elapsed.TotalSeconds:F2} s = {forwarder.Forwarded / clock.Elapsed.TotalSeconds:N0} points/s (batches of {batchSize}, {inFlight} in flight, {(gzip ? "gzip" : "no gzip")}); failures {forwarder.Failures}; forwarder CPU {cpu.TotalSeconds:F2} s ({forwarder.Forwarded / cpu.TotalSeconds:N0} points per CPU second)"));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"server holds {samples:N0} tieflow_signal_value samples of {signals:N0} written (read back after {readBack.Elapsed.TotalSeconds:F1} s)"));
            // Reading and removing batch by batch as the forwarder does, without the network: what the outbox costs.
            using (var second = new StoreOutbox(new OutboxOptions { Path = Path.Combine(folder, "outbox2.db"), Site = "Brackenmoor", MaxBytes = 1L << 32 }))
            {
                foreach (MonitorRecord[] chunk in records.Chunk(10_000))
                {
                    second.Append(chunk);
                }

                self.Refresh();
                TimeSpan drainCpu0 = self.TotalProcessorTime;
                var drain = Stopwatch.StartNew();
                for (IReadOnlyList<OutboxEntry> batch = second.Peek(batchSize); batch.Count > 0; batch = second.Peek(batchSize))
                {
                    second.Remove(batch[^1].Id);
                }

                drain.Stop();
                self.Refresh();
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"outbox read and remove alone: {count:N0} points in {drain.Elapsed.TotalSeconds:F2} s ({count / drain.Elapsed.TotalSeconds:N0}/s, CPU {(self.TotalProcessorTime - drainCpu0).TotalSeconds:F2} s)"));
            }

            foreach (bool zip in new[] { true, false })
            {
                using var alone = new InfluxLineWriter(new InfluxWriterOptions { Url = url, Org = "tieflow", Bucket = "probe", Gzip = zip });
                self.Refresh();
                TimeSpan sendCpu0 = self.TotalProcessorTime;
                var send = Stopwatch.StartNew();
                foreach (string[] b in batches)
                {
                    await alone.WriteAsync(b, CancellationToken.None);
                }

                send.Stop();
                self.Refresh();
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"writes alone ({(zip ? "gzip" : "no gzip")}, one at a time): {count:N0} points in {send.Elapsed.TotalSeconds:F2} s ({count / send.Elapsed.TotalSeconds:N0}/s, CPU {(self.TotalProcessorTime - sendCpu0).TotalSeconds:F2} s)"));
            }

        }
        finally
        {
            server.Kill();
            await server.WaitForExitAsync();
            Directory.Delete(folder, recursive: true);
        }
    }
}
