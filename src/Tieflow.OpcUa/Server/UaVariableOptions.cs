namespace Tieflow.OpcUa.Server;

/// <summary>Optional settings of a variable added with <see cref="UaServer.AddVariable"/>.</summary>
public sealed class UaVariableOptions
{
    /// <summary>
    /// The EURange (low, high) in engineering units: when set the variable is an AnalogItem with an EURange property,
    /// so that clients can use percent deadbands on it.
    /// </summary>
    public (double Low, double High)? EngineeringUnitsRange { get; init; }

    /// <summary>The fastest sampling the variable supports (default zero: any rate the server grants).</summary>
    public TimeSpan MinimumSamplingInterval { get; init; } = TimeSpan.Zero;

    /// <summary>Description shown by browsers; null for none.</summary>
    public string? Description { get; init; }
}
