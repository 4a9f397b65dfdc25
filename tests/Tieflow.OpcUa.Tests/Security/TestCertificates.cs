using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;

namespace Tieflow.OpcUa.Tests.Security;

/// <summary>Self-signed application certificates made once per test run (RSA key generation is slow).</summary>
internal static class TestCertificates
{
    private static readonly Lazy<X509Certificate2> LazyClient = new(() => Create("urn:test:client", "Test client", 2048));
    private static readonly Lazy<X509Certificate2> LazyServer = new(() => Create("urn:test:server", "Test server", 2048));
    private static readonly Lazy<X509Certificate2> LazyLargeServer = new(() => Create("urn:test:server3072", "Test server 3072", 3072));

    public static X509Certificate2 Client => LazyClient.Value;

    public static X509Certificate2 Server => LazyServer.Value;

    /// <summary>A 3072-bit key: asymmetric chunks encrypted for it carry the ExtraPaddingSize byte.</summary>
    public static X509Certificate2 LargeServer => LazyLargeServer.Value;

    public static X509Certificate2 Create(string uri, string name, int bits, DateTimeOffset? notBefore = null, DateTimeOffset? notAfter = null)
    {
        using var rsa = RSA.Create(bits);
        var request = new CertificateRequest($"CN={name}", rsa, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        var san = new SubjectAlternativeNameBuilder();
        san.AddUri(new Uri(uri));
        san.AddDnsName("localhost");
        request.CertificateExtensions.Add(san.Build());
        request.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.DigitalSignature | X509KeyUsageFlags.KeyEncipherment | X509KeyUsageFlags.DataEncipherment, true));
        var from = notBefore ?? DateTimeOffset.UtcNow.AddDays(-1);
        using var created = request.CreateSelfSigned(from, notAfter ?? from.AddYears(1));
        return X509CertificateLoader.LoadCertificate(created.RawData).CopyWithPrivateKey(rsa);
    }

    /// <summary>The certificate without its private key (what the peer knows).</summary>
    public static X509Certificate2 Public(X509Certificate2 certificate) => X509CertificateLoader.LoadCertificate(certificate.RawData);
}
