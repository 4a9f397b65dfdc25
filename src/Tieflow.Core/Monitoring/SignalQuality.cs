namespace Tieflow.Core.Monitoring;

/// <summary>The quality a source reports with a reading (OPC UA status code severity, or the history file's column).</summary>
public enum SignalQuality
{
    /// <summary>The reading is not usable.</summary>
    Bad = 0,

    /// <summary>The reading may be used with care.</summary>
    Uncertain = 1,

    /// <summary>The reading is good.</summary>
    Good = 2,
}
