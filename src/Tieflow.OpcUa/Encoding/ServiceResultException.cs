namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// An OPC UA operation failed with a status code: a Bad service result from the server, a transport or channel
/// failure, or a local limit. The message says what failed; it never carries a password or token.
/// </summary>
public class ServiceResultException : Exception
{
    /// <summary>Creates the exception for a status code and a message that says what failed.</summary>
    /// <param name="status">The status code (usually Bad).</param>
    /// <param name="message">What failed, naming the item.</param>
    public ServiceResultException(StatusCode status, string message)
        : base(message + " (" + status + ")") => Status = status;

    /// <summary>Creates the exception for a status code, a message and the exception that caused it.</summary>
    /// <param name="status">The status code (usually Bad).</param>
    /// <param name="message">What failed, naming the item.</param>
    /// <param name="innerException">The cause.</param>
    public ServiceResultException(StatusCode status, string message, Exception innerException)
        : base(message + " (" + status + ")", innerException) => Status = status;

    /// <summary>The status code of the failure.</summary>
    public StatusCode Status { get; }
}
