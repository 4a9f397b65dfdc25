namespace Tieflow.OpcUa.Server;

/// <summary>A validated DataChangeFilter (OPC 10000-4 §7.22.2).</summary>
/// <param name="Trigger">0 Status, 1 StatusValue, 2 StatusValueTimestamp.</param>
/// <param name="DeadbandType">0 None, 1 Absolute, 2 Percent.</param>
/// <param name="DeadbandValue">The deadband as requested (engineering units, or percent of the EURange span).</param>
/// <param name="AbsoluteLimit">The deadband in engineering units (percent converted with the EURange), or null for none.</param>
internal sealed record DataChangeSettings(int Trigger, uint DeadbandType, double DeadbandValue, double? AbsoluteLimit);
