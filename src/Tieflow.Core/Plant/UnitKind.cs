namespace Tieflow.Core.Plant;

/// <summary>How an extraction unit is built.</summary>
public enum UnitKind
{
    /// <summary>A train of mixer-settlers, one stage each; interstage streams may be measured.</summary>
    MixerSettler,

    /// <summary>An extraction column described by its theoretical stages; only the four terminal streams are measured.</summary>
    Column,
}
