namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>One node-opcua plant server shared by the tests of a class (start-up costs 1-2 s).</summary>
public sealed class PlantPeerFixture : IAsyncLifetime
{
    private NodePeer? _peer;

    /// <summary>The running peer.</summary>
    public NodePeer Peer => _peer ?? throw new InvalidOperationException("the peer has not been started");

    /// <inheritdoc/>
    public async Task InitializeAsync() => _peer = await NodePeer.StartServerAsync("--tick", "200").ConfigureAwait(false);

    /// <inheritdoc/>
    public Task DisposeAsync()
    {
        _peer?.Dispose();
        return Task.CompletedTask;
    }
}
