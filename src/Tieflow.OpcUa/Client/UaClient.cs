using System.Collections.Concurrent;
using System.Diagnostics;
using Tieflow.OpcUa.Diagnostics;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Client;

/// <summary>
/// A read-only OPC UA client (UA Binary over opc.tcp; SecurityPolicy None or the RSA policies Basic256Sha256,
/// Aes128_Sha256_RsaOaep and Aes256_Sha256_RsaPss in Sign or SignAndEncrypt, see <see cref="UaClientOptions.Security"/>): browse, translate browse paths, read,
/// and subscriptions whose notifications arrive on channels. The connection heals itself: every request has a
/// timeout, a keep-alive watchdog notices a silent server, and a lost connection is re-established with backoff
/// in the specification's order (reactivate the session, else a new session with TransferSubscriptions, else
/// recreate the subscriptions), with namespace indexes re-resolved by URI and gaps reported on each subscription.
/// Writing and calling methods are not possible: the client has no such requests.
/// </summary>
public sealed partial class UaClient : IAsyncDisposable
{
    private int _tokenRenewals;
    private const string TransportProfileUri = "http://opcfoundation.org/UA-Profile/Transport/uatcp-uasc-uabinary";
    private readonly UaClientOptions _options;
    private readonly TimeProvider _time;
    private readonly ConcurrentQueue<SubscriptionAcknowledgement> _acks = new();
    private readonly List<UaSubscription> _subscriptions = [];
    private readonly SemaphoreSlim _subscriptionAdded = new(0);
    private readonly CancellationTokenSource _closing = new();
    private ClientSecureChannel? _channel;
    private NodeId _authenticationToken;
    private string[] _namespaceUris = [];
    private CancellationTokenSource? _publishing;
    private ITimer? _watchdog;
    private Task? _reconnect;
    private int _reconnecting;
    private int _activePublishers;
    private int _publishTarget;
    private uint _nextClientHandle;
    private long _lastSessionKeepAlive;
    private volatile UaConnectionState _state;

    /// <summary>Creates a client; nothing is sent until <see cref="ConnectAsync"/>.</summary>
    /// <param name="options">The settings; validated here.</param>
    /// <param name="timeProvider">The clock for timeouts, renewals, the watchdog and backoff (default the system clock).</param>
    /// <exception cref="ArgumentException">An option is out of range (the message names it).</exception>
    public UaClient(UaClientOptions options, TimeProvider? timeProvider = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        _options = options;
        _time = timeProvider ?? TimeProvider.System;
        _publishTarget = options.PublishRequestCount;
    }

    /// <summary>Raised on every change of <see cref="State"/> (on a thread-pool thread; keep handlers short).</summary>
    public event EventHandler<UaConnectionStateChange>? StateChanged;

    /// <summary>The connection state.</summary>
    public UaConnectionState State => _state;

    /// <summary>The server's NamespaceArray as read after the last (re)connection.</summary>
    public IReadOnlyList<string> NamespaceUris => _namespaceUris;

    /// <summary>The client's clock (UTC).</summary>
    internal DateTime UtcNow => _time.GetUtcNow().UtcDateTime;

    /// <summary>How many times the connection has been re-established.</summary>
    public int ReconnectCount { get; private set; }

    /// <summary>How many times the secure channel's token has been renewed, over every channel of this client.</summary>
    public int TokenRenewals => Volatile.Read(ref _tokenRenewals);

    /// <summary>Connects: UA TCP, secure channel, GetEndpoints, CreateSession and ActivateSession, then reads the NamespaceArray.</summary>
    /// <param name="cancellationToken">Cancels the attempt.</param>
    /// <returns>A task that completes when the session is active.</returns>
    /// <exception cref="ServiceResultException">The server cannot be reached or refused the session (the message says which step and why).</exception>
    public async Task ConnectAsync(CancellationToken cancellationToken = default)
    {
        ObjectDisposedException.ThrowIf(_closing.IsCancellationRequested, this);
        SetState(UaConnectionState.Connecting, StatusCodes.Good, $"Connecting to {_options.EndpointUrl}");
        using var activity = UaDiagnostics.ActivitySource.StartActivity("connect");
        activity?.SetTag("server.address", _options.EndpointUrl.Host);
        var started = _time.GetTimestamp();
        try
        {
            await EstablishAsync(false, cancellationToken).ConfigureAwait(false);
            var security = new KeyValuePair<string, object?>("security", Security?.ToString());
            UaDiagnostics.Connects.Add(1, security);
            UaDiagnostics.ConnectDuration.Record(_time.GetElapsedTime(started).TotalMilliseconds, security);
            activity?.SetTag("security", Security?.ToString());
        }
        catch (Exception ex)
        {
            activity?.SetStatus(ActivityStatusCode.Error, ex.GetType().Name);
            SetState(UaConnectionState.Disconnected, StatusCodes.BadNotConnected, $"Connecting to {_options.EndpointUrl} failed");
            throw;
        }

        _lastSessionKeepAlive = _time.GetTimestamp();
        _watchdog = _time.CreateTimer(_ => CheckWatchdog(), null, TimeSpan.FromMilliseconds(500), TimeSpan.FromMilliseconds(500));
        StartPublishing();
        SetState(UaConnectionState.Connected, StatusCodes.Good, $"Connected to {_options.EndpointUrl}");
    }

    private void SetState(UaConnectionState state, StatusCode reason, string message)
    {
        _state = state;
        StateChanged?.Invoke(this, new UaConnectionStateChange(state, _time.GetUtcNow().UtcDateTime, reason, message));
    }

    /// <summary>Closes the session (deleting its subscriptions on the server) and the channel, and completes every subscription's events.</summary>
    /// <returns>A task that completes when closed.</returns>
    public async Task CloseAsync()
    {
        if (_closing.IsCancellationRequested)
        {
            return;
        }

        var wasConnected = _state == UaConnectionState.Connected;
        _closing.Cancel();
        _watchdog?.Dispose();
        _publishing?.Cancel();
        var channel = Interlocked.Exchange(ref _channel, null);
        if (channel is not null)
        {
            if (wasConnected)
            {
                try
                {
                    var request = new CloseSessionRequest { RequestHeader = channel.NewHeader(_authenticationToken, _options.RequestTimeout), DeleteSubscriptions = true };
                    await channel.SendAsync<CloseSessionResponse>(request, _options.RequestTimeout, CancellationToken.None).ConfigureAwait(false);
                }
                catch (ServiceResultException)
                {
                    // Closing anyway: the server ends the session when its timeout runs out.
                }
            }

            await channel.DisposeAsync().ConfigureAwait(false);
        }

        if (_reconnect is not null)
        {
            await _reconnect.ConfigureAwait(false);
        }

        foreach (var s in Subscriptions())
        {
            s.Complete();
        }

        SetState(UaConnectionState.Disconnected, StatusCodes.Good, "Closed");
    }

    /// <summary>Same as <see cref="CloseAsync"/>.</summary>
    /// <returns>A task that completes when closed.</returns>
    public async ValueTask DisposeAsync()
    {
        await CloseAsync().ConfigureAwait(false);
        _closing.Dispose();
    }
}
