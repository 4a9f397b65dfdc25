using System.Net;
using System.Net.Sockets;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Server;

/// <summary>
/// A small OPC UA server (UA TCP, SecurityPolicy None, anonymous or clear-text users) for the plant simulator and for
/// tests: folders, objects and variables under the Objects folder in one namespace (index 2), the standard Server
/// object, and the services of docs/opcua.md §2.1 (browse, read, subscriptions; no writes).
/// </summary>
/// <remarks>
/// Build the address space with <see cref="AddFolder"/>, <see cref="AddObject"/> and <see cref="AddVariable"/>, before
/// or after <see cref="StartAsync"/>; update values from any thread with <see cref="UpdateValue(NodeId, Variant, StatusCode, DateTime)"/>.
/// </remarks>
public sealed class UaServer : IAsyncDisposable
{
    /// <summary>Namespace index of the nodes added through this API.</summary>
    public const ushort NamespaceIndex = 2;

    private readonly UaServerOptions _options;
    private readonly ServerEngine _engine;
    private readonly ServerLimits _limits;
    private readonly CancellationTokenSource _stopping = new();
    private readonly List<Task> _connectionTasks = [];
    private TcpListener? _listener;
    private Task? _acceptLoop;
    private int _stopped;

    /// <summary>Creates a server; nothing listens until <see cref="StartAsync"/>.</summary>
    /// <param name="options">Settings (null for the defaults).</param>
    /// <param name="timeProvider">Clock for timestamps, publishing and sampling (null for <see cref="TimeProvider.System"/>).</param>
    /// <exception cref="ArgumentException">An option is out of range; the message names it.</exception>
    public UaServer(UaServerOptions? options = null, TimeProvider? timeProvider = null)
    {
        _options = options ?? new UaServerOptions();
        Validate(_options);
        _limits = new ServerLimits
        {
            Transport = new TransportLimits
            {
                ReceiveBufferSize = _options.BufferSize,
                SendBufferSize = _options.BufferSize,
                MaxMessageSize = _options.MaxMessageSize,
                MaxChunkCount = _options.MaxChunkCount,
            },
            Encoding = new EncodingLimits { MaxMessageSize = _options.MaxMessageSize },
        };
        _engine = new ServerEngine(new ServerEngineSettings
        {
            ApplicationUri = _options.ApplicationUri,
            ApplicationName = _options.ApplicationName,
            ProductUri = _options.ProductUri,
            NamespaceUri = _options.NamespaceUri,
            ResourcePath = _options.ResourcePath,
            DefaultHost = _options.ListenAddress.Equals(IPAddress.Any) ? "127.0.0.1" : _options.ListenAddress.ToString(),
            Users = _options.Users,
            MinPublishingIntervalMs = _options.MinPublishingInterval.TotalMilliseconds,
            MinSamplingIntervalMs = _options.MinSamplingInterval.TotalMilliseconds,
            MaxSessions = _options.MaxSessions,
            MaxMessageSize = _options.MaxMessageSize,
        }, timeProvider ?? TimeProvider.System);
    }

    /// <summary>The Objects folder (i=85), the parent of top-level folders.</summary>
    public static NodeId ObjectsFolder { get; } = new(WellKnownNodes.ObjectsFolder);

    /// <summary>The bound TCP port (the one picked by the system when the options said 0); 0 before start.</summary>
    public int Port => _engine.Port;

    /// <summary>The endpoint URL on the listen address, e.g. <c>opc.tcp://127.0.0.1:4840/sim</c>.</summary>
    public string EndpointUrl => _engine.EndpointUrlFor(null);

    /// <summary>Number of open sessions.</summary>
    public int SessionCount => _engine.SessionCount;

    /// <summary>Publish requests parked in all sessions (for tests).</summary>
    internal int ParkedPublishCount => _engine.ParkedPublishCount;

    /// <summary>Adds a folder (FolderType, Organizes) under <paramref name="parent"/>.</summary>
    /// <param name="parent">An existing folder or object (e.g. <see cref="ObjectsFolder"/>).</param>
    /// <param name="name">Browse name in namespace 2; the NodeId is <c>ns=2;s=</c> the parent's path, a dot, and this name.</param>
    /// <returns>The new folder's NodeId.</returns>
    /// <exception cref="ArgumentException">The parent is unknown, the name is empty or the node exists already.</exception>
    public NodeId AddFolder(NodeId parent, string name) =>
        AddNode(parent, name, WellKnownNodes.FolderType, WellKnownNodes.Organizes);

    /// <summary>Adds an object (BaseObjectType) under <paramref name="parent"/>: Organizes from a folder, HasComponent from an object.</summary>
    /// <param name="parent">An existing folder or object.</param>
    /// <param name="name">Browse name in namespace 2.</param>
    /// <returns>The new object's NodeId.</returns>
    /// <exception cref="ArgumentException">The parent is unknown, the name is empty or the node exists already.</exception>
    public NodeId AddObject(NodeId parent, string name) =>
        AddNode(parent, name, WellKnownNodes.BaseObjectType, 0);

    /// <summary>
    /// Adds a read-only variable (BaseDataVariableType, or AnalogItemType with an EURange property) with a HasComponent
    /// reference from <paramref name="parent"/>. Its DataType is the built-in type of <paramref name="initialValue"/>.
    /// </summary>
    /// <param name="parent">An existing folder or object.</param>
    /// <param name="name">Browse name in namespace 2.</param>
    /// <param name="initialValue">The first value (scalar or one-dimensional array; not null).</param>
    /// <param name="options">EURange, minimum sampling interval, description (null for none).</param>
    /// <returns>The new variable's NodeId.</returns>
    /// <exception cref="ArgumentException">The parent is unknown, the name is empty, the node exists or the value is null.</exception>
    public NodeId AddVariable(NodeId parent, string name, Variant initialValue, UaVariableOptions? options = null)
    {
        if (initialValue.IsNull)
        {
            throw new ArgumentException($"variable '{name}' needs a non-null initial value to fix its data type", nameof(initialValue));
        }
        options ??= new UaVariableOptions();
        if (options.EngineeringUnitsRange is { } r && !(double.IsFinite(r.Low) && double.IsFinite(r.High) && r.High > r.Low))
        {
            throw new ArgumentException($"variable '{name}': EURange ({r.Low}, {r.High}) must be finite with high > low", nameof(options));
        }
        if (options.MinimumSamplingInterval < TimeSpan.Zero)
        {
            throw new ArgumentException($"variable '{name}': MinimumSamplingInterval must not be negative", nameof(options));
        }
        return _engine.Locked(() =>
        {
            var nodeId = ChildId(parent, name);
            var now = _engine.Now;
            var variable = new ServerVariable(nodeId, new QualifiedName(name, NamespaceIndex), new LocalizedText(name),
                new NodeId((uint)initialValue.Type), new DataValue { Value = initialValue, Status = StatusCodes.Good, SourceTimestamp = now, ServerTimestamp = now })
            {
                TypeDefinition = new NodeId(options.EngineeringUnitsRange is null ? WellKnownNodes.BaseDataVariableType : WellKnownNodes.AnalogItemType),
                ValueRank = initialValue.IsArray ? 1 : -1,
                MinimumSamplingIntervalMs = options.MinimumSamplingInterval.TotalMilliseconds,
                EngineeringUnitsRange = options.EngineeringUnitsRange,
                Description = options.Description is null ? default : new LocalizedText(options.Description),
            };
            _engine.AddressSpace.Add(variable, parent, WellKnownNodes.HasComponent);
            if (options.EngineeringUnitsRange is { } range)
            {
                StandardNodes.EngineeringUnitsRange(_engine.AddressSpace, nodeId, range.Low, range.High);
            }
            return nodeId;
        });
    }

    /// <summary>Sets a variable's value, status and source timestamp (thread-safe); subscribed clients are notified.</summary>
    /// <param name="variable">A variable added with <see cref="AddVariable"/>.</param>
    /// <param name="value">The new value, of the variable's data type, or null (allowed with a bad status).</param>
    /// <param name="status">The quality (Good, Uncertain..., Bad...).</param>
    /// <param name="sourceTimeUtc">When the value was measured (UTC; passed to clients unchanged).</param>
    /// <exception cref="ArgumentException">The node is not a variable or the value has another type.</exception>
    public void UpdateValue(NodeId variable, Variant value, StatusCode status, DateTime sourceTimeUtc) =>
        UpdateValue(variable, new DataValue { Value = value, Status = status, SourceTimestamp = DateTime.SpecifyKind(sourceTimeUtc, DateTimeKind.Utc) });

    /// <summary>Sets a variable's value with all of a DataValue's fields (picoseconds included); the server timestamp is set on sampling.</summary>
    /// <param name="variable">A variable added with <see cref="AddVariable"/>.</param>
    /// <param name="value">Value, status and source timestamp.</param>
    /// <exception cref="ArgumentException">The node is not a variable or the value has another type.</exception>
    public void UpdateValue(NodeId variable, DataValue value)
    {
        ArgumentNullException.ThrowIfNull(value);
        _engine.Locked(() =>
        {
            if (!_engine.AddressSpace.TryGet(variable, out var node) || node is not ServerVariable v || v.ValueSource is not null)
            {
                throw new ArgumentException($"node {variable} is not a variable of this server that can be updated", nameof(variable));
            }
            if (!value.Value.IsNull && (new NodeId((uint)value.Value.Type) != v.DataType || value.Value.IsArray != (v.ValueRank == 1)))
            {
                throw new ArgumentException($"variable {variable} holds {(BuiltInType)v.DataType.NumericIdentifier}{(v.ValueRank == 1 ? "[]" : string.Empty)}, not {value.Value.Type}{(value.Value.IsArray ? "[]" : string.Empty)}", nameof(value));
            }
            var now = _engine.Now;
            v.SetValue(new DataValue
            {
                Value = value.Value,
                Status = value.Status,
                SourceTimestamp = value.SourceTimestamp,
                SourcePicoseconds = value.SourcePicoseconds,
                ServerTimestamp = now,
            }, now);
        });
    }

    /// <summary>Reads a variable's current value as a client would get it (for tests and diagnostics).</summary>
    /// <param name="variable">A variable of this server.</param>
    /// <returns>Value, status and timestamps.</returns>
    /// <exception cref="ArgumentException">The node is not a variable.</exception>
    public DataValue ReadValue(NodeId variable) => _engine.Locked(() =>
        _engine.AddressSpace.TryGet(variable, out var node) && node is ServerVariable v
            ? v.CurrentValue
            : throw new ArgumentException($"node {variable} is not a variable of this server", nameof(variable)));

    /// <summary>Starts listening on the options' address and port (0: a free port, see <see cref="Port"/>).</summary>
    /// <param name="cancellationToken">Cancels the start.</param>
    /// <returns>A task that completes once the server listens.</returns>
    /// <exception cref="InvalidOperationException">The server was started before.</exception>
    /// <exception cref="SocketException">The port is taken.</exception>
    public Task StartAsync(CancellationToken cancellationToken = default)
    {
        cancellationToken.ThrowIfCancellationRequested();
        if (_listener is not null)
        {
            throw new InvalidOperationException("the server has been started already");
        }
        var listener = new TcpListener(_options.ListenAddress, _options.Port);
        listener.Server.SetSocketOption(SocketOptionLevel.Socket, SocketOptionName.ReuseAddress, true);
        listener.Start(64);
        _listener = listener;
        _engine.Port = ((IPEndPoint)listener.LocalEndpoint).Port;
        _engine.Start();
        _acceptLoop = AcceptLoopAsync(listener);
        return Task.CompletedTask;
    }

    /// <summary>
    /// Stops cleanly: ServerStatus.State becomes Shutdown, parked Publish requests are answered with Bad_SessionClosed,
    /// the connections close once those answers are written, and the listener stops.
    /// </summary>
    /// <param name="cancellationToken">Ends the wait for connections to close.</param>
    /// <returns>A task that completes when everything is closed.</returns>
    public async Task StopAsync(CancellationToken cancellationToken = default)
    {
        if (Interlocked.Exchange(ref _stopped, 1) != 0)
        {
            return;
        }
        var connections = _engine.BeginShutdown();
        _listener?.Stop();
        foreach (var connection in connections)
        {
            connection.SendErrorAndClose(StatusCodes.BadShutdown, "the server is shutting down");
        }
        Task[] tasks;
        lock (_connectionTasks)
        {
            tasks = [.. _connectionTasks];
        }
        var all = Task.WhenAll(tasks);
        var finished = await Task.WhenAny(all, Task.Delay(TimeSpan.FromSeconds(2), cancellationToken)).ConfigureAwait(false);
        if (finished != all)
        {
            foreach (var connection in connections)
            {
                connection.Close();
            }
        }
        await _stopping.CancelAsync().ConfigureAwait(false);
        if (_acceptLoop is not null)
        {
            await _acceptLoop.ConfigureAwait(false);
        }
        _engine.Dispose();
    }

    /// <inheritdoc />
    public async ValueTask DisposeAsync()
    {
        await StopAsync().ConfigureAwait(false);
        _stopping.Dispose();
    }

    private async Task AcceptLoopAsync(TcpListener listener)
    {
        while (!_stopping.IsCancellationRequested)
        {
            Socket socket;
            try
            {
                socket = await listener.AcceptSocketAsync(_stopping.Token).ConfigureAwait(false);
            }
            catch (Exception e) when (e is OperationCanceledException or ObjectDisposedException or SocketException or InvalidOperationException)
            {
                // The listener was stopped.
                return;
            }
            socket.NoDelay = true;
            var connection = new ServerConnection(socket, _engine, _limits);
            if (_engine.ConnectionCount >= _options.MaxConnections)
            {
                // Refused politely: the ERR goes out before the socket closes.
                _ = Task.Run(() => connection.RefuseAsync(StatusCodes.BadTcpServerTooBusy, $"the server holds its limit of {_options.MaxConnections} connections"));
                continue;
            }
            _engine.OnConnectionOpened(connection);
            var task = Task.Run(() => connection.RunAsync(_stopping.Token));
            lock (_connectionTasks)
            {
                _connectionTasks.RemoveAll(t => t.IsCompleted);
                _connectionTasks.Add(task);
            }
        }
    }

    private NodeId AddNode(NodeId parent, string name, uint typeDefinition, uint referenceType) => _engine.Locked(() =>
    {
        var nodeId = ChildId(parent, name);
        var reference = referenceType != 0 ? referenceType
            : _engine.AddressSpace.TryGet(parent, out var p) && p.TypeDefinition == new NodeId(WellKnownNodes.FolderType)
                ? WellKnownNodes.Organizes
                : WellKnownNodes.HasComponent;
        _engine.AddressSpace.Add(new ServerNode(nodeId, ServerNodeClass.Object, new QualifiedName(name, NamespaceIndex), new LocalizedText(name))
        {
            TypeDefinition = new NodeId(typeDefinition),
        }, parent, reference);
        return nodeId;
    });

    private NodeId ChildId(NodeId parent, string name)
    {
        if (string.IsNullOrWhiteSpace(name))
        {
            throw new ArgumentException("a node needs a non-empty name", nameof(name));
        }
        if (!_engine.AddressSpace.TryGet(parent, out _))
        {
            throw new ArgumentException($"parent node {parent} does not exist", nameof(parent));
        }
        var prefix = parent.NamespaceIndex == NamespaceIndex && parent.IdType == NodeIdType.String ? parent.StringIdentifier + "." : string.Empty;
        return new NodeId(prefix + name, NamespaceIndex);
    }

    private static void Validate(UaServerOptions options)
    {
        if (options.Port is < 0 or > 65535)
        {
            throw new ArgumentException($"UaServerOptions.Port is {options.Port}; expected 0-65535", nameof(options));
        }
        if (options.ResourcePath.Length > 0 && options.ResourcePath[0] != '/')
        {
            throw new ArgumentException($"UaServerOptions.ResourcePath '{options.ResourcePath}' must be empty or start with '/'", nameof(options));
        }
        if (options.BufferSize < 8192)
        {
            throw new ArgumentException($"UaServerOptions.BufferSize is {options.BufferSize}; expected at least 8192", nameof(options));
        }
        if (options.MaxConnections < 1 || options.MaxSessions < 1)
        {
            throw new ArgumentException("UaServerOptions.MaxConnections and MaxSessions must be at least 1", nameof(options));
        }
        if (options.MaxMessageSize < options.BufferSize || options.MaxChunkCount < 1)
        {
            throw new ArgumentException("UaServerOptions.MaxMessageSize must be at least BufferSize and MaxChunkCount at least 1", nameof(options));
        }
        if (options.MinPublishingInterval <= TimeSpan.Zero || options.MinSamplingInterval < TimeSpan.Zero)
        {
            throw new ArgumentException("UaServerOptions.MinPublishingInterval must be positive and MinSamplingInterval not negative", nameof(options));
        }
        foreach (var uri in new[] { options.ApplicationUri, options.NamespaceUri })
        {
            if (string.IsNullOrWhiteSpace(uri))
            {
                throw new ArgumentException("UaServerOptions.ApplicationUri and NamespaceUri must not be empty", nameof(options));
            }
        }
    }
}
