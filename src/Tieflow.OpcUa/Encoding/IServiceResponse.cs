namespace Tieflow.OpcUa.Encoding;

/// <summary>A service response: a structure that starts with a <see cref="Encoding.ResponseHeader"/>.</summary>
internal interface IServiceResponse : IEncodeable
{
    ResponseHeader ResponseHeader { get; set; }
}
