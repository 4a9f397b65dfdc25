namespace Tieflow.Core.Monitoring.Signals;

/// <summary>Why a tag's reading is left out of the analysis.</summary>
public enum SignalProblem
{
    /// <summary>No problem: the reading is used.</summary>
    None,

    /// <summary>The source reports bad quality.</summary>
    BadQuality,

    /// <summary>The reading lies outside the transmitter's range.</summary>
    OutOfRange,

    /// <summary>No update for several update intervals.</summary>
    Stale,

    /// <summary>A noisy signal has stopped changing: its spread is far below its stated sigma.</summary>
    Frozen,

    /// <summary>The reading lies far from its recent neighbours (robust z-score).</summary>
    Spike,
}
