using System.Net;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Plant;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Server;

namespace Tieflow.Simulator.Serving;

/// <summary>
/// Serves every instrument of a simulated plant over OPC UA (SecurityPolicy None, anonymous, read-only) through our
/// own <see cref="UaServer"/>: one Double variable per instrument at the plant file's NodeId, updated with the
/// reading, a status code from its quality (good: Good, uncertain: UncertainLastUsableValue, bad: BadSensorFailure)
/// and the simulated time as source timestamp. NodeIds must be string ids in namespace 2 whose dotted parts name the
/// folder, objects and variable (<c>ns=2;s=X300.FI301.PV</c>), the way the server builds its address space.
/// </summary>
internal sealed class InstrumentServer : IAsyncDisposable
{
    private readonly UaServer _server;
    private readonly Dictionary<string, NodeId> _variables = new(StringComparer.Ordinal);

    private InstrumentServer(UaServer server) => _server = server;

    /// <summary>The endpoint clients connect to.</summary>
    public string EndpointUrl => _server.EndpointUrl;

    /// <summary>The simulator's application URI (also in its certificate).</summary>
    public const string ApplicationUri = "urn:tieflow:simulator";

    /// <summary>Checks that every instrument's NodeId can be served; the problems, or none.</summary>
    public static IReadOnlyList<string> Problems(PlantDescription plant)
    {
        var problems = new List<string>();
        var paths = new HashSet<string>(StringComparer.Ordinal);
        foreach (Instrument i in plant.Units.SelectMany(u => u.Instruments))
        {
            if (!TryParts(i.Node, out string[] parts))
            {
                problems.Add($"instrument {i.Tag}: node \"{i.Node}\" cannot be served; expected a string NodeId in namespace 2 with at least two dotted parts, such as ns=2;s=X300.FI301.PV");
            }
            else
            {
                paths.Add(i.Node);
            }
        }

        // A variable cannot also be the parent of another node.
        foreach (string node in paths)
        {
            if (paths.Any(other => other.StartsWith(node + ".", StringComparison.Ordinal)))
            {
                problems.Add($"node \"{node}\" is both an instrument and the parent of another instrument's node");
            }
        }

        return problems;
    }

    /// <summary>Builds the address space for the plant and starts listening on <paramref name="endpoint"/>.</summary>
    /// <exception cref="ArgumentException">The endpoint or a NodeId cannot be served.</exception>
    /// <exception cref="System.Net.Sockets.SocketException">The port is taken.</exception>
    /// <param name="plant">The plant whose instruments are served.</param>
    /// <param name="endpoint">Where to listen.</param>
    /// <param name="timeProvider">The clock of the server.</param>
    /// <param name="cancellationToken">Stops the start.</param>
    /// <param name="pki">
    /// A certificate store folder: when given, the server gets its own application certificate there (created on first
    /// use) and offers the signed and encrypted endpoints besides None; as a local simulator it accepts any client
    /// certificate that is valid in time.
    /// </param>
    public static async Task<InstrumentServer> StartAsync(PlantDescription plant, Uri endpoint, TimeProvider timeProvider, CancellationToken cancellationToken, string? pki = null)
    {
        UaServerSecurityOptions? security = pki is null
            ? null
            : UaServerSecurityOptions.FromStore(new UaCertificateStore(pki), ApplicationUri, $"Tieflow simulated plant ({plant.Site})", [endpoint.Host, "localhost", System.Net.Dns.GetHostName()]);
        IPAddress address = endpoint.Host is "localhost" ? IPAddress.Loopback : IPAddress.Parse(endpoint.Host);
        var server = new UaServer(
            new UaServerOptions
            {
                ListenAddress = address,
                Port = endpoint.Port,
                ResourcePath = endpoint.AbsolutePath == "/" ? string.Empty : endpoint.AbsolutePath.TrimEnd('/'),
                ApplicationUri = ApplicationUri,
                Security = security is null ? null : new UaServerSecurityOptions
                {
                    Certificate = security.Certificate,
                    ClientCertificateStore = null,
                    AcceptAnyClientCertificate = true,
                },
                ApplicationName = $"Tieflow simulated plant ({plant.Site})",
                NamespaceUri = "urn:tieflow:plant",
            },
            timeProvider);
        var result = new InstrumentServer(server);
        var containers = new Dictionary<string, NodeId>(StringComparer.Ordinal);
        foreach (Instrument i in plant.Units.SelectMany(u => u.Instruments))
        {
            if (!TryParts(i.Node, out string[] parts))
            {
                throw new ArgumentException($"instrument {i.Tag}: node \"{i.Node}\" cannot be served");
            }

            NodeId parent = UaServer.ObjectsFolder;
            string path = string.Empty;
            for (int p = 0; p < parts.Length - 1; p++)
            {
                path = p == 0 ? parts[0] : path + "." + parts[p];
                if (!containers.TryGetValue(path, out NodeId node))
                {
                    node = p == 0 ? server.AddFolder(parent, parts[p]) : server.AddObject(parent, parts[p]);
                    containers.Add(path, node);
                }

                parent = node;
            }

            (double Low, double High)? range = double.IsFinite(i.RangeLow) && double.IsFinite(i.RangeHigh) && i.RangeHigh > i.RangeLow ? (i.RangeLow, i.RangeHigh) : null;
            NodeId variable = server.AddVariable(parent, parts[^1], new Variant(BuiltInType.Double, 0.0), new UaVariableOptions
            {
                EngineeringUnitsRange = range,
                Description = $"{i.Tag} ({i.Unit.Name})",
            });
            result._variables.Add(i.Tag, variable);
        }

        await server.StartAsync(cancellationToken).ConfigureAwait(false);
        return result;
    }

    /// <summary>Publishes one reading (thread-safe).</summary>
    public void Update(in SignalSample sample)
    {
        if (_variables.TryGetValue(sample.Tag, out NodeId variable))
        {
            StatusCode status = sample.Quality switch
            {
                SignalQuality.Good => StatusCodes.Good,
                SignalQuality.Uncertain => StatusCodes.UncertainLastUsableValue,
                _ => StatusCodes.BadSensorFailure,
            };
            _server.UpdateValue(variable, new Variant(BuiltInType.Double, sample.Value), status, sample.Time.UtcDateTime);
        }
    }

    /// <summary>The value a client would read for a tag (for tests).</summary>
    internal DataValue Read(string tag) => _server.ReadValue(_variables[tag]);

    public ValueTask DisposeAsync() => _server.DisposeAsync();

    private static bool TryParts(string node, out string[] parts)
    {
        parts = [];
        if (!NodeId.TryParse(node, out NodeId id) || id.NamespaceIndex != UaServer.NamespaceIndex || id.StringIdentifier is not { } text)
        {
            return false;
        }

        parts = text.Split('.');
        return parts.Length >= 2 && parts.All(p => p.Length > 0);
    }
}
