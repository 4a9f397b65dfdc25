namespace Tieflow.Core.Chemistry;

/// <summary>
/// The three components of an extraction system in role order (solute, diluent, solvent) and the basis on which
/// its compositions and flows are written. Converts compositions and flows between mass and mole basis exactly.
/// </summary>
public sealed class TernarySystem
{
    private readonly Component[] _components;

    /// <summary>Creates a system from exactly one solute, one diluent and one solvent, given in any order.</summary>
    /// <exception cref="ArgumentException">When the roles are not one of each, an id is empty or repeated, or a molar mass is not above zero.</exception>
    public TernarySystem(IReadOnlyList<Component> components, CompositionBasis basis)
    {
        ArgumentNullException.ThrowIfNull(components);
        if (components.Count != 3)
        {
            throw new ArgumentException($"Expected exactly three components (one solute, one diluent, one solvent), got {components.Count}.", nameof(components));
        }

        _components = new Component[3];
        foreach (Component c in components)
        {
            ArgumentException.ThrowIfNullOrWhiteSpace(c.Id, nameof(components));
            Preconditions.Positive(c.MolarMassKgPerKmol, $"molar mass of {c.Id}");
            int slot = (int)c.Role;
            if (_components[slot] is not null)
            {
                throw new ArgumentException($"Expected one component of each role, but '{_components[slot].Id}' and '{c.Id}' are both {c.Role.ToString().ToLowerInvariant()}s.", nameof(components));
            }

            _components[slot] = c;
        }

        if (_components.Select(c => c.Id).Distinct(StringComparer.Ordinal).Count() != 3)
        {
            throw new ArgumentException("Component ids must be distinct.", nameof(components));
        }

        Basis = basis;
        MolarMasses = new Ternary(_components[0].MolarMassKgPerKmol, _components[1].MolarMassKgPerKmol, _components[2].MolarMassKgPerKmol);
    }

    /// <summary>Basis of compositions and flows exchanged with this system.</summary>
    public CompositionBasis Basis { get; }

    /// <summary>The flow unit of the basis (kg/h or kmol/h), as every output and message names it.</summary>
    public string FlowUnit => Basis.FlowUnit();

    /// <summary>Components in role order: solute, diluent, solvent.</summary>
    public IReadOnlyList<Component> Components => _components;

    /// <summary>The solute.</summary>
    public Component Solute => _components[0];

    /// <summary>The diluent.</summary>
    public Component Diluent => _components[1];

    /// <summary>The solvent.</summary>
    public Component Solvent => _components[2];

    /// <summary>Molar masses in kg/kmol, in role order.</summary>
    public Ternary MolarMasses { get; }

    /// <summary>Index (0 solute, 1 diluent, 2 solvent) of the component with this id, or -1.</summary>
    public int IndexOf(string id)
    {
        for (int i = 0; i < 3; i++)
        {
            if (string.Equals(_components[i].Id, id, StringComparison.Ordinal))
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>Mass fractions to mole fractions.</summary>
    public Ternary MassToMole(Ternary massFractions)
    {
        var n = new Ternary(massFractions.Solute / MolarMasses.Solute, massFractions.Diluent / MolarMasses.Diluent, massFractions.Solvent / MolarMasses.Solvent);
        return n.Normalized();
    }

    /// <summary>Mole fractions to mass fractions.</summary>
    public Ternary MoleToMass(Ternary moleFractions)
    {
        var m = new Ternary(moleFractions.Solute * MolarMasses.Solute, moleFractions.Diluent * MolarMasses.Diluent, moleFractions.Solvent * MolarMasses.Solvent);
        return m.Normalized();
    }

    /// <summary>Fractions on this system's basis to mole fractions (identity on a mole basis).</summary>
    public Ternary ToMole(Ternary fractions) => Basis == CompositionBasis.Mole ? fractions : MassToMole(fractions);

    /// <summary>Mole fractions to fractions on this system's basis (identity on a mole basis).</summary>
    public Ternary FromMole(Ternary moleFractions) => Basis == CompositionBasis.Mole ? moleFractions : MoleToMass(moleFractions);

    /// <summary>Mean molar mass (kg/kmol) of a mixture with these fractions on this system's basis.</summary>
    public double MeanMolarMass(Ternary fractions)
    {
        if (Basis == CompositionBasis.Mole)
        {
            return (fractions.Solute * MolarMasses.Solute) + (fractions.Diluent * MolarMasses.Diluent) + (fractions.Solvent * MolarMasses.Solvent);
        }

        return 1.0 / ((fractions.Solute / MolarMasses.Solute) + (fractions.Diluent / MolarMasses.Diluent) + (fractions.Solvent / MolarMasses.Solvent));
    }

    /// <summary>Converts a stream to the other basis: kg/h with mass fractions to kmol/h with mole fractions, or back.</summary>
    public MaterialStream Convert(MaterialStream stream, CompositionBasis from, CompositionBasis to)
    {
        if (from == to)
        {
            return stream;
        }

        if (from == CompositionBasis.Mass)
        {
            Ternary w = stream.Composition;
            double kmolPerKg = (w.Solute / MolarMasses.Solute) + (w.Diluent / MolarMasses.Diluent) + (w.Solvent / MolarMasses.Solvent);
            return new MaterialStream(stream.Flow * kmolPerKg, MassToMole(w));
        }

        Ternary x = stream.Composition;
        double kgPerKmol = (x.Solute * MolarMasses.Solute) + (x.Diluent * MolarMasses.Diluent) + (x.Solvent * MolarMasses.Solvent);
        return new MaterialStream(stream.Flow * kgPerKmol, MoleToMass(x));
    }
}
