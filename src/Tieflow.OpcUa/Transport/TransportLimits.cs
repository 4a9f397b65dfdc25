namespace Tieflow.OpcUa.Transport;

/// <summary>
/// The UA TCP sizes this side announces in Hello/Acknowledge (OPC 10000-6 §7.1.2.3) and enforces on receipt
/// (docs/opcua.md §3).
/// </summary>
public sealed class TransportLimits
{
    /// <summary>The defaults: 64 KiB buffers, 16 MiB messages, 256 chunks.</summary>
    public static TransportLimits Default { get; } = new();

    /// <summary>Largest chunk this side accepts, headers included (bytes, at least 8192; default 65 536).</summary>
    public int ReceiveBufferSize { get; init; } = 64 * 1024;

    /// <summary>Largest chunk this side sends, headers included (bytes, at least 8192; default 65 536).</summary>
    public int SendBufferSize { get; init; } = 64 * 1024;

    /// <summary>Largest assembled message body this side accepts (bytes; default 16 MiB).</summary>
    public int MaxMessageSize { get; init; } = 16 * 1024 * 1024;

    /// <summary>Most chunks of one message this side accepts (default 256).</summary>
    public int MaxChunkCount { get; init; } = 256;

    /// <summary>Checks the values.</summary>
    /// <exception cref="ArgumentException">A buffer is below 8192 bytes, or a size or count is not positive.</exception>
    public void Validate()
    {
        if (ReceiveBufferSize < 8192)
        {
            throw new ArgumentException($"TransportLimits.ReceiveBufferSize is {ReceiveBufferSize}; expected at least 8192 bytes.");
        }

        if (SendBufferSize < 8192)
        {
            throw new ArgumentException($"TransportLimits.SendBufferSize is {SendBufferSize}; expected at least 8192 bytes.");
        }

        if (MaxMessageSize <= 0 || MaxChunkCount <= 0)
        {
            throw new ArgumentException($"TransportLimits.MaxMessageSize ({MaxMessageSize}) and MaxChunkCount ({MaxChunkCount}) must be positive.");
        }
    }
}
