namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// Bytes received from a peer could not be decoded: malformed input (<see cref="StatusCodes.BadDecodingError"/>),
/// a length or nesting depth over a limit (<see cref="StatusCodes.BadEncodingLimitsExceeded"/>), or a transport-level
/// violation (for example <see cref="StatusCodes.BadTcpMessageTooLarge"/>). The only exception the decoder throws.
/// </summary>
public sealed class UaDecodingException : ServiceResultException
{
    /// <summary>Creates the exception.</summary>
    /// <param name="status">The status code that names the failure.</param>
    /// <param name="message">What could not be decoded and what was expected.</param>
    public UaDecodingException(StatusCode status, string message)
        : base(status, message)
    {
    }
}
