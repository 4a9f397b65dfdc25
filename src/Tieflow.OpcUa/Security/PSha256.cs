using System.Security.Cryptography;

namespace Tieflow.OpcUa.Security;

/// <summary>The P_SHA256 pseudo-random function of RFC 5246 §5, used for secure channel key derivation (OPC 10000-6 §6.7.5).</summary>
internal static class PSha256
{
    /// <summary>Fills <paramref name="output"/> with P_SHA256(secret, seed).</summary>
    public static void Derive(ReadOnlySpan<byte> secret, ReadOnlySpan<byte> seed, Span<byte> output)
    {
        const int hashLength = 32;
        Span<byte> a = stackalloc byte[hashLength];
        Span<byte> block = stackalloc byte[hashLength];
        var input = new byte[hashLength + seed.Length];
        // A(1) = HMAC(secret, seed)
        HMACSHA256.HashData(secret, seed, a);
        var written = 0;
        while (written < output.Length)
        {
            a.CopyTo(input);
            seed.CopyTo(input.AsSpan(hashLength));
            HMACSHA256.HashData(secret, input, block);
            var n = Math.Min(hashLength, output.Length - written);
            block[..n].CopyTo(output[written..]);
            written += n;
            // A(i+1) = HMAC(secret, A(i))
            HMACSHA256.HashData(secret, a, block);
            block.CopyTo(a);
        }

        CryptographicOperations.ZeroMemory(input);
        CryptographicOperations.ZeroMemory(a);
    }
}
