using System.Formats.Asn1;
using System.Net;
using System.Numerics;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Security;

/// <summary>
/// A certificate store folder (OPC 10000-12 §7 layout, simplified): <c>own/</c> holds this application's instance
/// certificate (<c>certificate.der</c>) and private key (<c>private-key.pem</c>, readable by the owner only);
/// <c>trusted/</c> the trusted peer and CA certificates; <c>issuers/</c> CA certificates that may complete a chain
/// without being trusted themselves, and revocation lists (<c>.crl</c>); <c>rejected/</c> copies of peer
/// certificates that were refused, for the operator to inspect and trust. Certificates are DER (<c>.der</c>,
/// <c>.cer</c>) or PEM (<c>.pem</c>, <c>.crt</c>).
/// </summary>
public sealed class UaCertificateStore
{
    private const string CertificateFile = "certificate.der";
    private const string KeyFile = "private-key.pem";
    private static readonly string[] CertificateExtensions = [".der", ".cer", ".pem", ".crt"];

    private readonly TimeProvider _time;

    /// <summary>Opens (without creating anything yet) the store in <paramref name="root"/>.</summary>
    /// <param name="root">The store folder.</param>
    /// <param name="timeProvider">The clock for validity checks and new certificates (default the system clock).</param>
    public UaCertificateStore(string root, TimeProvider? timeProvider = null)
    {
        ArgumentException.ThrowIfNullOrEmpty(root);
        Root = Path.GetFullPath(root);
        _time = timeProvider ?? TimeProvider.System;
    }

    /// <summary>The store folder.</summary>
    public string Root { get; }

    /// <summary>Where this application's certificate and key are kept.</summary>
    public string OwnDirectory => Path.Combine(Root, "own");

    /// <summary>Trusted certificates.</summary>
    public string TrustedDirectory => Path.Combine(Root, "trusted");

    /// <summary>CA certificates and revocation lists that are not trusted by themselves.</summary>
    public string IssuersDirectory => Path.Combine(Root, "issuers");

    /// <summary>Copies of refused certificates.</summary>
    public string RejectedDirectory => Path.Combine(Root, "rejected");

    /// <summary>
    /// Loads this application's certificate with its private key, creating a self-signed one on first use (RSA
    /// 2048, SHA-256, the application URI and host names in the subject alternative name, valid for 5 years). An
    /// expired certificate is replaced.
    /// </summary>
    /// <param name="applicationUri">The application URI (put in the SAN; must match the one sent in CreateSession).</param>
    /// <param name="applicationName">The common name.</param>
    /// <param name="hostNames">DNS names and IP addresses for the SAN (default this machine's host name and localhost).</param>
    /// <returns>The certificate with its private key.</returns>
    /// <exception cref="InvalidOperationException">The stored certificate names another application URI.</exception>
    public X509Certificate2 GetOrCreateApplicationCertificate(string applicationUri, string applicationName, IReadOnlyList<string>? hostNames = null)
    {
        ArgumentException.ThrowIfNullOrEmpty(applicationUri);
        ArgumentException.ThrowIfNullOrEmpty(applicationName);
        var certificatePath = Path.Combine(OwnDirectory, CertificateFile);
        var keyPath = Path.Combine(OwnDirectory, KeyFile);
        if (File.Exists(certificatePath) && File.Exists(keyPath))
        {
            using var loaded = X509CertificateLoader.LoadCertificate(File.ReadAllBytes(certificatePath));
            var now = _time.GetUtcNow().UtcDateTime;
            if (!CertificateInfo.ApplicationUris(loaded).Contains(applicationUri, StringComparer.Ordinal))
            {
                // Never replaced silently: servers may trust this certificate already.
                throw new InvalidOperationException(
                    $"{certificatePath} names application URI {string.Join(", ", CertificateInfo.ApplicationUris(loaded))}, not {applicationUri}; " +
                    $"use another store folder, or delete {certificatePath} and {keyPath} to create a new certificate (servers must then trust the new one)");
            }

            if (loaded.NotAfter.ToUniversalTime() > now)
            {
                using var rsa = RSA.Create();
                rsa.ImportFromPem(File.ReadAllText(keyPath));
                return loaded.CopyWithPrivateKey(rsa);
            }
        }

        return Create(applicationUri, applicationName, hostNames ?? [Dns.GetHostName(), "localhost"], certificatePath, keyPath);
    }

    private X509Certificate2 Create(string applicationUri, string applicationName, IReadOnlyList<string> hostNames, string certificatePath, string keyPath)
    {
        using var rsa = RSA.Create(2048);
        var subject = new X500DistinguishedNameBuilder();
        subject.AddCommonName(applicationName);
        if (hostNames.Count > 0)
        {
            subject.AddDomainComponent(hostNames[0].Split('.')[0]);
        }

        var request = new CertificateRequest(subject.Build(), rsa, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        var san = new SubjectAlternativeNameBuilder();
        san.AddUri(new Uri(applicationUri));
        foreach (var host in hostNames.Distinct(StringComparer.OrdinalIgnoreCase))
        {
            if (IPAddress.TryParse(host, out var ip))
            {
                san.AddIpAddress(ip);
            }
            else
            {
                san.AddDnsName(host);
            }
        }

        request.CertificateExtensions.Add(san.Build());
        request.CertificateExtensions.Add(new X509BasicConstraintsExtension(false, false, 0, true));
        request.CertificateExtensions.Add(new X509KeyUsageExtension(
            X509KeyUsageFlags.DigitalSignature | X509KeyUsageFlags.NonRepudiation | X509KeyUsageFlags.KeyEncipherment |
            X509KeyUsageFlags.DataEncipherment | X509KeyUsageFlags.KeyCertSign, true));
        request.CertificateExtensions.Add(new X509EnhancedKeyUsageExtension([new Oid("1.3.6.1.5.5.7.3.1"), new Oid("1.3.6.1.5.5.7.3.2")], false));
        var subjectKeyId = new X509SubjectKeyIdentifierExtension(request.PublicKey, false);
        request.CertificateExtensions.Add(subjectKeyId);
        request.CertificateExtensions.Add(X509AuthorityKeyIdentifierExtension.CreateFromSubjectKeyIdentifier(subjectKeyId));
        var now = _time.GetUtcNow();
        using var created = request.CreateSelfSigned(now.AddDays(-1), now.AddYears(5));

        Directory.CreateDirectory(OwnDirectory);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(OwnDirectory, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.UserExecute);
        }

        // The key file is created with owner-only permissions before the key is written into it.
        var keyPem = rsa.ExportPkcs8PrivateKeyPem();
        var options = new FileStreamOptions { Mode = FileMode.Create, Access = FileAccess.Write };
        if (!OperatingSystem.IsWindows())
        {
            options.UnixCreateMode = UnixFileMode.UserRead | UnixFileMode.UserWrite;
        }

        using (var stream = new FileStream(keyPath, options))
        using (var writer = new StreamWriter(stream))
        {
            writer.Write(keyPem);
        }

        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(keyPath, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }

        File.WriteAllBytes(certificatePath, created.RawData);
        return X509CertificateLoader.LoadCertificate(created.RawData).CopyWithPrivateKey(rsa);
    }

    /// <summary>
    /// Checks a peer's certificate as OPC 10000-4 §6.1.3 asks: validity period, trust (the certificate itself in
    /// <c>trusted/</c>, or a chain to a CA in <c>trusted/</c> with intermediates from <c>issuers/</c>), revocation
    /// lists where present, the host name and application URI in the subject alternative name, and the key usage.
    /// An untrusted certificate is copied to <c>rejected/</c>.
    /// </summary>
    /// <param name="certificate">The peer's certificate.</param>
    /// <param name="applicationUri">The application URI the peer claims (null: not checked).</param>
    /// <param name="hostName">The host name or address used to reach the peer (null: not checked).</param>
    /// <exception cref="UaCertificateException">The certificate is refused; <see cref="ServiceResultException.Status"/> says why.</exception>
    public void Validate(X509Certificate2 certificate, string? applicationUri, string? hostName)
    {
        ArgumentNullException.ThrowIfNull(certificate);
        var info = CertificateInfo.Describe(certificate);
        var now = _time.GetUtcNow().UtcDateTime;
        if (now < certificate.NotBefore.ToUniversalTime() || now > certificate.NotAfter.ToUniversalTime())
        {
            throw new UaCertificateException(StatusCodes.BadCertificateTimeInvalid,
                $"Certificate {info} is valid from {certificate.NotBefore.ToUniversalTime():u} to {certificate.NotAfter.ToUniversalTime():u}, not now ({now:u})", certificate, null);
        }

        var trusted = LoadCertificates(TrustedDirectory);
        var issuers = LoadCertificates(IssuersDirectory);
        try
        {
            if (!trusted.Any(t => t.RawData.AsSpan().SequenceEqual(certificate.RawData)))
            {
                var anchor = FindTrustedChain(certificate, trusted, issuers, now);
                if (anchor is null)
                {
                    var rejected = CopyToRejected(certificate);
                    throw new UaCertificateException(StatusCodes.BadCertificateUntrusted,
                        $"Certificate {info} is not trusted. A copy is in {rejected}; if you trust it, move that file into {TrustedDirectory} and connect again", certificate, rejected);
                }
            }

            CheckRevocation(certificate, [.. trusted, .. issuers]);
        }
        finally
        {
            foreach (var c in trusted.Concat(issuers))
            {
                c.Dispose();
            }
        }

        if (hostName is not null && !CertificateInfo.HostNames(certificate).Any(h => string.Equals(h, hostName, StringComparison.OrdinalIgnoreCase)))
        {
            throw new UaCertificateException(StatusCodes.BadCertificateHostNameInvalid,
                $"Certificate {info} does not name host '{hostName}' (it names {string.Join(", ", CertificateInfo.HostNames(certificate))})", certificate, null);
        }

        if (applicationUri is not null && !CertificateInfo.ApplicationUris(certificate).Contains(applicationUri, StringComparer.Ordinal))
        {
            throw new UaCertificateException(StatusCodes.BadCertificateUriInvalid,
                $"Certificate {info} does not name application URI '{applicationUri}'", certificate, null);
        }

        var usage = certificate.Extensions.OfType<X509KeyUsageExtension>().FirstOrDefault();
        if (usage is not null && ((usage.KeyUsages & X509KeyUsageFlags.DigitalSignature) == 0 ||
            (usage.KeyUsages & (X509KeyUsageFlags.KeyEncipherment | X509KeyUsageFlags.DataEncipherment)) == 0))
        {
            throw new UaCertificateException(StatusCodes.BadCertificateUseNotAllowed,
                $"Certificate {info} may not be used for signatures and key encipherment (key usage {usage.KeyUsages})", certificate, null);
        }

        using var rsa = certificate.GetRSAPublicKey();
        if (rsa is null || rsa.KeySize < 2048 || rsa.KeySize > 4096)
        {
            throw new UaCertificateException(StatusCodes.BadCertificateInvalid,
                $"Certificate {info} has no RSA key of 2048 to 4096 bits", certificate, null);
        }
    }

    private static X509Certificate2? FindTrustedChain(X509Certificate2 certificate, List<X509Certificate2> trusted, List<X509Certificate2> issuers, DateTime now)
    {
        var authorities = trusted.Where(IsAuthority).ToList();
        if (authorities.Count == 0)
        {
            return null;
        }

        using var chain = new X509Chain();
        chain.ChainPolicy.TrustMode = X509ChainTrustMode.CustomRootTrust;
        chain.ChainPolicy.RevocationMode = X509RevocationMode.NoCheck;
        chain.ChainPolicy.VerificationTime = now;
        chain.ChainPolicy.VerificationTimeIgnored = false;
        chain.ChainPolicy.CustomTrustStore.AddRange(authorities.ToArray());
        chain.ChainPolicy.ExtraStore.AddRange(issuers.Where(IsAuthority).ToArray());
        if (!chain.Build(certificate))
        {
            return null;
        }

        var root = chain.ChainElements[^1].Certificate;
        return authorities.FirstOrDefault(a => a.RawData.AsSpan().SequenceEqual(root.RawData));
    }

    private static bool IsAuthority(X509Certificate2 certificate) =>
        certificate.Extensions.OfType<X509BasicConstraintsExtension>().Any(b => b.CertificateAuthority);

    private void CheckRevocation(X509Certificate2 certificate, List<X509Certificate2> authorities)
    {
        foreach (var directory in new[] { IssuersDirectory, TrustedDirectory })
        {
            if (!Directory.Exists(directory))
            {
                continue;
            }

            foreach (var file in Directory.EnumerateFiles(directory, "*.crl"))
            {
                RevocationList list;
                try
                {
                    list = RevocationList.Parse(File.ReadAllBytes(file));
                }
                catch (Exception e) when (e is AsnContentException or CryptographicException or FormatException)
                {
                    throw new UaCertificateException(StatusCodes.BadCertificateRevocationUnknown, $"Revocation list {file} cannot be read: {e.Message}", certificate, null);
                }

                if (!list.Issuer.RawData.AsSpan().SequenceEqual(certificate.IssuerName.RawData))
                {
                    continue;
                }

                var issuer = authorities.FirstOrDefault(a => a.SubjectName.RawData.AsSpan().SequenceEqual(list.Issuer.RawData) && list.IsSignedBy(a));
                if (issuer is null)
                {
                    continue;
                }

                if (list.IsRevoked(certificate.SerialNumberBytes.Span))
                {
                    throw new UaCertificateException(StatusCodes.BadCertificateRevoked,
                        $"Certificate {CertificateInfo.Describe(certificate)} is revoked by {file}", certificate, null);
                }
            }
        }
    }

    /// <summary>Copies a certificate into <c>rejected/</c> (once) and returns the path.</summary>
    /// <param name="certificate">The certificate.</param>
    /// <returns>The file in <c>rejected/</c>.</returns>
    public string CopyToRejected(X509Certificate2 certificate)
    {
        ArgumentNullException.ThrowIfNull(certificate);
        Directory.CreateDirectory(RejectedDirectory);
        var path = Path.Combine(RejectedDirectory, FileName(certificate));
        if (!File.Exists(path))
        {
            File.WriteAllBytes(path, certificate.RawData);
        }

        return path;
    }

    private static string FileName(X509Certificate2 certificate)
    {
        var name = certificate.GetNameInfo(X509NameType.SimpleName, false);
        var safe = new string([.. name.Select(c => char.IsLetterOrDigit(c) || c is '-' or '_' or '.' ? c : '_')]);
        return $"{(safe.Length == 0 ? "certificate" : safe)}-{certificate.Thumbprint}.der";
    }

    /// <summary>Every certificate in the store, by folder (own, trusted, issuers, rejected).</summary>
    /// <returns>The entries.</returns>
    public IReadOnlyList<UaStoredCertificate> List()
    {
        var result = new List<UaStoredCertificate>();
        foreach (var (folder, directory) in Folders())
        {
            if (!Directory.Exists(directory))
            {
                continue;
            }

            foreach (var file in Directory.EnumerateFiles(directory).Where(IsCertificateFile).Order(StringComparer.Ordinal))
            {
                using var certificate = TryLoad(file);
                if (certificate is not null)
                {
                    result.Add(UaStoredCertificate.From(folder, file, certificate));
                }
            }
        }

        return result;
    }

    /// <summary>Finds certificates by thumbprint (or its start, at least 6 hex digits), file name or subject text.</summary>
    /// <param name="key">The thumbprint, file name or part of the subject.</param>
    /// <returns>The matching entries.</returns>
    public IReadOnlyList<UaStoredCertificate> Find(string key)
    {
        ArgumentException.ThrowIfNullOrEmpty(key);
        return [.. List().Where(c =>
            (key.Length >= 6 && c.Thumbprint.StartsWith(key, StringComparison.OrdinalIgnoreCase)) ||
            string.Equals(Path.GetFileName(c.Path), key, StringComparison.Ordinal) ||
            string.Equals(Path.GetFullPath(key), c.Path, StringComparison.Ordinal) ||
            c.Subject.Contains(key, StringComparison.OrdinalIgnoreCase))];
    }

    /// <summary>
    /// Trusts a certificate: one from <c>rejected/</c> (named as <see cref="Find"/> accepts) is moved to
    /// <c>trusted/</c>; a file outside the store is copied there.
    /// </summary>
    /// <param name="key">A thumbprint, a rejected file's name, or the path of a certificate file.</param>
    /// <returns>The new file in <c>trusted/</c>.</returns>
    /// <exception cref="ArgumentException">Nothing, or more than one certificate, matches.</exception>
    public string Trust(string key)
    {
        ArgumentException.ThrowIfNullOrEmpty(key);
        Directory.CreateDirectory(TrustedDirectory);
        if (File.Exists(key) && !Path.GetFullPath(key).StartsWith(Root + Path.DirectorySeparatorChar, StringComparison.Ordinal))
        {
            using var outside = TryLoad(key) ?? throw new ArgumentException($"{key} is not a DER or PEM certificate");
            var target = Path.Combine(TrustedDirectory, FileName(outside));
            File.WriteAllBytes(target, outside.RawData);
            return target;
        }

        var matches = Find(key).Where(c => c.Folder is "rejected" or "trusted").ToList();
        var candidate = matches.Count switch
        {
            0 => throw new ArgumentException($"No certificate in {RejectedDirectory} matches '{key}'"),
            1 => matches[0],
            _ => throw new ArgumentException($"'{key}' matches {matches.Count} certificates ({string.Join(", ", matches.Select(m => m.Thumbprint))}); give more of the thumbprint"),
        };
        if (candidate.Folder == "trusted")
        {
            return candidate.Path;
        }

        var destination = Path.Combine(TrustedDirectory, Path.GetFileName(candidate.Path));
        File.Move(candidate.Path, destination, overwrite: true);
        return destination;
    }

    /// <summary>Deletes a certificate from <c>trusted/</c>, <c>issuers/</c> or <c>rejected/</c> (never the own certificate).</summary>
    /// <param name="key">A thumbprint or file name.</param>
    /// <returns>The deleted file.</returns>
    /// <exception cref="ArgumentException">Nothing, or more than one certificate, matches.</exception>
    public string Remove(string key)
    {
        var matches = Find(key).Where(c => c.Folder != "own").ToList();
        var candidate = matches.Count switch
        {
            0 => throw new ArgumentException($"No certificate in {Root} (trusted, issuers, rejected) matches '{key}'"),
            1 => matches[0],
            _ => throw new ArgumentException($"'{key}' matches {matches.Count} certificates ({string.Join(", ", matches.Select(m => m.Folder + "/" + m.Thumbprint))}); give more of the thumbprint"),
        };
        File.Delete(candidate.Path);
        return candidate.Path;
    }

    private IEnumerable<(string Folder, string Directory)> Folders() =>
    [
        ("own", OwnDirectory), ("trusted", TrustedDirectory), ("issuers", IssuersDirectory), ("rejected", RejectedDirectory),
    ];

    private static bool IsCertificateFile(string path) =>
        CertificateExtensions.Contains(Path.GetExtension(path), StringComparer.OrdinalIgnoreCase);

    private static List<X509Certificate2> LoadCertificates(string directory)
    {
        if (!Directory.Exists(directory))
        {
            return [];
        }

        var list = new List<X509Certificate2>();
        foreach (var file in Directory.EnumerateFiles(directory).Where(IsCertificateFile))
        {
            var certificate = TryLoad(file);
            if (certificate is not null)
            {
                list.Add(certificate);
            }
        }

        return list;
    }

    /// <summary>Loads a DER or PEM certificate file; null when the file is not one.</summary>
    internal static X509Certificate2? TryLoad(string path)
    {
        try
        {
            var bytes = File.ReadAllBytes(path);
            if (bytes.Length > 0 && bytes[0] == 0x30)
            {
                return X509CertificateLoader.LoadCertificate(bytes);
            }

            return X509Certificate2.CreateFromPem(System.Text.Encoding.ASCII.GetString(bytes));
        }
        catch (Exception e) when (e is CryptographicException or IOException or UnauthorizedAccessException)
        {
            return null;
        }
    }

    /// <summary>A CRL (RFC 5280 §5) read with the BCL's ASN.1 reader: issuer, revoked serial numbers, and the signature check.</summary>
    private sealed class RevocationList
    {
        private readonly byte[] _tbs;
        private readonly byte[] _signature;
        private readonly string _signatureAlgorithm;
        private readonly List<byte[]> _revoked = [];

        private RevocationList(byte[] tbs, string algorithm, byte[] signature, X500DistinguishedName issuer)
        {
            _tbs = tbs;
            _signatureAlgorithm = algorithm;
            _signature = signature;
            Issuer = issuer;
        }

        public X500DistinguishedName Issuer { get; }

        public static RevocationList Parse(byte[] data)
        {
            if (data.Length > 0 && data[0] != 0x30)
            {
                var text = System.Text.Encoding.ASCII.GetString(data);
                var fields = PemEncoding.Find(text);
                data = Convert.FromBase64String(text[fields.Base64Data]);
            }

            var outer = new AsnReader(data, AsnEncodingRules.DER).ReadSequence();
            var tbsBytes = outer.PeekEncodedValue().ToArray();
            var tbs = outer.ReadSequence();
            var algorithm = outer.ReadSequence().ReadObjectIdentifier();
            var signature = outer.ReadBitString(out _);
            if (tbs.PeekTag().HasSameClassAndValue(Asn1Tag.Integer))
            {
                tbs.ReadInteger();
            }

            tbs.ReadSequence(); // signature algorithm
            var issuer = new X500DistinguishedName(tbs.ReadEncodedValue().Span);
            var list = new RevocationList(tbsBytes, algorithm, signature, issuer);
            tbs.ReadEncodedValue(); // thisUpdate
            if (tbs.HasData && !tbs.PeekTag().HasSameClassAndValue(Asn1Tag.Sequence))
            {
                tbs.ReadEncodedValue(); // nextUpdate
            }

            if (tbs.HasData && tbs.PeekTag().HasSameClassAndValue(Asn1Tag.Sequence))
            {
                var revoked = tbs.ReadSequence();
                while (revoked.HasData)
                {
                    var entry = revoked.ReadSequence();
                    list._revoked.Add(entry.ReadIntegerBytes().ToArray());
                }
            }

            return list;
        }

        public bool IsSignedBy(X509Certificate2 issuer)
        {
            using var rsa = issuer.GetRSAPublicKey();
            var hash = _signatureAlgorithm switch
            {
                "1.2.840.113549.1.1.11" => HashAlgorithmName.SHA256,
                "1.2.840.113549.1.1.12" => HashAlgorithmName.SHA384,
                "1.2.840.113549.1.1.13" => HashAlgorithmName.SHA512,
                _ => default,
            };
            return rsa is not null && hash.Name is not null && rsa.VerifyData(_tbs, _signature, hash, RSASignaturePadding.Pkcs1);
        }

        public bool IsRevoked(ReadOnlySpan<byte> serialNumber)
        {
            var serial = new BigInteger(serialNumber, isUnsigned: true, isBigEndian: true);
            return _revoked.Any(r => new BigInteger(r, isUnsigned: false, isBigEndian: true) == serial);
        }
    }
}
