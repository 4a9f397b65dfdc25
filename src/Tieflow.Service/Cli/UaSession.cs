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

    /// <summary>
    /// Validated endpoint options; <paramref name="Security"/> null means the most secure endpoint offered, and
    /// <see cref="ConnectDeadline"/> bounds the whole connect, retries included.
    /// </summary>
    public sealed record SessionSettings(Uri Endpoint, UaUserIdentity Identity, UaSecurity? Security = null, UaCertificateStore? Store = null)
    {
        public TimeSpan ConnectDeadline { get; init; } = DefaultConnectDeadline;
    }

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

    /// <summary>Default of the one overall deadline for connecting (<c>--connect-timeout</c>).</summary>
    public static readonly TimeSpan DefaultConnectDeadline = TimeSpan.FromSeconds(10);

    /// <summary>
    /// Connects within one overall deadline (<see cref="SessionSettings.ConnectDeadline"/>): each attempt may use what
    /// is left of it, and only failures that may go away by themselves (connection refused or reset, server busy) are
    /// retried, with a short backoff. A peer that does not answer ends the command at the deadline with the step it
    /// did not answer; after that the server counts as unreachable (exit 3).
    /// </summary>
    public static async Task<UaClient> ConnectAsync(SessionSettings settings, TextWriter warnings, CancellationToken cancellationToken)
    {
        var deadline = settings.ConnectDeadline;
        if (deadline < TimeSpan.FromMilliseconds(100) || deadline > TimeSpan.FromHours(1))
        {
            throw new UaCliException(ExitCodes.BadInput, $"--connect-timeout {DurationText(deadline)} is out of range; expected 100ms to 1h");
        }
        using var overall = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        // Each step may take what is left of the deadline, so that a silent peer is reported by the step it did not
        // answer; the overall cancellation, a little later, bounds a peer that answers every step slowly.
        overall.CancelAfter(deadline + TimeSpan.FromSeconds(1));
        var started = System.Diagnostics.Stopwatch.StartNew();
        var delay = TimeSpan.FromMilliseconds(250);
        for (var attempt = 1; ; attempt++)
        {
            var left = deadline - started.Elapsed - TimeSpan.FromMilliseconds(100);
            if (left < TimeSpan.FromMilliseconds(50))
            {
                left = TimeSpan.FromMilliseconds(50);
            }
            var client = new UaClient(new UaClientOptions
            {
                EndpointUrl = settings.Endpoint,
                Identity = settings.Identity,
                SessionName = "tieflow ua",
                Security = settings.Security,
                CertificateStore = settings.Store,
                ConnectTimeout = left,
                RequestTimeout = Min(left, TimeSpan.FromSeconds(10)),
            });
            Exception failure;
            try
            {
                await client.ConnectAsync(overall.Token).ConfigureAwait(false);
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
            catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
            {
                await client.DisposeAsync().ConfigureAwait(false);
                throw;
            }
            catch (Exception e) when (e is ServiceResultException or IOException or System.Net.Sockets.SocketException or TimeoutException or OperationCanceledException)
            {
                await client.DisposeAsync().ConfigureAwait(false);
                failure = e;
            }

            if (failure is ServiceResultException { Status: var status } && IsRefusal(status))
            {
                // The server is there and said no: retrying cannot help.
                throw new UaCliException(ExitCodes.RuntimeFailure, $"{settings.Endpoint} refused the session: {failure.Message}");
            }
            var transient = MayGoAway(failure);
            if (!transient && failure is not OperationCanceledException && !IsTimeout(failure))
            {
                throw new UaCliException(ExitCodes.RuntimeFailure, $"{settings.Endpoint}: {Describe(failure)} (not retried: this will not go away by itself)");
            }
            if (!transient || started.Elapsed + delay >= deadline)
            {
                throw new UaCliException(ExitCodes.RuntimeFailure, transient
                    ? $"{settings.Endpoint} is unreachable within {DurationText(deadline)} (--connect-timeout) after {attempt} attempt(s): {Describe(failure)}"
                    : $"{settings.Endpoint} did not complete the connection within {DurationText(deadline)} (--connect-timeout): {Describe(failure)}");
            }
            try
            {
                await Task.Delay(delay, overall.Token).ConfigureAwait(false);
            }
            catch (OperationCanceledException) when (!cancellationToken.IsCancellationRequested)
            {
                throw new UaCliException(ExitCodes.RuntimeFailure, $"{settings.Endpoint} is unreachable within {DurationText(deadline)} (--connect-timeout) after {attempt} attempt(s): {Describe(failure)}");
            }
            delay *= 2;
        }
    }

    private static TimeSpan Min(TimeSpan a, TimeSpan b) => a < b ? a : b;

    private static bool IsTimeout(Exception e) => e is TimeoutException ||
        e is ServiceResultException { Status: var s } && (s.Is(StatusCodes.BadTimeout) || s.Is(StatusCodes.BadRequestTimeout));

    private static string DurationText(TimeSpan t) => Tieflow.Files.DurationText.Format(t);

    /// <summary>Connection refused or reset, a busy or halting server: worth another attempt while the deadline allows.</summary>
    private static bool MayGoAway(Exception e) => e switch
    {
        ServiceResultException { Status: var s } => s.Is(StatusCodes.BadNotConnected) || s.Is(StatusCodes.BadTcpServerTooBusy) ||
            s.Is(StatusCodes.BadServerHalted),
        IOException or System.Net.Sockets.SocketException => true,
        _ => false,
    };

    /// <summary>What failed, naming the step the peer did not answer when it was silent.</summary>
    private static string Describe(Exception e)
    {
        var message = e.Message;
        if (e is OperationCanceledException)
        {
            return "no answer before the deadline";
        }
        if (message.Contains("took longer than", StringComparison.Ordinal))
        {
            return $"the peer did not complete the TCP connection or did not answer Hello with Acknowledge ({message})";
        }
        if (message.Contains("got no response", StringComparison.Ordinal))
        {
            return $"the peer did not answer a step of the connection: {message}";
        }
        return message;
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

    /// <summary>The server is there and said no (access, identity, security, certificate): another attempt cannot help.</summary>
    internal static bool IsRefusal(StatusCode status) =>
        status.Is(StatusCodes.BadUserAccessDenied) || status.Is(StatusCodes.BadIdentityTokenInvalid) ||
        status.Is(StatusCodes.BadIdentityTokenRejected) || status.Is(StatusCodes.BadTooManySessions) ||
        status.Is(StatusCodes.BadSecurityPolicyRejected) || status.Is(StatusCodes.BadSecurityModeRejected) ||
        status.Is(StatusCodes.BadSecurityChecksFailed) || status.Is(StatusCodes.BadCertificateInvalid) ||
        status.Is(StatusCodes.BadApplicationSignatureInvalid) || status.Is(StatusCodes.BadConfigurationError);
}
