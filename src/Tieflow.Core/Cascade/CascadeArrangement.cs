namespace Tieflow.Core.Cascade;

/// <summary>How the stages of a cascade are connected.</summary>
public enum CascadeArrangement
{
    /// <summary>Feed enters stage 1 and the final raffinate leaves stage N; solvent enters stage N and the extract leaves stage 1.</summary>
    Countercurrent,

    /// <summary>The raffinate passes from stage to stage; every stage gets the solvent stream as given; the extracts are combined.</summary>
    Crosscurrent,
}
