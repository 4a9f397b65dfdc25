using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.Service.Cli;

/// <summary>What the ua commands share: the endpoint and identity options, connecting with retries, NodeId parsing.</summary>
internal static class UaSession
{
    /// <summary>Environment variable holding the password for <c>--user</c> (never taken from the command line).</summary>
    public const string PasswordVariable = "TIEFLOW_OPCUA_PASSWORD";

    private const int ConnectAttempts = 3;

    /// <summary>Validated endpoint options.</summary>
    public sealed record SessionSettings(Uri Endpoint, UaUserIdentity Identity);

    public static SessionSettings Settings(string endpoint, string? user)
    {
        if (!Uri.TryCreate(endpoint, UriKind.Absolute, out var uri) || !string.Equals(uri.Scheme, "opc.tcp", StringComparison.OrdinalIgnoreCase) || uri.Port <= 0)
        {
            throw new UaCliException(ExitCodes.BadInput, $"--endpoint '{endpoint}' is not an OPC UA URL; expected opc.tcp://HOST:PORT[/path]");
        }
        if (user is null)
        {
            return new SessionSettings(uri, UaUserIdentity.Anonymous);
        }
        if (string.IsNullOrWhiteSpace(user))
        {
            throw new UaCliException(ExitCodes.BadInput, "--user needs a user name");
        }
        var password = Environment.GetEnvironmentVariable(PasswordVariable);
        if (string.IsNullOrEmpty(password))
        {
            throw new UaCliException(ExitCodes.BadInput, $"--user '{user}' needs the password in the environment variable {PasswordVariable}");
        }
        return new SessionSettings(uri, UaUserIdentity.FromUserName(user, password));
    }

    /// <summary>Parses a NodeId in the standard text form (<c>ns=2;s=Train.FeedFlow</c>, <c>i=85</c>, or <c>nsu=URI;s=...</c>).</summary>
    public static ExpandedNodeId ParseNode(string text)
    {
        try
        {
            return ExpandedNodeId.Parse(text);
        }
        catch (FormatException e)
        {
            throw new UaCliException(ExitCodes.BadInput, $"--node '{text}' is not a NodeId ({e.Message}); expected e.g. ns=2;s=Train.FeedFlow or i=85");
        }
    }

    /// <summary>Connects, retrying with a short backoff; after the last attempt the server counts as unreachable (exit 3).</summary>
    public static async Task<UaClient> ConnectAsync(SessionSettings settings, CancellationToken cancellationToken)
    {
        var delay = TimeSpan.FromMilliseconds(500);
        for (var attempt = 1; ; attempt++)
        {
            var client = new UaClient(new UaClientOptions
            {
                EndpointUrl = settings.Endpoint,
                Identity = settings.Identity,
                ApplicationUri = "urn:tieflow:cli",
                SessionName = "tieflow ua",
                ConnectTimeout = TimeSpan.FromSeconds(5),
                RequestTimeout = TimeSpan.FromSeconds(10),
            });
            try
            {
                await client.ConnectAsync(cancellationToken).ConfigureAwait(false);
                return client;
            }
            catch (Exception e) when (e is ServiceResultException or IOException or System.Net.Sockets.SocketException or TimeoutException)
            {
                await client.DisposeAsync().ConfigureAwait(false);
                if (e is ServiceResultException { Status: var status } && IsRefusal(status))
                {
                    // The server is there and said no: retrying cannot help.
                    throw new UaCliException(ExitCodes.RuntimeFailure, $"{settings.Endpoint} refused the session: {e.Message}");
                }
                if (attempt == ConnectAttempts)
                {
                    throw new UaCliException(ExitCodes.RuntimeFailure, $"{settings.Endpoint} is unreachable after {ConnectAttempts} attempts: {e.Message}");
                }
            }
            await Task.Delay(delay, cancellationToken).ConfigureAwait(false);
            delay *= 2;
        }
    }

    private static bool IsRefusal(StatusCode status) =>
        status.Is(StatusCodes.BadUserAccessDenied) || status.Is(StatusCodes.BadIdentityTokenInvalid) ||
        status.Is(StatusCodes.BadIdentityTokenRejected) || status.Is(StatusCodes.BadTooManySessions);
}
