using Tieflow.OpcUa.Client;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;

namespace Tieflow.Service.Cli;

/// <summary>
/// What the ua commands share: the endpoint, identity, security and certificate store options, connecting with
/// retries, NodeId parsing.
/// </summary>
internal static class UaSession
{
    /// <summary>Environment variable holding the password for <c>--user</c> (never taken from the command line).</summary>
    public const string PasswordVariable = "TIEFLOW_OPCUA_PASSWORD";

    private const int ConnectAttempts = 3;

    /// <summary>Validated endpoint options; <paramref name="Security"/> null means the most secure endpoint offered.</summary>
    public sealed record SessionSettings(Uri Endpoint, UaUserIdentity Identity, UaSecurity? Security = null, UaCertificateStore? Store = null);

    /// <summary>The certificate store used without <c>--pki</c>: <c>tieflow/pki</c> under the user's local data folder.</summary>
    public static string DefaultPki
    {
        get
        {
            var data = Environment.GetFolderPath(Environment.SpecialFolder.LocalApplicationData);
            if (string.IsNullOrEmpty(data))
            {
                data = Path.Combine(Environment.GetFolderPath(Environment.SpecialFolder.UserProfile), ".tieflow");
            }
            return Path.Combine(data, "tieflow", "pki");
        }
    }

    /// <summary>The store of <c>--pki</c> (or the default one).</summary>
    public static UaCertificateStore Store(string? pki) => new(string.IsNullOrWhiteSpace(pki) ? DefaultPki : pki);

    public static SessionSettings Settings(string endpoint, string? user, string? security = null, string? pki = null)
    {
        var settings = Settings(endpoint, user);
        UaSecurity? choice = null;
        if (security is not null)
        {
            try
            {
                choice = UaSecurity.Parse(security);
            }
            catch (FormatException e)
            {
                throw new UaCliException(ExitCodes.BadInput, $"--security: {e.Message}");
            }
        }
        return settings with { Security = choice, Store = Store(pki) };
    }

    private static SessionSettings Settings(string endpoint, string? user)
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
    public static async Task<UaClient> ConnectAsync(SessionSettings settings, TextWriter warnings, CancellationToken cancellationToken)
    {
        var delay = TimeSpan.FromMilliseconds(500);
        for (var attempt = 1; ; attempt++)
        {
            var client = new UaClient(new UaClientOptions
            {
                EndpointUrl = settings.Endpoint,
                Identity = settings.Identity,
                SessionName = "tieflow ua",
                Security = settings.Security,
                CertificateStore = settings.Store,
                ConnectTimeout = TimeSpan.FromSeconds(5),
                RequestTimeout = TimeSpan.FromSeconds(10),
            });
            try
            {
                await client.ConnectAsync(cancellationToken).ConfigureAwait(false);
                if (settings.Security is null && client.Security?.Mode == MessageSecurityMode.None)
                {
                    warnings.WriteLine($"warning: {settings.Endpoint} offers no secured endpoint that Tieflow supports; connected without security");
                }
                return client;
            }
            catch (UaCertificateException e)
            {
                await client.DisposeAsync().ConfigureAwait(false);
                throw new UaCliException(ExitCodes.RuntimeFailure, CertificateMessage(settings, e));
            }
            catch (InvalidOperationException e) when (settings.Store is not null && e.Message.Contains(settings.Store.Root, StringComparison.Ordinal))
            {
                await client.DisposeAsync().ConfigureAwait(false);
                throw new UaCliException(ExitCodes.RuntimeFailure, $"the certificate store cannot be used: {e.Message}");
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

    /// <summary>What the operator reads when the server's certificate is refused: what is wrong and what to do.</summary>
    public static string CertificateMessage(SessionSettings settings, UaCertificateException e)
    {
        var pki = settings.Store?.Root ?? DefaultPki;
        if (e.Status.Is(StatusCodes.BadCertificateUntrusted))
        {
            return $"the server certificate of {settings.Endpoint} is not trusted yet: {e.Subject}, thumbprint {e.Thumbprint}. " +
                $"A copy was saved as {e.RejectedPath}. Check with the server's administrator that this thumbprint is the server's, then trust it with " +
                $"`tieflow ua certs trust {e.Thumbprint} --pki {pki}` (or move the file into {Path.Combine(pki, "trusted")}) and run the command again.";
        }
        return $"the server certificate of {settings.Endpoint} was refused: {e.Message}";
    }

    private static bool IsRefusal(StatusCode status) =>
        status.Is(StatusCodes.BadUserAccessDenied) || status.Is(StatusCodes.BadIdentityTokenInvalid) ||
        status.Is(StatusCodes.BadIdentityTokenRejected) || status.Is(StatusCodes.BadTooManySessions) ||
        status.Is(StatusCodes.BadSecurityPolicyRejected) || status.Is(StatusCodes.BadSecurityModeRejected) ||
        status.Is(StatusCodes.BadSecurityChecksFailed) || status.Is(StatusCodes.BadCertificateInvalid) ||
        status.Is(StatusCodes.BadApplicationSignatureInvalid) || status.Is(StatusCodes.BadConfigurationError);
}
