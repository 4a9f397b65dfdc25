namespace Tieflow.Core.Cascade;

/// <summary>The specification of a design: a final raffinate solute fraction or a solute recovery.</summary>
public readonly record struct DesignTarget
{
    private DesignTarget(DesignTargetKind kind, double value)
    {
        Kind = kind;
        Value = value;
    }

    /// <summary>What <see cref="Value"/> is.</summary>
    public DesignTargetKind Kind { get; }

    /// <summary>The raffinate solute fraction (system basis) or the recovery, both in (0, 1).</summary>
    public double Value { get; }

    /// <summary>Final raffinate solute fraction on the system's basis, in (0, 1).</summary>
    /// <exception cref="ArgumentOutOfRangeException">When the fraction is not above 0 and below 1.</exception>
    public static DesignTarget RaffinateFraction(double soluteFraction) => new(DesignTargetKind.RaffinateFraction, Open(soluteFraction, nameof(soluteFraction)));

    /// <summary>Fraction of the feed's solute that leaves in the extract (1 - raffinate solute / feed solute), in (0, 1).</summary>
    /// <exception cref="ArgumentOutOfRangeException">When the recovery is not above 0 and below 1.</exception>
    public static DesignTarget Recovery(double recovery) => new(DesignTargetKind.Recovery, Open(recovery, nameof(recovery)));

    /// <inheritdoc />
    public override string ToString() => Kind == DesignTargetKind.Recovery ? $"recovery {Value:G6}" : $"raffinate solute fraction {Value:G6}";

    private static double Open(double value, string name)
    {
        if (!double.IsFinite(value) || value <= 0 || value >= 1)
        {
            throw new ArgumentOutOfRangeException(name, value, "Expected a value above 0 and below 1.");
        }

        return value;
    }
}
