using System.Buffers.Binary;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Security;

/// <summary>
/// The security of one secure channel (OPC 10000-6 §6.7.2-6.7.5): the policy and mode, this side's certificate and
/// key, the peer's certificate, and the symmetric keys of every live token. Protects outgoing chunks (asymmetric
/// for OPN: signed with our key, encrypted with the peer's; symmetric for MSG/CLO: HMAC-SHA256 and, under
/// SignAndEncrypt, AES-CBC) and checks incoming ones (decrypt, verify the signature, then the padding). Every check
/// that fails throws <see cref="UaDecodingException"/> with BadSecurityChecksFailed (the caller closes the channel);
/// messages never contain key material.
/// </summary>
internal sealed class ChannelSecurity
{
    private readonly Dictionary<uint, TokenKeys> _keys = [];
    private readonly Lock _lock = new();

    private ChannelSecurity(bool isClient, SecurityPolicy? policy, MessageSecurityMode mode, X509Certificate2? local, X509Certificate2? remote)
    {
        IsClient = isClient;
        Policy = policy;
        Mode = mode;
        SetLocal(local);
        if (remote is not null)
        {
            SetRemote(remote);
        }
    }

    public bool IsClient { get; }

    /// <summary>Null for SecurityPolicy None.</summary>
    public SecurityPolicy? Policy { get; private set; }

    public MessageSecurityMode Mode { get; set; }

    public string PolicyUri => Policy?.Uri ?? SecurityPolicy.NoneUri;

    public bool IsSecure => Policy is not null;

    public X509Certificate2? LocalCertificate { get; private set; }

    public byte[]? LocalCertificateDer { get; private set; }

    public X509Certificate2? RemoteCertificate { get; private set; }

    public byte[]? RemoteCertificateDer { get; private set; }

    private RSA? LocalKey { get; set; }

    private RSA? RemoteKey { get; set; }

    private byte[]? LocalThumbprint { get; set; }

    private byte[]? RemoteThumbprint { get; set; }

    /// <summary>A channel without security.</summary>
    public static ChannelSecurity None(bool isClient) => new(isClient, null, MessageSecurityMode.None, null, null);

    /// <summary>A client channel: the policy, mode and both certificates are known before the OPN.</summary>
    public static ChannelSecurity ForClient(SecurityPolicy policy, MessageSecurityMode mode, X509Certificate2 own, X509Certificate2 server) =>
        new(true, policy, mode, own, server);

    /// <summary>A server channel: the policy, mode and client certificate come with the first OPN (<see cref="SetPolicy"/>).</summary>
    public static ChannelSecurity ForServer(X509Certificate2? own) => new(false, null, MessageSecurityMode.None, own, null);

    public void SetPolicy(SecurityPolicy? policy, X509Certificate2? remote)
    {
        Policy = policy;
        if (remote is not null)
        {
            SetRemote(remote);
        }
    }

    private void SetLocal(X509Certificate2? local)
    {
        LocalCertificate = local;
        LocalCertificateDer = local?.RawData;
        LocalKey = local?.GetRSAPrivateKey();
        LocalThumbprint = local is null ? null : SHA1.HashData(local.RawData);
    }

    private void SetRemote(X509Certificate2 remote)
    {
        RemoteCertificate = remote;
        RemoteCertificateDer = remote.RawData;
        RemoteKey = remote.GetRSAPublicKey() ?? throw new UaDecodingException(StatusCodes.BadCertificateInvalid, $"certificate {remote.Subject} has no RSA key");
        RemoteThumbprint = SHA1.HashData(remote.RawData);
    }

    /// <summary>The local certificate's SHA-1 thumbprint as the peer should name it.</summary>
    public bool IsLocalThumbprint(ReadOnlySpan<byte> thumbprint) =>
        LocalThumbprint is not null && thumbprint.SequenceEqual(LocalThumbprint);

    /// <summary>Writes the asymmetric security header (policy URI, sender certificate, receiver thumbprint).</summary>
    public byte[] AsymmetricSecurityHeader()
    {
        var uri = System.Text.Encoding.UTF8.GetBytes(PolicyUri);
        var cert = IsSecure ? LocalCertificateDer! : null;
        var thumb = IsSecure ? RemoteThumbprint! : null;
        var buffer = new byte[4 + uri.Length + 4 + (cert?.Length ?? 0) + 4 + (thumb?.Length ?? 0)];
        var span = buffer.AsSpan();
        BinaryPrimitives.WriteInt32LittleEndian(span, uri.Length);
        uri.CopyTo(span[4..]);
        var p = 4 + uri.Length;
        BinaryPrimitives.WriteInt32LittleEndian(span[p..], cert?.Length ?? -1);
        cert?.CopyTo(span[(p + 4)..]);
        p += 4 + (cert?.Length ?? 0);
        BinaryPrimitives.WriteInt32LittleEndian(span[p..], thumb?.Length ?? -1);
        thumb?.CopyTo(span[(p + 4)..]);
        return buffer;
    }

    /// <summary>Derives and keeps the keys of a token from the two OPN nonces (OPC 10000-6 §6.7.5).</summary>
    public void AddToken(uint tokenId, ReadOnlySpan<byte> clientNonce, ReadOnlySpan<byte> serverNonce)
    {
        if (Policy is null || Mode == MessageSecurityMode.None)
        {
            return;
        }

        // Client keys: secret = ServerNonce, seed = ClientNonce; server keys the other way round.
        var clientKeys = SymmetricKeys.Derive(Policy, serverNonce, clientNonce);
        var serverKeys = SymmetricKeys.Derive(Policy, clientNonce, serverNonce);
        lock (_lock)
        {
            _keys[tokenId] = IsClient ? new TokenKeys(clientKeys, serverKeys) : new TokenKeys(serverKeys, clientKeys);
        }
    }

    /// <summary>Forgets the keys of every token that is no longer accepted.</summary>
    public void PruneTokens(Func<uint, bool> isAccepted)
    {
        lock (_lock)
        {
            foreach (var id in _keys.Keys.Where(id => !isAccepted(id)).ToList())
            {
                _keys.Remove(id);
            }
        }
    }

    public bool HasKeys(uint tokenId)
    {
        lock (_lock)
        {
            return _keys.ContainsKey(tokenId);
        }
    }

    private TokenKeys Keys(uint tokenId)
    {
        lock (_lock)
        {
            return _keys.TryGetValue(tokenId, out var keys)
                ? keys
                : throw new UaDecodingException(StatusCodes.BadSecureChannelTokenUnknown, $"no keys for security token {tokenId}");
        }
    }

    /// <summary>Largest body that fits in one chunk of <paramref name="bufferSize"/> bytes after a header of <paramref name="headerLength"/> bytes.</summary>
    public int MaxBodySize(bool asymmetric, int bufferSize, int headerLength)
    {
        if (Policy is null)
        {
            return bufferSize - headerLength - 8;
        }

        if (asymmetric)
        {
            var cipherBlock = RemoteKey!.KeySize / 8;
            var plainBlock = cipherBlock - Policy.OaepOverhead;
            var blocks = (bufferSize - headerLength) / cipherBlock;
            return (blocks * plainBlock) - 8 - (LocalKey!.KeySize / 8) - (cipherBlock > 256 ? 2 : 1);
        }

        if (Mode == MessageSecurityMode.Sign)
        {
            return bufferSize - headerLength - 8 - Policy.SymmetricSignatureLength;
        }

        var symBlocks = (bufferSize - headerLength) / Policy.BlockSize;
        return (symBlocks * Policy.BlockSize) - 8 - Policy.SymmetricSignatureLength - 1;
    }

    /// <summary>
    /// Builds one chunk: <paramref name="header"/> (message header with a size to fill, and the security header)
    /// followed by the protected sequence header and body.
    /// </summary>
    public byte[] Protect(bool asymmetric, uint tokenId, ReadOnlySpan<byte> header, ReadOnlySpan<byte> sequenceAndBody)
    {
        if (Policy is null || (!asymmetric && Mode == MessageSecurityMode.None))
        {
            var plain = new byte[header.Length + sequenceAndBody.Length];
            header.CopyTo(plain);
            sequenceAndBody.CopyTo(plain.AsSpan(header.Length));
            BinaryPrimitives.WriteInt32LittleEndian(plain.AsSpan(4), plain.Length);
            return plain;
        }

        return asymmetric ? ProtectAsymmetric(header, sequenceAndBody) : ProtectSymmetric(Keys(tokenId).Send, header, sequenceAndBody);
    }

    private byte[] ProtectAsymmetric(ReadOnlySpan<byte> header, ReadOnlySpan<byte> sequenceAndBody)
    {
        var policy = Policy!;
        var signatureLength = LocalKey!.KeySize / 8;
        var cipherBlock = RemoteKey!.KeySize / 8;
        var plainBlock = cipherBlock - policy.OaepOverhead;
        var extra = cipherBlock > 256;
        var content = sequenceAndBody.Length + (extra ? 2 : 1) + signatureLength;
        var padding = (plainBlock - (content % plainBlock)) % plainBlock;
        var plainLength = content + padding;
        var blocks = plainLength / plainBlock;
        var total = header.Length + (blocks * cipherBlock);

        // Header + plaintext (sequence, body, padding) to sign, then the signature appended.
        var signed = new byte[header.Length + plainLength];
        header.CopyTo(signed);
        BinaryPrimitives.WriteInt32LittleEndian(signed.AsSpan(4), total);
        var p = header.Length;
        sequenceAndBody.CopyTo(signed.AsSpan(p));
        p += sequenceAndBody.Length;
        WritePadding(signed.AsSpan(p, plainLength - sequenceAndBody.Length - signatureLength), padding, extra);
        var signature = LocalKey.SignData(signed.AsSpan(0, signed.Length - signatureLength), HashAlgorithmName.SHA256, policy.AsymmetricSignature);
        signature.CopyTo(signed.AsSpan(signed.Length - signatureLength));

        var chunk = new byte[total];
        signed.AsSpan(0, header.Length).CopyTo(chunk);
        for (var i = 0; i < blocks; i++)
        {
            var ok = RemoteKey.TryEncrypt(signed.AsSpan(header.Length + (i * plainBlock), plainBlock), chunk.AsSpan(header.Length + (i * cipherBlock), cipherBlock),
                policy.AsymmetricEncryption, out var written);
            if (!ok || written != cipherBlock)
            {
                throw new CryptographicException("RSA encryption produced an unexpected block size");
            }
        }

        CryptographicOperations.ZeroMemory(signed);
        return chunk;
    }

    private byte[] ProtectSymmetric(SymmetricKeys keys, ReadOnlySpan<byte> header, ReadOnlySpan<byte> sequenceAndBody)
    {
        var policy = Policy!;
        var signatureLength = policy.SymmetricSignatureLength;
        if (Mode == MessageSecurityMode.Sign)
        {
            var chunk = new byte[header.Length + sequenceAndBody.Length + signatureLength];
            header.CopyTo(chunk);
            BinaryPrimitives.WriteInt32LittleEndian(chunk.AsSpan(4), chunk.Length);
            sequenceAndBody.CopyTo(chunk.AsSpan(header.Length));
            keys.Sign(chunk.AsSpan(0, chunk.Length - signatureLength), chunk.AsSpan(chunk.Length - signatureLength));
            return chunk;
        }

        var content = sequenceAndBody.Length + 1 + signatureLength;
        var padding = (policy.BlockSize - (content % policy.BlockSize)) % policy.BlockSize;
        var plainLength = content + padding;
        var result = new byte[header.Length + plainLength];
        header.CopyTo(result);
        BinaryPrimitives.WriteInt32LittleEndian(result.AsSpan(4), result.Length);
        sequenceAndBody.CopyTo(result.AsSpan(header.Length));
        WritePadding(result.AsSpan(header.Length + sequenceAndBody.Length, padding + 1), padding, false);
        keys.Sign(result.AsSpan(0, result.Length - signatureLength), result.AsSpan(result.Length - signatureLength));
        var plain = result.AsSpan(header.Length);
        keys.Encrypt(plain, plain);
        return result;
    }

    private static void WritePadding(Span<byte> destination, int padding, bool extra)
    {
        // PaddingSize, Padding[PaddingSize] (each byte = PaddingSize), [ExtraPaddingSize] (OPC 10000-6 §6.7.2.5).
        destination.Fill((byte)(padding & 0xFF));
        if (extra)
        {
            destination[^1] = (byte)(padding >> 8);
        }
    }

    /// <summary>
    /// Checks one received chunk and returns its plaintext sequence header and body. <paramref name="headerLength"/>
    /// is the length of the message and security headers, which stay in clear.
    /// </summary>
    public ArraySegment<byte> Unprotect(bool asymmetric, uint tokenId, byte[] frame, int headerLength, int frameLength)
    {
        if (Policy is null || (!asymmetric && Mode == MessageSecurityMode.None))
        {
            return new ArraySegment<byte>(frame, headerLength, frameLength - headerLength);
        }

        return asymmetric ? UnprotectAsymmetric(frame, headerLength, frameLength) : UnprotectSymmetric(Keys(tokenId).Receive, frame, headerLength, frameLength);
    }

    private ArraySegment<byte> UnprotectAsymmetric(byte[] frame, int headerLength, int frameLength)
    {
        var policy = Policy!;
        var cipherBlock = LocalKey!.KeySize / 8;
        var plainBlock = cipherBlock - policy.OaepOverhead;
        var encrypted = frameLength - headerLength;
        if (encrypted <= 0 || encrypted % cipherBlock != 0)
        {
            throw Failed("the encrypted part of the OPN chunk is not a whole number of RSA blocks");
        }

        var blocks = encrypted / cipherBlock;
        var signed = new byte[headerLength + (blocks * plainBlock)];
        frame.AsSpan(0, headerLength).CopyTo(signed);
        var p = headerLength;
        for (var i = 0; i < blocks; i++)
        {
            bool ok;
            int written;
            try
            {
                ok = LocalKey.TryDecrypt(frame.AsSpan(headerLength + (i * cipherBlock), cipherBlock), signed.AsSpan(p), policy.AsymmetricEncryption, out written);
            }
            catch (CryptographicException)
            {
                throw Failed("the OPN chunk could not be decrypted");
            }

            if (!ok)
            {
                throw Failed("the OPN chunk could not be decrypted");
            }

            p += written;
        }

        var signatureLength = RemoteKey!.KeySize / 8;
        var end = p - signatureLength;
        if (end < headerLength + 8 + 1)
        {
            throw Failed("the OPN chunk is too short for its signature");
        }

        bool valid;
        try
        {
            valid = RemoteKey.VerifyData(signed.AsSpan(0, end), signed.AsSpan(end, signatureLength), HashAlgorithmName.SHA256, policy.AsymmetricSignature);
        }
        catch (CryptographicException)
        {
            valid = false;
        }

        if (!valid)
        {
            throw Failed("the OPN signature is not valid");
        }

        var bodyEnd = CheckPadding(signed, headerLength, end, cipherBlock > 256);
        return new ArraySegment<byte>(signed, headerLength, bodyEnd - headerLength);
    }

    private ArraySegment<byte> UnprotectSymmetric(SymmetricKeys keys, byte[] frame, int headerLength, int frameLength)
    {
        var policy = Policy!;
        var signatureLength = policy.SymmetricSignatureLength;
        if (Mode == MessageSecurityMode.Sign)
        {
            var signedEnd = frameLength - signatureLength;
            if (signedEnd < headerLength + 8 || !keys.Verify(frame.AsSpan(0, signedEnd), frame.AsSpan(signedEnd, signatureLength)))
            {
                throw Failed("the chunk signature is not valid");
            }

            return new ArraySegment<byte>(frame, headerLength, signedEnd - headerLength);
        }

        var encrypted = frameLength - headerLength;
        if (encrypted < policy.BlockSize * 3 || encrypted % policy.BlockSize != 0)
        {
            throw Failed("the encrypted part of the chunk is not a whole number of AES blocks");
        }

        // Decrypted in place: the frame buffer belongs to this chunk.
        var plain = frame.AsSpan(headerLength, encrypted);
        keys.Decrypt(plain, plain);
        var end = frameLength - signatureLength;
        if (!keys.Verify(frame.AsSpan(0, end), frame.AsSpan(end, signatureLength)))
        {
            throw Failed("the chunk signature is not valid");
        }

        var bodyEnd = CheckPadding(frame, headerLength, end, false);
        return new ArraySegment<byte>(frame, headerLength, bodyEnd - headerLength);
    }

    /// <summary>Checks the padding before <paramref name="end"/> and returns where the body ends.</summary>
    private static int CheckPadding(byte[] buffer, int start, int end, bool extra)
    {
        int count;
        int sizeAt;
        if (extra)
        {
            var low = buffer[end - 2];
            count = (buffer[end - 1] << 8) | low;
            sizeAt = end - 2 - count;
        }
        else
        {
            count = buffer[end - 1];
            sizeAt = end - 1 - count;
        }

        if (sizeAt < start + 8)
        {
            throw Failed("the padding is longer than the chunk");
        }

        var value = (byte)(count & 0xFF);
        for (var i = sizeAt; i < sizeAt + 1 + count; i++)
        {
            if (buffer[i] != value)
            {
                throw Failed("the padding is malformed");
            }
        }

        return sizeAt;
    }

    /// <summary>Signs the concatenated <paramref name="parts"/> with this side's private key (CreateSession/ActivateSession signatures).</summary>
    public SignatureData SignWithLocalKey(params ReadOnlySpan<byte[]> parts)
    {
        var data = Concat(parts);
        return new SignatureData
        {
            Algorithm = Policy!.AsymmetricSignatureUri,
            Signature = LocalKey!.SignData(data, HashAlgorithmName.SHA256, Policy.AsymmetricSignature),
        };
    }

    /// <summary>Checks a signature made with the peer's private key.</summary>
    public bool VerifyWithRemoteKey(SignatureData? signature, params ReadOnlySpan<byte[]> parts)
    {
        if (signature?.Signature is null || !string.Equals(signature.Algorithm, Policy!.AsymmetricSignatureUri, StringComparison.Ordinal))
        {
            return false;
        }

        try
        {
            return RemoteKey!.VerifyData(Concat(parts), signature.Signature, HashAlgorithmName.SHA256, Policy.AsymmetricSignature);
        }
        catch (CryptographicException)
        {
            return false;
        }
    }

    internal static byte[] Concat(ReadOnlySpan<byte[]> parts)
    {
        var length = 0;
        foreach (var part in parts)
        {
            length += part.Length;
        }

        var data = new byte[length];
        var p = 0;
        foreach (var part in parts)
        {
            part.CopyTo(data, p);
            p += part.Length;
        }

        return data;
    }

    private static UaDecodingException Failed(string what) => new(StatusCodes.BadSecurityChecksFailed, what);

    private sealed record TokenKeys(SymmetricKeys Send, SymmetricKeys Receive);
}
