using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;

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
        var security = Settings.Security;
        if (security is null)
        {
            var tokens = new List<UserTokenPolicy> { new() { PolicyId = AnonymousPolicyId, TokenType = UserTokenType.Anonymous } };
            if (Settings.Users.Count > 0)
            {
                // The None policy on the token says the password travels in clear: a test setting only.
                tokens.Add(new UserTokenPolicy { PolicyId = UserNamePolicyId, TokenType = UserTokenType.UserName, SecurityPolicyUri = NonePolicyUri });
            }
            return [Endpoint(requestedUrl, UaSecurity.None, null, [.. tokens], 1)];
        }
        // The password is always encrypted: on a secured endpoint with the channel's policy, on the None endpoint
        // with the most secure policy offered.
        var strongest = security.Endpoints.Select(e => SecurityPolicy.FromUri(e.PolicyUri)).OfType<SecurityPolicy>().MaxBy(p => p.Rank);
        var certificate = security.Certificate.RawData;
        return
        [
            .. security.Endpoints.Select(e =>
            {
                var policy = SecurityPolicy.FromUri(e.PolicyUri);
                var tokens = new List<UserTokenPolicy> { new() { PolicyId = AnonymousPolicyId, TokenType = UserTokenType.Anonymous } };
                var userPolicy = policy ?? strongest;
                if (Settings.Users.Count > 0 && userPolicy is not null)
                {
                    tokens.Add(new UserTokenPolicy { PolicyId = UserNamePolicyId + "_" + userPolicy.Name, TokenType = UserTokenType.UserName, SecurityPolicyUri = userPolicy.Uri });
                }
                var level = e.Mode == MessageSecurityMode.None ? 0 : (e.Mode == MessageSecurityMode.SignAndEncrypt ? 10 : 5) + policy!.Rank;
                return Endpoint(requestedUrl, e, certificate, [.. tokens], (byte)level);
            }),
        ];
    }

    private EndpointDescription Endpoint(string? requestedUrl, UaSecurity security, byte[]? certificate, UserTokenPolicy[] tokens, byte level) => new()
    {
        EndpointUrl = EndpointUrlFor(requestedUrl),
        Server = ApplicationDescription(requestedUrl),
        ServerCertificate = certificate,
        SecurityMode = security.Mode,
        SecurityPolicyUri = security.Mode == MessageSecurityMode.None ? NonePolicyUri : security.PolicyUri,
        UserIdentityTokens = tokens,
        TransportProfileUri = TransportProfileUri,
        SecurityLevel = level,
    };

    /// <summary>Checks a client certificate from an OPN (validity and trust; its URI is checked at CreateSession).</summary>
    public void ValidateClientCertificate(X509Certificate2 certificate)
    {
        var security = Settings.Security ?? throw new ServiceResultException(StatusCodes.BadSecurityPolicyRejected, "this server has no security configured");
        if (security.ClientCertificateStore is { } store)
        {
            store.Validate(certificate, null, null);
            return;
        }
        var now = Now;
        if (now < certificate.NotBefore.ToUniversalTime() || now > certificate.NotAfter.ToUniversalTime())
        {
            throw new ServiceResultException(StatusCodes.BadCertificateTimeInvalid, $"client certificate '{certificate.Subject}' is not valid now");
        }
        using var rsa = certificate.GetRSAPublicKey();
        if (rsa is null || rsa.KeySize is < 2048 or > 4096)
        {
            throw new ServiceResultException(StatusCodes.BadCertificateInvalid, $"client certificate '{certificate.Subject}' has no RSA key of 2048 to 4096 bits");
        }
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
        var security = connection.Security;
        SignatureData serverSignature = new();
        if (!security.IsSecure && Settings.Security is { } configured && !configured.Endpoints.Any(e => e.Mode == MessageSecurityMode.None))
        {
            throw new ServiceResultException(StatusCodes.BadSecurityPolicyRejected, "this server offers no unsecured endpoint: sessions need a secured channel");
        }
        if (security.IsSecure)
        {
            if (request.ClientCertificate is null || !request.ClientCertificate.AsSpan().StartsWith(security.RemoteCertificateDer))
            {
                throw new ServiceResultException(StatusCodes.BadCertificateInvalid, "the client certificate differs from the secure channel's");
            }
            if (request.ClientNonce is null || request.ClientNonce.Length < 32)
            {
                throw new ServiceResultException(StatusCodes.BadNonceInvalid, "the client nonce must be at least 32 bytes");
            }
            var uri = request.ClientDescription.ApplicationUri;
            if (uri is null || !CertificateInfo.ApplicationUris(security.RemoteCertificate!).Contains(uri, StringComparer.Ordinal))
            {
                throw new ServiceResultException(StatusCodes.BadCertificateUriInvalid, $"the client certificate does not name application URI '{uri}'");
            }
            serverSignature = security.SignWithLocalKey(request.ClientCertificate, request.ClientNonce);
        }
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
            ClientCertificate = security.IsSecure ? security.RemoteCertificateDer : null,
        };
        _sessionsByToken.Add(session.AuthenticationToken, session);
        return new CreateSessionResponse
        {
            ResponseHeader = Header(request),
            SessionId = session.SessionId,
            AuthenticationToken = session.AuthenticationToken,
            RevisedSessionTimeout = timeout,
            ServerNonce = session.ServerNonce,
            ServerCertificate = Settings.Security?.Certificate.RawData,
            ServerEndpoints = Endpoints(request.EndpointUrl ?? connection.HelloEndpointUrl),
            ServerSoftwareCertificates = [],
            ServerSignature = serverSignature,
            MaxRequestMessageSize = (uint)Settings.MaxMessageSize,
        };
    }

    private ActivateSessionResponse ActivateSession(ServerConnection connection, ActivateSessionRequest request)
    {
        if (!_sessionsByToken.TryGetValue(request.RequestHeader.AuthenticationToken, out var session))
        {
            throw new ServiceResultException(StatusCodes.BadSessionIdInvalid, "the authentication token names no session");
        }
        var security = connection.Security;
        if (security.IsSecure)
        {
            if (session.ClientCertificate is null || !session.ClientCertificate.AsSpan().SequenceEqual(security.RemoteCertificateDer))
            {
                throw new ServiceResultException(StatusCodes.BadSecurityChecksFailed, "the session was created by another application instance");
            }
            if (!security.VerifyWithRemoteKey(request.ClientSignature, Settings.Security!.Certificate.RawData, session.ServerNonce))
            {
                throw new ServiceResultException(StatusCodes.BadApplicationSignatureInvalid, "the client signature is not valid");
            }
        }
        else if (session.ClientCertificate is not null)
        {
            throw new ServiceResultException(StatusCodes.BadSecurityChecksFailed, "a secured session cannot be activated on an unsecured channel");
        }
        CheckIdentity(request.UserIdentityToken, session);
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

    private void CheckIdentity(ExtensionObject token, ServerSession session)
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
                var given = DecryptPassword(user, session);
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

    /// <summary>
    /// The password of a UserName token: in clear only on a server without security; otherwise RSA-encrypted with the
    /// server's key as the token policy says, holding length | password | the last server nonce (OPC 10000-4 §7.41.2.2).
    /// </summary>
    private byte[] DecryptPassword(UserNameIdentityToken user, ServerSession session)
    {
        var security = Settings.Security;
        if (security is null)
        {
            if (!string.IsNullOrEmpty(user.EncryptionAlgorithm))
            {
                throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, "encrypted passwords need a server certificate; this server has none");
            }
            return user.Password ?? [];
        }
        var policy = SecurityPolicy.All.FirstOrDefault(p => user.PolicyId == UserNamePolicyId + "_" + p.Name);
        if (policy is null || !string.Equals(user.EncryptionAlgorithm, policy.AsymmetricEncryptionUri, StringComparison.Ordinal) || user.Password is null)
        {
            throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, $"the password must be encrypted as token policy '{user.PolicyId}' says");
        }
        using var rsa = security.Certificate.GetRSAPrivateKey()!;
        var block = rsa.KeySize / 8;
        if (user.Password.Length == 0 || user.Password.Length % block != 0)
        {
            throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, "the encrypted password is not a whole number of RSA blocks");
        }
        byte[] plain;
        try
        {
            var parts = new List<byte[]>();
            for (var i = 0; i < user.Password.Length; i += block)
            {
                parts.Add(rsa.Decrypt(user.Password.AsSpan(i, block), policy.AsymmetricEncryption));
            }
            plain = ChannelSecurity.Concat([.. parts]);
        }
        catch (CryptographicException)
        {
            throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, "the encrypted password cannot be decrypted");
        }
        try
        {
            var nonce = session.ServerNonce;
            var length = plain.Length >= 4 ? System.Buffers.Binary.BinaryPrimitives.ReadInt32LittleEndian(plain) : -1;
            if (length < nonce.Length || length > plain.Length - 4 || !plain.AsSpan(4 + length - nonce.Length, nonce.Length).SequenceEqual(nonce))
            {
                throw new ServiceResultException(StatusCodes.BadIdentityTokenInvalid, "the encrypted password does not end with the last server nonce");
            }
            return plain.AsSpan(4, length - nonce.Length).ToArray();
        }
        finally
        {
            CryptographicOperations.ZeroMemory(plain);
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
