using System.Diagnostics;
using System.Globalization;
using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Server;

namespace Tieflow.Bench.OpcUa;

/// <summary>
/// Time of a whole connect (discovery channel and GetEndpoints, certificate check, secured channel, CreateSession,
/// ActivateSession, NamespaceArray read) to our server over loopback, per security (target: under 200 ms secured).
/// Run: <c>dotnet run -c Release --project tests/Tieflow.Bench -- connect [rounds]</c>.
/// </summary>
public static class SecuredConnectProbe
{
    public static async Task RunAsync(int rounds)
    {
        var pki = Path.Combine(Path.GetTempPath(), "tieflow-bench-connect-" + Guid.NewGuid().ToString("N"));
        try
        {
            var serverStore = new UaCertificateStore(Path.Combine(pki, "server"));
            var clientStore = new UaCertificateStore(Path.Combine(pki, "client"));
            await using var server = new UaServer(new UaServerOptions
            {
                ResourcePath = "/bench",
                Security = new UaServerSecurityOptions
                {
                    Certificate = serverStore.GetOrCreateApplicationCertificate("urn:tieflow:opcua-server", "Bench server", ["127.0.0.1"]),
                    AcceptAnyClientCertificate = true,
                },
            });
            await server.StartAsync();
            clientStore.Trust(Path.Combine(serverStore.OwnDirectory, "certificate.der"));
            foreach (var security in new[] { UaSecurity.None }.Concat(UaSecurity.AllSecure))
            {
                var times = new List<double>();
                for (var i = 0; i <= rounds; i++)
                {
                    await using var client = new UaClient(new UaClientOptions
                    {
                        EndpointUrl = new Uri($"opc.tcp://127.0.0.1:{server.Port}/bench"),
                        Security = security,
                        CertificateStore = clientStore,
                    });
                    var start = Stopwatch.GetTimestamp();
                    await client.ConnectAsync();
                    var elapsed = Stopwatch.GetElapsedTime(start).TotalMilliseconds;
                    if (i > 0)
                    {
                        // The first round warms up the JIT and loads the client certificate.
                        times.Add(elapsed);
                    }
                }

                times.Sort();
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"{security,-40} median {times[times.Count / 2],7:F1} ms   p95 {times[(int)(times.Count * 0.95)],7:F1} ms   max {times[^1],7:F1} ms"));
            }
        }
        finally
        {
            Directory.Delete(pki, recursive: true);
        }
    }
}
