using System.Security.Cryptography;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Server;

/// <content>Discovery and session services (OPC 10000-4 §5.4, §5.6).</content>
internal sealed partial class ServerEngine
{
    private const string NonePolicyUri = "http://opcfoundation.org/UA/SecurityPolicy#None";
    private const string TransportProfileUri = "http://opcfoundation.org/UA-Profile/Transport/uatcp-uasc-uabinary";
    private const string AnonymousPolicyId = "anonymous";
    private const string UserNamePolicyId = "username";

    /// <summary>
    /// The endpoint URL as the client should see it: the host the client named (docs/opcua.md §2.2 and §5: node-opcua's
    /// client compares the whole URL), our port and resource path.
    /// </summary>
    public string EndpointUrlFor(string? requestedUrl)
    {
        var host = Settings.DefaultHost;
        if (requestedUrl is not null && Uri.TryCreate(requestedUrl, UriKind.Absolute, out var uri) &&
            string.Equals(uri.Scheme, "opc.tcp", StringComparison.OrdinalIgnoreCase) && uri.Host.Length > 0)
        {
            host = uri.HostNameType == UriHostNameType.IPv6 ? "[" + uri.IdnHost + "]" : uri.Host;
        }
        return $"opc.tcp://{host}:{Port}{Settings.ResourcePath}";
    }

    private ApplicationDescription ApplicationDescription(string? requestedUrl) => new()
    {
        ApplicationUri = Settings.ApplicationUri,
        ProductUri = Settings.ProductUri,
        ApplicationName = new LocalizedText(Settings.ApplicationName),
        ApplicationType = ApplicationType.Server,
        DiscoveryUrls = [EndpointUrlFor(requestedUrl)],
    };

    private EndpointDescription[] Endpoints(string? requestedUrl)
    {
        var tokens = new List<UserTokenPolicy> { new() { PolicyId = AnonymousPolicyId, TokenType = UserTokenType.Anonymous } };
        if (Settings.Users.Count > 0)
        {
            // The None policy on the token says the password travels in clear: a test and simulator setting only.
            tokens.Add(new UserTokenPolicy { PolicyId = UserNamePolicyId, TokenType = UserTokenType.UserName, SecurityPolicyUri = NonePolicyUri });
        }
        return
        [
            new EndpointDescription
            {
                EndpointUrl = EndpointUrlFor(requestedUrl),
                Server = ApplicationDescription(requestedUrl),
                ServerCertificate = null,
                SecurityMode = MessageSecurityMode.None,
                SecurityPolicyUri = NonePolicyUri,
                UserIdentityTokens = [.. tokens],
                TransportProfileUri = TransportProfileUri,
                SecurityLevel = 1,
            },
        ];
    }

    private CreateSessionResponse CreateSession(ServerConnection connection, CreateSessionRequest request)
    {
        if (_sessionsByToken.Count >= Settings.MaxSessions)
        {
            throw new ServiceResultException(StatusCodes.BadTooManySessions, $"the server holds its limit of {Settings.MaxSessions} sessions");
        }
        var timeout = request.RequestedSessionTimeout is > 0 and < double.PositiveInfinity
            ? Math.Clamp(request.RequestedSessionTimeout, 10_000, 3_600_000)
            : 60_000;
        var now = Now;
        var session = new ServerSession(
            new NodeId(Guid.NewGuid(), 1),
            new NodeId(RandomNumberGenerator.GetBytes(16), 1),
            request.SessionName ?? string.Empty,
            timeout,
            connection,
            now)
        {
            ServerNonce = RandomNumberGenerator.GetBytes(32),
            MaxParkedPublish = Settings.MaxParkedPublishPerSession,
        };
        _sessionsByToken.Add(session.AuthenticationToken, session);
        return new CreateSessionResponse
        {
            ResponseHeader = Header(request),
            SessionId = session.SessionId,
            AuthenticationToken = session.AuthenticationToken,
            RevisedSessionTimeout = timeout,
            ServerNonce = session.ServerNonce,
            ServerCertificate = null,
            ServerEndpoints = Endpoints(request.EndpointUrl ?? connection.HelloEndpointUrl),
            ServerSoftwareCertificates = [],
            ServerSignature = new SignatureData(),
            MaxRequestMessageSize = (uint)Settings.MaxMessageSize,
        };
    }

    private ActivateSessionResponse ActivateSession(ServerConnection connection, ActivateSessionRequest request)
    {
        if (!_sessionsByToken.TryGetValue(request.RequestHeader.AuthenticationToken, out var session))
        {
            throw new ServiceResultException(StatusCodes.BadSessionIdInvalid, "the authentication token names no session");
        }
        CheckIdentity(request.UserIdentityToken);
        if (!ReferenceEquals(session.Channel, connection))
        {
            // Re-activation on a new secure channel (the client reconnected): the session moves to it.
            session.FailParked(StatusCodes.BadSecureChannelClosed, session.Channel);
            session.Channel = connection;
        }
        session.Activated = true;
        session.LastContact = Now;
        session.ServerNonce = RandomNumberGenerator.GetBytes(32);
        return new ActivateSessionResponse
        {
            ResponseHeader = Header(request),
            ServerNonce = session.ServerNonce,
            Results = [],
            DiagnosticInfos = [],
        };
    }

    private void CheckIdentity(ExtensionObject token)
    {
        switch (token.Body)
        {
            case null:
            case AnonymousIdentityToken:
                return;
            case UserNameIdentityToken user:
                if (Settings.Users.Count == 0)
                {
                    throw new ServiceResultException(StatusCodes.BadIdentityTokenRejected, "this server accepts anonymous users only");
                }
                if (!string.IsNullOrEmpty(user.EncryptionAlgorithm))
                {
                    throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, "encrypted passwords are not supported on this None endpoint");
                }
                var given = user.Password ?? [];
                var known = user.UserName is not null && Settings.Users.TryGetValue(user.UserName, out var password)
                    ? System.Text.Encoding.UTF8.GetBytes(password)
                    : [];
                // Compare in constant time; the message never carries the password.
                if (known.Length == 0 || !CryptographicOperations.FixedTimeEquals(given, known))
                {
                    throw new ServiceResultException(StatusCodes.BadUserAccessDenied, "user name or password rejected");
                }
                return;
            default:
                throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, $"identity token {token.TypeId} is not supported");
        }
    }

    private CloseSessionResponse CloseSession(ServerConnection connection, CloseSessionRequest request)
    {
        if (!_sessionsByToken.TryGetValue(request.RequestHeader.AuthenticationToken, out var session) ||
            !ReferenceEquals(session.Channel, connection))
        {
            throw new ServiceResultException(StatusCodes.BadSessionIdInvalid, "the authentication token names no session of this channel");
        }
        if (request.DeleteSubscriptions)
        {
            RemoveSession(session, StatusCodes.BadSessionClosed);
        }
        else
        {
            // Subscriptions survive for a transfer until their lifetime ends.
            session.FailParked(StatusCodes.BadSessionClosed);
            _sessionsByToken.Remove(session.AuthenticationToken);
        }
        return new CloseSessionResponse { ResponseHeader = Header(request) };
    }

    private ServerSession ValidateSession(ServerConnection connection, IServiceRequest request)
    {
        if (!_sessionsByToken.TryGetValue(request.RequestHeader.AuthenticationToken, out var session))
        {
            throw new ServiceResultException(StatusCodes.BadSessionIdInvalid, "the authentication token names no session");
        }
        if (!ReferenceEquals(session.Channel, connection))
        {
            throw new ServiceResultException(StatusCodes.BadSecureChannelIdInvalid, "the session is bound to another secure channel");
        }
        if (!session.Activated)
        {
            throw new ServiceResultException(StatusCodes.BadSessionNotActivated, "the session has not been activated");
        }
        session.LastContact = Now;
        return session;
    }
}
