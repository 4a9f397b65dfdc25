namespace Tieflow.OpcUa.Tests.Interop;

/// <summary>One node-opcua plant server with every security policy and mode and the user <c>operator</c>.</summary>
public sealed class SecurePlantPeerFixture : IAsyncLifetime
{
    private NodePeer? _peer;

    /// <summary>The running peer.</summary>
    public NodePeer Peer => _peer ?? throw new InvalidOperationException("the peer has not been started");

    /// <inheritdoc/>
    public async Task InitializeAsync() => _peer = await NodePeer.StartServerAsync("--tick", "200", "--secure", "--user", "operator").ConfigureAwait(false);

    /// <inheritdoc/>
    public Task DisposeAsync()
    {
        _peer?.Dispose();
        return Task.CompletedTask;
    }
}
