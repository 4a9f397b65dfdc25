using System.Security.Cryptography.X509Certificates;

namespace Tieflow.OpcUa.Security;

/// <summary>
/// The security of a <see cref="Server.UaServer"/>: its application instance certificate, the endpoints it offers,
/// and how client certificates are checked. Build one with <see cref="FromStore"/> to keep the certificate in a
/// certificate store folder (created on first use).
/// </summary>
public sealed class UaServerSecurityOptions
{
    /// <summary>The server's certificate with its private key (RSA 2048-4096 bits).</summary>
    public required X509Certificate2 Certificate { get; init; }

    /// <summary>The endpoints offered (default: None and every secured mode and policy). Omit <see cref="UaSecurity.None"/> to refuse unsecured channels.</summary>
    public IReadOnlyList<UaSecurity> Endpoints { get; init; } = [UaSecurity.None, .. UaSecurity.AllSecure];

    /// <summary>Checks client certificates against its trusted/ folder; unknown ones go to its rejected/ folder. Null: see <see cref="AcceptAnyClientCertificate"/>.</summary>
    public UaCertificateStore? ClientCertificateStore { get; init; }

    /// <summary>Accept every client certificate that is valid in time (tests and a local simulator only). Default false.</summary>
    public bool AcceptAnyClientCertificate { get; init; }

    /// <summary>Options with the server's certificate from (or created in) <paramref name="store"/>, which also checks client certificates.</summary>
    /// <param name="store">The certificate store.</param>
    /// <param name="applicationUri">The server's application URI (must equal <see cref="Server.UaServerOptions.ApplicationUri"/>).</param>
    /// <param name="applicationName">The certificate's common name.</param>
    /// <param name="hostNames">Host names and addresses for the certificate (default this machine's name and localhost; add 127.0.0.1 or the address clients use).</param>
    /// <returns>The options.</returns>
    public static UaServerSecurityOptions FromStore(UaCertificateStore store, string applicationUri, string applicationName, IReadOnlyList<string>? hostNames = null)
    {
        ArgumentNullException.ThrowIfNull(store);
        return new UaServerSecurityOptions
        {
            Certificate = store.GetOrCreateApplicationCertificate(applicationUri, applicationName, hostNames),
            ClientCertificateStore = store,
        };
    }
}
