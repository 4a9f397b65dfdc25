namespace Tieflow.Core.Monitoring;

/// <summary>One reading of one instrument: the analysis's input.</summary>
/// <param name="Tag">The instrument's tag.</param>
/// <param name="Time">Source timestamp (UTC).</param>
/// <param name="Value">The reading in the tag's engineering unit.</param>
/// <param name="Quality">The quality reported with it.</param>
public readonly record struct SignalSample(string Tag, DateTimeOffset Time, double Value, SignalQuality Quality);
