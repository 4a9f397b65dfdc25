namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// Limits the decoder checks before allocating (docs/opcua.md §3). Input over a limit is refused with
/// <see cref="StatusCodes.BadEncodingLimitsExceeded"/>.
/// </summary>
public sealed class EncodingLimits
{
    /// <summary>The defaults: 16 MiB strings, byte strings and messages, 1 048 576 array elements, nesting 100.</summary>
    public static EncodingLimits Default { get; } = new();

    /// <summary>Largest String or XmlElement in bytes (default 16 MiB).</summary>
    public int MaxStringLength { get; init; } = 16 * 1024 * 1024;

    /// <summary>Largest ByteString in bytes (default 16 MiB).</summary>
    public int MaxByteStringLength { get; init; } = 16 * 1024 * 1024;

    /// <summary>Largest number of array elements (default 1 048 576).</summary>
    public int MaxArrayLength { get; init; } = 1024 * 1024;

    /// <summary>Deepest nesting of Variant, ExtensionObject, DataValue and DiagnosticInfo (default 100).</summary>
    public int MaxNestingDepth { get; init; } = 100;

    /// <summary>Largest assembled message in bytes (default 16 MiB).</summary>
    public int MaxMessageSize { get; init; } = 16 * 1024 * 1024;
}
