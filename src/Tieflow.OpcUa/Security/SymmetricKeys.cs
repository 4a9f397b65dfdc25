using System.Security.Cryptography;

namespace Tieflow.OpcUa.Security;

/// <summary>
/// The keys one side of a secure channel uses for one token: HMAC-SHA256 signing key, AES key and IV, derived with
/// P_SHA256 (OPC 10000-6 §6.7.5). One instance is used by one direction only (sends are serialised, receives run on
/// one loop), so the AES object is not shared between threads.
/// </summary>
internal sealed class SymmetricKeys
{
    private readonly byte[] _signingKey;
    private readonly byte[] _iv;
    private readonly Aes _aes;

    private SymmetricKeys(byte[] signingKey, byte[] encryptingKey, byte[] iv)
    {
        _signingKey = signingKey;
        _iv = iv;
        _aes = Aes.Create();
        _aes.Key = encryptingKey;
        CryptographicOperations.ZeroMemory(encryptingKey);
    }

    public static SymmetricKeys Derive(SecurityPolicy policy, ReadOnlySpan<byte> secret, ReadOnlySpan<byte> seed)
    {
        var output = new byte[policy.SigningKeyLength + policy.EncryptionKeyLength + policy.BlockSize];
        PSha256.Derive(secret, seed, output);
        var keys = new SymmetricKeys(
            output[..policy.SigningKeyLength],
            output[policy.SigningKeyLength..(policy.SigningKeyLength + policy.EncryptionKeyLength)],
            output[(policy.SigningKeyLength + policy.EncryptionKeyLength)..]);
        CryptographicOperations.ZeroMemory(output);
        return keys;
    }

    public void Sign(ReadOnlySpan<byte> data, Span<byte> signature) => HMACSHA256.HashData(_signingKey, data, signature);

    public bool Verify(ReadOnlySpan<byte> data, ReadOnlySpan<byte> signature)
    {
        Span<byte> expected = stackalloc byte[32];
        HMACSHA256.HashData(_signingKey, data, expected);
        return CryptographicOperations.FixedTimeEquals(expected, signature);
    }

    public void Encrypt(ReadOnlySpan<byte> plain, Span<byte> destination) => _aes.EncryptCbc(plain, _iv, destination, PaddingMode.None);

    public void Decrypt(ReadOnlySpan<byte> cipher, Span<byte> destination) => _aes.DecryptCbc(cipher, _iv, destination, PaddingMode.None);
}
