using System.Numerics;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Microsoft.Extensions.Time.Testing;
using Tieflow.OpcUa.Encoding;
using Tieflow.OpcUa.Security;

namespace Tieflow.OpcUa.Tests.Security;

/// <summary>The certificate store: the own certificate, and the checks of OPC 10000-4 §6.1.3 on a peer's certificate.</summary>
public sealed class UaCertificateStoreTests : IDisposable
{
    private static readonly DateTimeOffset Now = new(2026, 3, 2, 8, 0, 0, TimeSpan.Zero);
    private readonly TempFolder _folder = new();
    private readonly FakeTimeProvider _time = new(Now);

    public void Dispose() => _folder.Dispose();

    private UaCertificateStore Store() => new(_folder.Path, _time);

    [Fact]
    public void OwnCertificate_CreatedOnceWithUriHostsAndARestrictedKeyFile()
    {
        var store = Store();
        using var created = store.GetOrCreateApplicationCertificate("urn:host1:tieflow", "Tieflow", ["host1.example", "127.0.0.1"]);
        using var again = store.GetOrCreateApplicationCertificate("urn:host1:tieflow", "Tieflow", ["host1.example"]);

        Assert.Equal(created.Thumbprint, again.Thumbprint);
        Assert.True(again.HasPrivateKey);
        using var key = created.GetRSAPrivateKey()!;
        Assert.Equal(2048, key.KeySize);
        Assert.Equal("sha256RSA", created.SignatureAlgorithm.FriendlyName);
        Assert.Equal(["urn:host1:tieflow"], CertificateInfo.ApplicationUris(created));
        Assert.Equal(["host1.example", "127.0.0.1"], CertificateInfo.HostNames(created));
        Assert.Equal(Now.AddYears(5).UtcDateTime, created.NotAfter.ToUniversalTime());
        if (!OperatingSystem.IsWindows())
        {
            Assert.Equal(UnixFileMode.UserRead | UnixFileMode.UserWrite, File.GetUnixFileMode(Path.Combine(store.OwnDirectory, "private-key.pem")));
        }

        var error = Assert.Throws<InvalidOperationException>(() => store.GetOrCreateApplicationCertificate("urn:other", "Tieflow"));
        Assert.Contains("urn:other", error.Message, StringComparison.Ordinal);
        Assert.DoesNotContain("PRIVATE KEY", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Validate_TrustedSelfSigned_PassesAndChecksHostUriAndTime()
    {
        var store = Store();
        using var peer = TestCertificates.Create("urn:test:peer", "Peer", 2048, Now.AddDays(-1), Now.AddDays(30));
        Directory.CreateDirectory(store.TrustedDirectory);
        File.WriteAllText(Path.Combine(store.TrustedDirectory, "peer.pem"), peer.ExportCertificatePem());

        store.Validate(peer, "urn:test:peer", "localhost");
        Assert.Equal(StatusCodes.BadCertificateHostNameInvalid, Assert.Throws<UaCertificateException>(() => store.Validate(peer, "urn:test:peer", "plant-opc")).Status);
        Assert.Equal(StatusCodes.BadCertificateUriInvalid, Assert.Throws<UaCertificateException>(() => store.Validate(peer, "urn:test:other", "localhost")).Status);
        _time.Advance(TimeSpan.FromDays(31));
        var expired = Assert.Throws<UaCertificateException>(() => store.Validate(peer, "urn:test:peer", "localhost"));
        Assert.Equal(StatusCodes.BadCertificateTimeInvalid, expired.Status);
        Assert.Null(expired.RejectedPath);
    }

    [Fact]
    public void Validate_Untrusted_IsCopiedToRejectedAndTrustMovesIt()
    {
        var store = Store();
        using var peer = TestCertificates.Create("urn:test:peer", "Peer/Server 1", 2048, Now.AddDays(-1));
        var error = Assert.Throws<UaCertificateException>(() => store.Validate(peer, null, null));
        Assert.Equal(StatusCodes.BadCertificateUntrusted, error.Status);
        Assert.Equal(peer.Thumbprint, error.Thumbprint);
        Assert.StartsWith(store.RejectedDirectory, error.RejectedPath, StringComparison.Ordinal);
        Assert.Equal(peer.RawData, File.ReadAllBytes(error.RejectedPath!));

        var trusted = store.Trust(peer.Thumbprint[..10]);
        Assert.StartsWith(store.TrustedDirectory, trusted, StringComparison.Ordinal);
        Assert.False(File.Exists(error.RejectedPath));
        store.Validate(peer, null, null);
        Assert.Equal(trusted, store.Remove(peer.Thumbprint));
        Assert.Throws<UaCertificateException>(() => store.Validate(peer, null, null));
        Assert.Throws<ArgumentException>(() => store.Trust("0000000000"));
    }

    [Fact]
    public void Validate_IssuedByATrustedCa_PassesUntilTheCaRevokesIt()
    {
        var store = Store();
        using var caKey = RSA.Create(2048);
        var caRequest = new CertificateRequest("CN=Site CA", caKey, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        caRequest.CertificateExtensions.Add(new X509BasicConstraintsExtension(true, false, 0, true));
        caRequest.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.KeyCertSign | X509KeyUsageFlags.CrlSign, true));
        var caSki = new X509SubjectKeyIdentifierExtension(caRequest.PublicKey, false);
        caRequest.CertificateExtensions.Add(caSki);
        using var ca = caRequest.CreateSelfSigned(Now.AddYears(-1), Now.AddYears(5));

        using var leafKey = RSA.Create(2048);
        var leafRequest = new CertificateRequest("CN=Plant server", leafKey, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        var san = new SubjectAlternativeNameBuilder();
        san.AddUri(new Uri("urn:plant:server"));
        san.AddDnsName("plant-opc");
        leafRequest.CertificateExtensions.Add(san.Build());
        leafRequest.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.DigitalSignature | X509KeyUsageFlags.KeyEncipherment, true));
        leafRequest.CertificateExtensions.Add(X509AuthorityKeyIdentifierExtension.CreateFromSubjectKeyIdentifier(caSki));
        using var leaf = leafRequest.Create(ca, Now.AddDays(-1), Now.AddYears(1), [0x01, 0x02, 0x03, 0x04]);

        Directory.CreateDirectory(store.TrustedDirectory);
        File.WriteAllBytes(Path.Combine(store.TrustedDirectory, "site-ca.der"), ca.RawData);
        store.Validate(leaf, "urn:plant:server", "plant-opc");

        var crl = new CertificateRevocationListBuilder();
        crl.AddEntry(leaf, Now.AddHours(-1));
        Directory.CreateDirectory(store.IssuersDirectory);
        File.WriteAllBytes(Path.Combine(store.IssuersDirectory, "site-ca.crl"),
            crl.Build(ca, BigInteger.One, Now.AddDays(7), HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1, Now));
        Assert.Equal(StatusCodes.BadCertificateRevoked, Assert.Throws<UaCertificateException>(() => store.Validate(leaf, "urn:plant:server", "plant-opc")).Status);
    }

    [Fact]
    public void Validate_WrongKeyUsage_IsRefused()
    {
        var store = Store();
        using var rsa = RSA.Create(2048);
        var request = new CertificateRequest("CN=Signer only", rsa, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        request.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.DigitalSignature, true));
        using var peer = request.CreateSelfSigned(Now.AddDays(-1), Now.AddDays(10));
        Directory.CreateDirectory(store.TrustedDirectory);
        File.WriteAllBytes(Path.Combine(store.TrustedDirectory, "signer.der"), peer.RawData);
        Assert.Equal(StatusCodes.BadCertificateUseNotAllowed, Assert.Throws<UaCertificateException>(() => store.Validate(peer, null, null)).Status);
    }

    [Fact]
    public void List_NamesFolderSubjectAndThumbprint()
    {
        var store = Store();
        using var own = store.GetOrCreateApplicationCertificate("urn:x:tieflow", "Tieflow", ["x"]);
        using var peer = TestCertificates.Create("urn:test:peer", "Peer", 2048, Now.AddDays(-1));
        store.CopyToRejected(peer);
        var list = store.List();
        Assert.Equal(["own", "rejected"], list.Select(c => c.Folder));
        Assert.Equal(own.Thumbprint, list[0].Thumbprint);
        Assert.Equal("CN=Peer", list[1].Subject);
        Assert.Equal(["urn:test:peer"], list[1].ApplicationUris);
    }
}
