using System.Formats.Asn1;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;

namespace Tieflow.OpcUa.Security;

/// <summary>A certificate field may hold a chain of DER certificates one after the other (OPC 10000-6 §6.2.6): this reads the first.</summary>
internal static class CertificateChain
{
    public static X509Certificate2 First(byte[] chain)
    {
        int length;
        try
        {
            AsnDecoder.ReadEncodedValue(chain, AsnEncodingRules.DER, out _, out _, out length);
        }
        catch (AsnContentException e)
        {
            throw new CryptographicException("not a DER certificate", e);
        }

        return X509CertificateLoader.LoadCertificate(chain.AsSpan(0, length));
    }
}
