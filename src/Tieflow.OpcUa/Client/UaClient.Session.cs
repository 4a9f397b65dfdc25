using System.Buffers.Binary;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Client;

/// <content>
/// Discovery, endpoint choice, server certificate checks, the secure channel and the session (CreateSession and
/// ActivateSession with their signatures and the encrypted user name token).
/// </content>
public sealed partial class UaClient
{
    private UserTokenPolicy? _tokenPolicy;
    private EndpointDescription? _endpoint;
    private X509Certificate2? _serverCertificate;
    private X509Certificate2? _ownCertificate;
    private byte[] _serverNonce = [];

    /// <summary>The security of the current (or last) connection: the endpoint's mode and policy; null before the first connection.</summary>
    public UaSecurity? Security => _endpoint is null ? null : new UaSecurity(_endpoint.SecurityMode, _endpoint.SecurityPolicyUri);

    private ClientChannelSettings ChannelSettingsFor(EndpointDescription? endpoint) => new()
    {
        EndpointUrl = _options.EndpointUrl,
        Limits = _options.Transport,
        ConnectTimeout = _options.ConnectTimeout,
        RequestedTokenLifetime = _options.TokenLifetime,
        ChannelRequestTimeout = _options.RequestTimeout,
        Policy = endpoint is null ? null : SecurityPolicy.FromUri(endpoint.SecurityPolicyUri),
        Mode = endpoint?.SecurityMode ?? MessageSecurityMode.None,
        OwnCertificate = endpoint is null || endpoint.SecurityMode == MessageSecurityMode.None ? null : _ownCertificate,
        ServerCertificate = endpoint is null || endpoint.SecurityMode == MessageSecurityMode.None ? null : _serverCertificate,
    };

    /// <summary>Opens a channel and a session. On a reconnect the old session is reactivated when the server still has it.</summary>
    /// <returns>True when an existing session was reactivated.</returns>
    private async Task<bool> EstablishAsync(bool reconnect, CancellationToken cancellationToken)
    {
        var channel = await DiscoverAsync(cancellationToken).ConfigureAwait(false);
        try
        {
            if (channel is null)
            {
                channel = new ClientSecureChannel(ChannelSettingsFor(_endpoint), _time);
                await channel.OpenAsync(cancellationToken).ConfigureAwait(false);
            }

            var restored = false;
            if (reconnect && !_authenticationToken.IsNull)
            {
                try
                {
                    await ActivateAsync(channel, cancellationToken).ConfigureAwait(false);
                    restored = true;
                }
                catch (ServiceResultException ex) when (!IsConnectionFailure(ex.Status))
                {
                    // The server lost the session (BadSessionIdInvalid after a restart): create a new one below.
                }
            }

            if (!restored)
            {
                await CreateSessionAsync(channel, cancellationToken).ConfigureAwait(false);
                await ActivateAsync(channel, cancellationToken).ConfigureAwait(false);
            }

            channel.TokenRenewed += _ => Interlocked.Increment(ref _tokenRenewals);
            var old = Interlocked.Exchange(ref _channel, channel);
            if (old is not null)
            {
                await old.DisposeAsync().ConfigureAwait(false);
            }

            _ = WatchChannelAsync(channel);
            _namespaceUris = await ReadNamespaceArrayAsync(cancellationToken).ConfigureAwait(false);
            return restored;
        }
        catch
        {
            if (channel is not null)
            {
                await channel.DisposeAsync().ConfigureAwait(false);
            }

            throw;
        }
    }

    private async Task WatchChannelAsync(ClientSecureChannel channel)
    {
        var failure = await channel.Completion.ConfigureAwait(false);
        if (ReferenceEquals(_channel, channel) && !_closing.IsCancellationRequested)
        {
            TriggerReconnect(failure?.Status ?? StatusCodes.BadSecureChannelClosed, failure?.Message ?? "The secure channel closed");
        }
    }

    /// <summary>
    /// GetEndpoints on an unsecured channel, then the endpoint choice and the server certificate check. Returns the
    /// discovery channel when the chosen endpoint is unsecured (it is used for the session), otherwise closes it.
    /// </summary>
    private async Task<ClientSecureChannel?> DiscoverAsync(CancellationToken cancellationToken)
    {
        var discovery = new ClientSecureChannel(ChannelSettingsFor(null), _time);
        try
        {
            await discovery.OpenAsync(cancellationToken).ConfigureAwait(false);
            var endpoints = await discovery.SendAsync<GetEndpointsResponse>(new GetEndpointsRequest
            {
                RequestHeader = discovery.NewHeader(NodeId.Null, _options.RequestTimeout),
                EndpointUrl = _options.EndpointUrl.OriginalString,
                ProfileUris = [TransportProfileUri],
            }, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
            var endpoint = ChooseEndpoint(endpoints.Endpoints);
            var tokenPolicy = ChooseTokenPolicy(endpoint);
            var tokenSecurity = TokenSecurityPolicy(endpoint, tokenPolicy);
            X509Certificate2? serverCertificate = null;
            if (endpoint.SecurityMode != MessageSecurityMode.None || tokenSecurity is not null)
            {
                // Our own certificate first: on the first connection the operator gets it in the store (to give to the
                // server's administrator) in the same step in which the server's lands in rejected/.
                if (endpoint.SecurityMode != MessageSecurityMode.None)
                {
                    _ownCertificate ??= OwnCertificate();
                }

                serverCertificate = CheckServerCertificate(endpoint);
            }

            _endpoint = endpoint;
            _tokenPolicy = tokenPolicy;
            _serverCertificate = serverCertificate;
            if (endpoint.SecurityMode == MessageSecurityMode.None)
            {
                if (_options.Security is null)
                {
                    SetState(_state, StatusCodes.Good, $"{_options.EndpointUrl} offers no secured endpoint that Tieflow supports: connecting without security");
                }

                return discovery;
            }
        }
        catch
        {
            await discovery.DisposeAsync().ConfigureAwait(false);
            throw;
        }

        await discovery.DisposeAsync().ConfigureAwait(false);
        return null;
    }

    private X509Certificate2 OwnCertificate()
    {
        var store = _options.CertificateStore ?? throw new ServiceResultException(StatusCodes.BadConfigurationError,
            $"A secured connection to {_options.EndpointUrl} needs a certificate store (UaClientOptions.CertificateStore) for Tieflow's certificate");
        return store.GetOrCreateApplicationCertificate(_options.ApplicationUri, _options.ApplicationName);
    }

    private X509Certificate2 CheckServerCertificate(EndpointDescription endpoint)
    {
        if (endpoint.ServerCertificate is not { Length: > 0 } der)
        {
            throw new ServiceResultException(StatusCodes.BadCertificateInvalid, $"The server's endpoint {endpoint.SecurityMode}:{endpoint.SecurityPolicyUri} carries no certificate");
        }

        X509Certificate2 certificate;
        try
        {
            certificate = CertificateChain.First(der);
        }
        catch (CryptographicException)
        {
            throw new ServiceResultException(StatusCodes.BadCertificateInvalid, $"The server certificate of {_options.EndpointUrl} cannot be read");
        }

        var store = _options.CertificateStore ?? throw new ServiceResultException(StatusCodes.BadConfigurationError,
            $"A secured connection to {_options.EndpointUrl} needs a certificate store (UaClientOptions.CertificateStore) to check the server's certificate");
        try
        {
            store.Validate(certificate, endpoint.Server.ApplicationUri, _options.EndpointUrl.IdnHost);
        }
        catch (CryptographicException)
        {
            throw new ServiceResultException(StatusCodes.BadCertificateInvalid, $"The server certificate of {_options.EndpointUrl} has a key that cannot be read");
        }

        return certificate;
    }

    private EndpointDescription ChooseEndpoint(EndpointDescription[] endpoints)
    {
        // Chosen by mode, policy and transport, never by the advertised host (docs/opcua.md §1.6, §5).
        var usable = endpoints.Where(e =>
                (string.IsNullOrEmpty(e.TransportProfileUri) || string.Equals(e.TransportProfileUri, TransportProfileUri, StringComparison.Ordinal)) &&
                ((e.SecurityMode == MessageSecurityMode.None && string.Equals(e.SecurityPolicyUri, SecurityPolicy.NoneUri, StringComparison.Ordinal)) ||
                 (e.SecurityMode is MessageSecurityMode.Sign or MessageSecurityMode.SignAndEncrypt && SecurityPolicy.FromUri(e.SecurityPolicyUri) is not null)))
            .Where(e => TryChooseTokenPolicy(e) is not null)
            .ToList();
        var offered = string.Join(", ", endpoints.Select(e => new UaSecurity(e.SecurityMode, e.SecurityPolicyUri)).Distinct());
        var wanted = _options.Security;
        if (wanted is not null)
        {
            usable = [.. usable.Where(e => e.SecurityMode == wanted.Mode &&
                (wanted.PolicyUri is null || string.Equals(e.SecurityPolicyUri, wanted.PolicyUri, StringComparison.Ordinal)))];
            if (usable.Count == 0)
            {
                throw new ServiceResultException(StatusCodes.BadSecurityPolicyRejected,
                    $"{_options.EndpointUrl} offers no endpoint with security {wanted} for {_options.Identity} (it offers {offered})");
            }
        }

        // The most secure: SignAndEncrypt over Sign over None, then the stronger policy.
        return usable.OrderByDescending(e => (int)e.SecurityMode).ThenByDescending(e => SecurityPolicy.FromUri(e.SecurityPolicyUri)?.Rank ?? 0).FirstOrDefault()
            ?? throw new ServiceResultException(StatusCodes.BadSecurityPolicyRejected,
                $"{_options.EndpointUrl} offers no endpoint Tieflow supports for {_options.Identity} (it offers {offered})");
    }

    private UserTokenPolicy ChooseTokenPolicy(EndpointDescription endpoint) =>
        TryChooseTokenPolicy(endpoint) ?? throw new ServiceResultException(StatusCodes.BadIdentityTokenRejected,
            $"The server's endpoint {endpoint.EndpointUrl} ({new UaSecurity(endpoint.SecurityMode, endpoint.SecurityPolicyUri)}) offers no login for {_options.Identity}");

    private UserTokenPolicy? TryChooseTokenPolicy(EndpointDescription endpoint)
    {
        var identity = _options.Identity;
        if (identity.TokenType == UserTokenType.Anonymous)
        {
            return endpoint.UserIdentityTokens.FirstOrDefault(p => p.TokenType == UserTokenType.Anonymous);
        }

        // The token policy's security policy applies, or the channel's when it is empty (OPC 10000-4 §7.42); a
        // password is sent in clear only where both are None, which a server offers only on purpose.
        return endpoint.UserIdentityTokens.Where(p => p.TokenType == UserTokenType.UserName)
            .Where(p => TokenPolicyUri(endpoint, p) == SecurityPolicy.NoneUri || SecurityPolicy.FromUri(TokenPolicyUri(endpoint, p)) is not null)
            .OrderByDescending(p => SecurityPolicy.FromUri(TokenPolicyUri(endpoint, p))?.Rank ?? 0)
            .FirstOrDefault();
    }

    private static string TokenPolicyUri(EndpointDescription endpoint, UserTokenPolicy policy) =>
        string.IsNullOrEmpty(policy.SecurityPolicyUri) ? endpoint.SecurityPolicyUri ?? SecurityPolicy.NoneUri : policy.SecurityPolicyUri;

    /// <summary>The policy that encrypts the password, or null (anonymous, or a password in clear).</summary>
    private SecurityPolicy? TokenSecurityPolicy(EndpointDescription endpoint, UserTokenPolicy policy) =>
        _options.Identity.TokenType == UserTokenType.UserName ? SecurityPolicy.FromUri(TokenPolicyUri(endpoint, policy)) : null;

    private async Task CreateSessionAsync(ClientSecureChannel channel, CancellationToken cancellationToken)
    {
        var security = channel.Security;
        var clientNonce = RandomNumberGenerator.GetBytes(32);
        var create = await channel.SendAsync<CreateSessionResponse>(new CreateSessionRequest
        {
            RequestHeader = channel.NewHeader(NodeId.Null, _options.RequestTimeout),
            ClientDescription = new ApplicationDescription
            {
                ApplicationUri = _options.ApplicationUri,
                ProductUri = "urn:tieflow",
                ApplicationName = new LocalizedText(_options.ApplicationName),
                ApplicationType = ApplicationType.Client,
            },
            EndpointUrl = _options.EndpointUrl.OriginalString,
            SessionName = _options.SessionName,
            ClientNonce = clientNonce,
            ClientCertificate = security.IsSecure ? security.LocalCertificateDer : null,
            RequestedSessionTimeout = _options.SessionTimeout.TotalMilliseconds,
            MaxResponseMessageSize = 0,
        }, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
        if (security.IsSecure)
        {
            if (create.ServerNonce is not { Length: >= 32 })
            {
                throw new ServiceResultException(StatusCodes.BadNonceInvalid, "CreateSession: the server nonce is shorter than 32 bytes");
            }

            if (create.ServerCertificate is null || !create.ServerCertificate.AsSpan().StartsWith(security.RemoteCertificateDer))
            {
                throw new ServiceResultException(StatusCodes.BadCertificateInvalid, "CreateSession: the server certificate differs from the one of its endpoint");
            }

            if (!security.VerifyWithRemoteKey(create.ServerSignature, security.LocalCertificateDer!, clientNonce))
            {
                throw new ServiceResultException(StatusCodes.BadApplicationSignatureInvalid, "CreateSession: the server signature is not valid");
            }

            // The endpoints in the response must include the one chosen from GetEndpoints (a downgrade check).
            if (create.ServerEndpoints.Length > 0 && !create.ServerEndpoints.Any(e => e.SecurityMode == _endpoint!.SecurityMode &&
                    string.Equals(e.SecurityPolicyUri, _endpoint.SecurityPolicyUri, StringComparison.Ordinal)))
            {
                throw new ServiceResultException(StatusCodes.BadSecurityChecksFailed, "CreateSession: the server's endpoints differ from those of GetEndpoints");
            }
        }

        _authenticationToken = create.AuthenticationToken;
        _serverNonce = create.ServerNonce ?? [];
    }

    private async Task ActivateAsync(ClientSecureChannel channel, CancellationToken cancellationToken)
    {
        var security = channel.Security;
        IEncodeable token = _options.Identity.TokenType == UserTokenType.Anonymous
            ? new AnonymousIdentityToken { PolicyId = _tokenPolicy!.PolicyId }
            : UserNameToken();
        try
        {
            var response = await channel.SendAsync<ActivateSessionResponse>(new ActivateSessionRequest
            {
                RequestHeader = channel.NewHeader(_authenticationToken, _options.RequestTimeout),
                ClientSignature = security.IsSecure ? security.SignWithLocalKey(security.RemoteCertificateDer!, _serverNonce) : new SignatureData(),
                LocaleIds = ["en"],
                UserIdentityToken = new ExtensionObject(new NodeId(token.BinaryEncodingId), ExtensionObjectEncoding.Binary, token),
            }, _options.RequestTimeout, cancellationToken).ConfigureAwait(false);
            _serverNonce = response.ServerNonce ?? [];
        }
        catch (ServiceResultException ex)
        {
            // The message names the identity (user name only) and the status; never the password.
            throw new ServiceResultException(ex.Status, $"ActivateSession as {_options.Identity} failed", ex);
        }
    }

    /// <summary>
    /// The UserName token: the password encrypted with the server certificate's key as the token policy says
    /// (legacy secret: length | password | last server nonce, OPC 10000-4 §7.41.2.2), in clear only where the
    /// policy is None.
    /// </summary>
    private UserNameIdentityToken UserNameToken()
    {
        var password = System.Text.Encoding.UTF8.GetBytes(_options.Identity.Password);
        var policy = TokenSecurityPolicy(_endpoint!, _tokenPolicy!);
        if (policy is null)
        {
            return new UserNameIdentityToken { PolicyId = _tokenPolicy!.PolicyId, UserName = _options.Identity.UserName, Password = password, EncryptionAlgorithm = null };
        }

        var nonce = _serverNonce;
        var secret = new byte[4 + password.Length + nonce.Length];
        BinaryPrimitives.WriteInt32LittleEndian(secret, password.Length + nonce.Length);
        password.CopyTo(secret, 4);
        nonce.CopyTo(secret, 4 + password.Length);
        CryptographicOperations.ZeroMemory(password);
        try
        {
            using var rsa = _serverCertificate!.GetRSAPublicKey()!;
            var cipherBlock = rsa.KeySize / 8;
            var plainBlock = cipherBlock - policy.OaepOverhead;
            var encrypted = new byte[(secret.Length + plainBlock - 1) / plainBlock * cipherBlock];
            for (int i = 0, o = 0; i < secret.Length; i += plainBlock, o += cipherBlock)
            {
                rsa.Encrypt(secret.AsSpan(i, Math.Min(plainBlock, secret.Length - i)), encrypted.AsSpan(o, cipherBlock), policy.AsymmetricEncryption);
            }

            return new UserNameIdentityToken
            {
                PolicyId = _tokenPolicy!.PolicyId,
                UserName = _options.Identity.UserName,
                Password = encrypted,
                EncryptionAlgorithm = policy.AsymmetricEncryptionUri,
            };
        }
        finally
        {
            CryptographicOperations.ZeroMemory(secret);
        }
    }
}
