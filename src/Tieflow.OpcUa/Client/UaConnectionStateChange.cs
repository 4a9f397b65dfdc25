using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>A change of the client's connection state.</summary>
/// <param name="State">The new state.</param>
/// <param name="Time">When it changed (UTC, from the client's TimeProvider).</param>
/// <param name="Reason">Why (the failure that caused a reconnect, or Good).</param>
/// <param name="Message">A readable explanation (never contains a password).</param>
public sealed record UaConnectionStateChange(UaConnectionState State, DateTime Time, StatusCode Reason, string Message);
