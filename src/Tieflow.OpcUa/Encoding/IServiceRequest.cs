namespace Tieflow.OpcUa.Encoding;

/// <summary>A service request: a structure that starts with a <see cref="Encoding.RequestHeader"/>.</summary>
internal interface IServiceRequest : IEncodeable
{
    RequestHeader RequestHeader { get; set; }
}
