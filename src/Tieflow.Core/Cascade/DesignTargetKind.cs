namespace Tieflow.Core.Cascade;

/// <summary>What a design target specifies.</summary>
public enum DesignTargetKind
{
    /// <summary>The solute fraction of the final raffinate (at most this).</summary>
    RaffinateFraction,

    /// <summary>The fraction of the feed's solute that does not leave in the final raffinate (at least this).</summary>
    Recovery,
}
