namespace Tieflow.Core.Scenarios;

/// <summary>Which phase is carried over in an entrainment fault.</summary>
public enum EntrainedPhase
{
    /// <summary>Raffinate-phase droplets carried in the extract leaving the stage.</summary>
    Raffinate,

    /// <summary>Extract-phase droplets carried in the raffinate leaving the stage (a solvent loss).</summary>
    Extract,
}
