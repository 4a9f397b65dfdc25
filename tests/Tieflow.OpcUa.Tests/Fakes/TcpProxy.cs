using System.Net;
using System.Net.Sockets;

namespace Tieflow.OpcUa.Tests.Fakes;

/// <summary>
/// A loopback TCP forwarder between a client and a server, for link failures the server itself cannot produce:
/// <see cref="Cut"/> resets every connection; <see cref="Freeze"/> keeps the sockets open but forwards nothing (a
/// silent peer, like a server stopped with SIGSTOP); new connections are forwarded normally.
/// </summary>
internal sealed class TcpProxy : IAsyncDisposable
{
    private readonly TcpListener _listener = new(IPAddress.Loopback, 0);
    private readonly int _targetPort;
    private readonly CancellationTokenSource _stop = new();
    private readonly List<(TcpClient Client, TcpClient Server, CancellationTokenSource Cts)> _links = [];
    private readonly Task _accept;
    private volatile bool _frozen;

    public TcpProxy(int targetPort)
    {
        _targetPort = targetPort;
        _listener.Start();
        Port = ((IPEndPoint)_listener.LocalEndpoint).Port;
        _accept = Task.Run(AcceptAsync);
    }

    public int Port { get; }

    /// <summary>Freezes the existing connections (new ones are forwarded).</summary>
    public void Freeze()
    {
        lock (_links)
        {
            _frozen = true;
            foreach (var link in _links)
            {
                link.Cts.Cancel();
            }
        }
    }

    public void Cut()
    {
        lock (_links)
        {
            foreach (var (client, server, cts) in _links)
            {
                cts.Cancel();
                client.Client.LingerState = new LingerOption(true, 0);
                client.Dispose();
                server.Dispose();
            }

            _links.Clear();
        }
    }

    private async Task AcceptAsync()
    {
        while (!_stop.IsCancellationRequested)
        {
            TcpClient client;
            try
            {
                client = await _listener.AcceptTcpClientAsync(_stop.Token);
            }
            catch (Exception ex) when (ex is OperationCanceledException or SocketException or ObjectDisposedException)
            {
                return;
            }

            var server = new TcpClient();
            await server.ConnectAsync(IPAddress.Loopback, _targetPort);
            var cts = CancellationTokenSource.CreateLinkedTokenSource(_stop.Token);
            lock (_links)
            {
                _frozen = false;
                _links.Add((client, server, cts));
            }

            _ = PumpAsync(client.GetStream(), server.GetStream(), cts.Token);
            _ = PumpAsync(server.GetStream(), client.GetStream(), cts.Token);
        }
    }

    private static async Task PumpAsync(NetworkStream from, NetworkStream to, CancellationToken token)
    {
        var buffer = new byte[16384];
        try
        {
            while (true)
            {
                var n = await from.ReadAsync(buffer, token);
                if (n == 0)
                {
                    to.Socket.Shutdown(SocketShutdown.Send);
                    return;
                }

                await to.WriteAsync(buffer.AsMemory(0, n), token);
            }
        }
        catch (Exception ex) when (ex is OperationCanceledException or IOException or SocketException or ObjectDisposedException)
        {
            // Cut or frozen: a frozen link simply stops forwarding and keeps its sockets open.
        }
    }

    public bool IsFrozen => _frozen;

    public async ValueTask DisposeAsync()
    {
        _stop.Cancel();
        _listener.Stop();
        Cut();
        await _accept;
        _stop.Dispose();
    }
}
