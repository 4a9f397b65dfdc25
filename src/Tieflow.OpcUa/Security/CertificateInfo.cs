using System.Formats.Asn1;
using System.Security.Cryptography.X509Certificates;

namespace Tieflow.OpcUa.Security;

/// <summary>What the checks and messages need from a certificate: SAN URIs, host names, and a short description.</summary>
internal static class CertificateInfo
{
    private const string SubjectAltNameOid = "2.5.29.17";

    /// <summary>"CN=..., thumbprint ABC..." (no key material).</summary>
    public static string Describe(X509Certificate2 certificate) => $"'{certificate.Subject}' (thumbprint {certificate.Thumbprint})";

    public static IReadOnlyList<string> ApplicationUris(X509Certificate2 certificate)
    {
        var extension = certificate.Extensions[SubjectAltNameOid];
        if (extension is null)
        {
            return [];
        }

        var uris = new List<string>();
        try
        {
            var names = new AsnReader(extension.RawData, AsnEncodingRules.DER).ReadSequence();
            var uriTag = new Asn1Tag(TagClass.ContextSpecific, 6);
            while (names.HasData)
            {
                if (names.PeekTag() == uriTag)
                {
                    uris.Add(names.ReadCharacterString(UniversalTagNumber.IA5String, uriTag));
                }
                else
                {
                    names.ReadEncodedValue();
                }
            }
        }
        catch (AsnContentException)
        {
            return uris;
        }

        return uris;
    }

    public static IReadOnlyList<string> HostNames(X509Certificate2 certificate)
    {
        var extension = certificate.Extensions[SubjectAltNameOid];
        if (extension is null)
        {
            return [];
        }

        var san = new X509SubjectAlternativeNameExtension(extension.RawData, extension.Critical);
        return [.. san.EnumerateDnsNames(), .. san.EnumerateIPAddresses().Select(a => a.ToString())];
    }
}
