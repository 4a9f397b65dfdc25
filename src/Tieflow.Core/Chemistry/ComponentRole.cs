namespace Tieflow.Core.Chemistry;

/// <summary>What a component does in an extraction: the solute is transferred from the diluent (feed carrier) into the solvent.</summary>
public enum ComponentRole
{
    /// <summary>The component to be extracted.</summary>
    Solute,

    /// <summary>The feed's carrier liquid; the raffinate is rich in it.</summary>
    Diluent,

    /// <summary>The extracting liquid; the extract is rich in it.</summary>
    Solvent,
}
