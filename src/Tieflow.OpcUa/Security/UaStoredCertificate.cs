using System.Security.Cryptography.X509Certificates;

namespace Tieflow.OpcUa.Security;

/// <summary>One certificate file of a <see cref="UaCertificateStore"/>.</summary>
/// <param name="Folder">own, trusted, issuers or rejected.</param>
/// <param name="Path">The file.</param>
/// <param name="Subject">The subject name.</param>
/// <param name="Issuer">The issuer name.</param>
/// <param name="Thumbprint">SHA-1 thumbprint in hex.</param>
/// <param name="NotBefore">Start of validity (UTC).</param>
/// <param name="NotAfter">End of validity (UTC).</param>
/// <param name="ApplicationUris">The URIs in the subject alternative name.</param>
/// <param name="HostNames">The DNS names and IP addresses in the subject alternative name.</param>
public sealed record UaStoredCertificate(string Folder, string Path, string Subject, string Issuer, string Thumbprint, DateTime NotBefore, DateTime NotAfter,
    IReadOnlyList<string> ApplicationUris, IReadOnlyList<string> HostNames)
{
    internal static UaStoredCertificate From(string folder, string path, X509Certificate2 certificate) =>
        new(folder, path, certificate.Subject, certificate.Issuer, certificate.Thumbprint, certificate.NotBefore.ToUniversalTime(), certificate.NotAfter.ToUniversalTime(),
            CertificateInfo.ApplicationUris(certificate), CertificateInfo.HostNames(certificate));
}
