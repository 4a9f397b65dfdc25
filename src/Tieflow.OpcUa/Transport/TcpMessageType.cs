namespace Tieflow.OpcUa.Transport;

/// <summary>The three-letter message types of UA TCP and UA Secure Conversation (OPC 10000-6 §7.1.2.2, §6.7.2.2), as little-endian 24-bit values.</summary>
internal static class TcpMessageType
{
    public const uint Hello = 'H' | ('E' << 8) | ('L' << 16);
    public const uint Acknowledge = 'A' | ('C' << 8) | ('K' << 16);
    public const uint Error = 'E' | ('R' << 8) | ('R' << 16);
    public const uint ReverseHello = 'R' | ('H' << 8) | ('E' << 16);
    public const uint OpenSecureChannel = 'O' | ('P' << 8) | ('N' << 16);
    public const uint Message = 'M' | ('S' << 8) | ('G' << 16);
    public const uint CloseSecureChannel = 'C' | ('L' << 8) | ('O' << 16);

    public const byte Final = (byte)'F';
    public const byte Intermediate = (byte)'C';
    public const byte Abort = (byte)'A';

    /// <summary>Size of the common header: type (3), chunk type (1), message size (4).</summary>
    public const int HeaderSize = 8;

    public static bool IsKnown(uint type) =>
        type is Hello or Acknowledge or Error or ReverseHello or OpenSecureChannel or Message or CloseSecureChannel;

    public static bool IsSecureConversation(uint type) => type is OpenSecureChannel or Message or CloseSecureChannel;

    public static string Name(uint type) =>
        new(new[] { (char)(type & 0xFF), (char)((type >> 8) & 0xFF), (char)((type >> 16) & 0xFF) }.Select(c => c is >= ' ' and <= '~' ? c : '?').ToArray());
}
