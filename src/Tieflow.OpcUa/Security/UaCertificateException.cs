using System.Security.Cryptography.X509Certificates;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Security;

/// <summary>A peer's certificate was refused (untrusted, expired, wrong host name or URI, revoked, ...).</summary>
public sealed class UaCertificateException : ServiceResultException
{
    /// <summary>Creates the exception.</summary>
    /// <param name="status">Why (BadCertificateUntrusted, BadCertificateTimeInvalid, ...).</param>
    /// <param name="message">What was refused and what to do.</param>
    /// <param name="certificate">The refused certificate.</param>
    /// <param name="rejectedPath">Where a copy was put for the operator (untrusted certificates), or null.</param>
    public UaCertificateException(StatusCode status, string message, X509Certificate2 certificate, string? rejectedPath)
        : base(status, message)
    {
        ArgumentNullException.ThrowIfNull(certificate);
        Thumbprint = certificate.Thumbprint;
        Subject = certificate.Subject;
        RejectedPath = rejectedPath;
    }

    /// <summary>The refused certificate's SHA-1 thumbprint.</summary>
    public string Thumbprint { get; }

    /// <summary>The refused certificate's subject.</summary>
    public string Subject { get; }

    /// <summary>The copy in the store's rejected folder, or null.</summary>
    public string? RejectedPath { get; }
}
