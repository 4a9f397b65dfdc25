using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium;

/// <summary>
/// Where a composition lies relative to the phase envelope. Inside the two-phase region the point is a mixture of
/// the two phases of its tie line; <see cref="MinorPhaseFraction"/> says by the lever rule how much of it is the
/// smaller phase (an extract that carries 2% raffinate phase shows 0.02), which is what entrainment detection needs.
/// </summary>
/// <param name="Inside">True when the point lies inside the two-phase region.</param>
/// <param name="MinorPhaseFraction">Lever-rule share of the smaller phase, in [0, 0.5]; 0 outside.</param>
/// <param name="DistanceToNearerPhase">Largest component difference between the point and the nearer end of its tie line; 0 outside.</param>
/// <param name="Split">The split the position was derived from.</param>
public readonly record struct EnvelopePosition(bool Inside, double MinorPhaseFraction, double DistanceToNearerPhase, PhaseSplit Split)
{
    /// <summary>Locates a point with any model.</summary>
    public static EnvelopePosition Locate(IPhaseEquilibrium model, Ternary point, double temperatureKelvin)
    {
        ArgumentNullException.ThrowIfNull(model);
        PhaseSplit split = model.Split(point, temperatureKelvin);
        if (!split.IsTwoPhase)
        {
            return new EnvelopePosition(false, 0, 0, split);
        }

        double beta = split.ExtractFraction;
        bool nearerExtract = beta >= 0.5;
        double minor = nearerExtract ? 1 - beta : beta;
        double distance = Ternary.MaxDifference(point, nearerExtract ? split.Extract : split.Raffinate);
        return new EnvelopePosition(true, minor, distance, split);
    }
}
