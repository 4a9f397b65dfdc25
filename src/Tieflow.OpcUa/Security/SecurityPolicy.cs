using System.Security.Cryptography;

namespace Tieflow.OpcUa.Security;

/// <summary>
/// The parameters of one RSA security policy (OPC 10000-7 profiles; OPC 10000-6 §6.7): asymmetric signature and
/// encryption, symmetric key lengths for P_SHA256 key derivation, nonce length and RSA key sizes.
/// </summary>
internal sealed class SecurityPolicy
{
    public const string NoneUri = "http://opcfoundation.org/UA/SecurityPolicy#None";
    public const string Basic256Sha256Uri = "http://opcfoundation.org/UA/SecurityPolicy#Basic256Sha256";
    public const string Aes128Sha256RsaOaepUri = "http://opcfoundation.org/UA/SecurityPolicy#Aes128_Sha256_RsaOaep";
    public const string Aes256Sha256RsaPssUri = "http://opcfoundation.org/UA/SecurityPolicy#Aes256_Sha256_RsaPss";

    private const string RsaSha256 = "http://www.w3.org/2001/04/xmldsig-more#rsa-sha256";
    private const string RsaPssSha256 = "http://opcfoundation.org/UA/security/rsa-pss-sha2-256";
    private const string RsaOaep = "http://www.w3.org/2001/04/xmlenc#rsa-oaep";
    private const string RsaOaepSha256 = "http://opcfoundation.org/UA/security/rsa-oaep-sha2-256";

    public static SecurityPolicy Basic256Sha256 { get; } = new("Basic256Sha256", Basic256Sha256Uri, 32, RSAEncryptionPadding.OaepSHA1, RsaOaep, RSASignaturePadding.Pkcs1, RsaSha256, 3);

    public static SecurityPolicy Aes128Sha256RsaOaep { get; } = new("Aes128_Sha256_RsaOaep", Aes128Sha256RsaOaepUri, 16, RSAEncryptionPadding.OaepSHA1, RsaOaep, RSASignaturePadding.Pkcs1, RsaSha256, 2);

    public static SecurityPolicy Aes256Sha256RsaPss { get; } = new("Aes256_Sha256_RsaPss", Aes256Sha256RsaPssUri, 32, RSAEncryptionPadding.OaepSHA256, RsaOaepSha256, RSASignaturePadding.Pss, RsaPssSha256, 4);

    /// <summary>All supported policies, most secure first.</summary>
    public static IReadOnlyList<SecurityPolicy> All { get; } = [Aes256Sha256RsaPss, Basic256Sha256, Aes128Sha256RsaOaep];

    private SecurityPolicy(string name, string uri, int encryptionKeyLength, RSAEncryptionPadding encryption, string encryptionUri,
        RSASignaturePadding signature, string signatureUri, int rank)
    {
        Name = name;
        Uri = uri;
        EncryptionKeyLength = encryptionKeyLength;
        AsymmetricEncryption = encryption;
        AsymmetricEncryptionUri = encryptionUri;
        AsymmetricSignature = signature;
        AsymmetricSignatureUri = signatureUri;
        Rank = rank;
    }

    /// <summary>The short name (Basic256Sha256, ...).</summary>
    public string Name { get; }

    public string Uri { get; }

    /// <summary>HMAC-SHA256 key length (bytes).</summary>
    public int SigningKeyLength => 32;

    /// <summary>AES key length (bytes): 16 for AES-128, 32 for AES-256.</summary>
    public int EncryptionKeyLength { get; }

    /// <summary>AES block and IV length (bytes).</summary>
    public int BlockSize => 16;

    /// <summary>HMAC-SHA256 output (bytes).</summary>
    public int SymmetricSignatureLength => 32;

    /// <summary>Secure channel and session nonce length (bytes).</summary>
    public int NonceLength => 32;

    public int MinKeyBits => 2048;

    public int MaxKeyBits => 4096;

    public RSAEncryptionPadding AsymmetricEncryption { get; }

    /// <summary>The algorithm URI of the user token encryption.</summary>
    public string AsymmetricEncryptionUri { get; }

    public RSASignaturePadding AsymmetricSignature { get; }

    /// <summary>The algorithm URI of CreateSession/ActivateSession signatures.</summary>
    public string AsymmetricSignatureUri { get; }

    /// <summary>Higher is more secure (for endpoint choice).</summary>
    public int Rank { get; }

    /// <summary>OAEP overhead of one RSA block: 2 + 2 × hash length (42 for SHA-1, 66 for SHA-256).</summary>
    public int OaepOverhead => AsymmetricEncryption == RSAEncryptionPadding.OaepSHA256 ? 66 : 42;

    public static SecurityPolicy? FromUri(string? uri) =>
        All.FirstOrDefault(p => string.Equals(p.Uri, uri, StringComparison.Ordinal));

    public static SecurityPolicy? FromName(string name) =>
        All.FirstOrDefault(p => string.Equals(p.Name, name, StringComparison.OrdinalIgnoreCase));

    public override string ToString() => Name;
}
