using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Core.Monitoring.Envelope;

/// <summary>
/// Entrainment by the lever rule: a stream that should be one saturated phase but whose measured composition z lies inside
/// the two-phase region is a mixture of its own phase and droplets of the other. Through z runs a tie line with ends r and
/// e; for a stream that should be extract the carried raffinate fraction is |z - e| / |r - e| (and the other way round for
/// a raffinate). Only a composition measured in two components can show this: the third follows by difference. The sigma
/// follows from the two measurement sigmas by the delta method (central differences). Below the detection limit
/// (a number of sigmas) the estimate reports zero.
/// </summary>
public static class EntrainmentEstimator
{
    /// <summary>Estimates the carried-over phase of a stream.</summary>
    /// <param name="model">The equilibrium model.</param>
    /// <param name="temperatureKelvin">Temperature, kelvin.</param>
    /// <param name="shouldBeExtract">True for a stream that should be extract (carrying raffinate), false for a raffinate (carrying extract).</param>
    /// <param name="solute">Measured solute fraction.</param>
    /// <param name="soluteSigma">Its sigma.</param>
    /// <param name="marker">Measured fraction of the other phase's main component: the diluent in an extract, the solvent in a raffinate.</param>
    /// <param name="markerSigma">Its sigma.</param>
    /// <param name="detectionSigmas">Detection limit in sigmas of the estimate.</param>
    public static EntrainmentEstimate Estimate(IPhaseEquilibrium model, double temperatureKelvin, bool shouldBeExtract, double solute, double soluteSigma, double marker, double markerSigma, double detectionSigmas = 3)
    {
        ArgumentNullException.ThrowIfNull(model);
        double f = Carried(model, temperatureKelvin, shouldBeExtract, solute, marker);
        double hs = Math.Max(soluteSigma, 1e-7), hm = Math.Max(markerSigma, 1e-7);
        double ds = (Carried(model, temperatureKelvin, shouldBeExtract, solute + hs, marker) - Carried(model, temperatureKelvin, shouldBeExtract, solute - hs, marker)) / (2 * hs);
        double dm = (Carried(model, temperatureKelvin, shouldBeExtract, solute, marker + hm) - Carried(model, temperatureKelvin, shouldBeExtract, solute, marker - hm)) / (2 * hm);
        double sigma = Math.Sqrt((ds * ds * soluteSigma * soluteSigma) + (dm * dm * markerSigma * markerSigma));

        // Right at the binodal the lever rule has a kink (zero outside): the slope from the inside is what the
        // measurements resolve, so a zero estimate still gets the sigma of a point just inside.
        if (f == 0)
        {
            // More of the other phase's main component moves the point inward, for either kind of stream.
            double fi = Carried(model, temperatureKelvin, shouldBeExtract, solute, marker + (3 * hm));
            sigma = Math.Max(sigma, fi / 3);
        }

        bool detected = f > detectionSigmas * sigma && f > 0;
        return new EntrainmentEstimate(detected ? f : 0, sigma, f, detected);
    }

    /// <summary>The lever-rule fraction of carried-over phase at a composition (0 outside the two-phase region).</summary>
    public static double Carried(IPhaseEquilibrium model, double temperatureKelvin, bool shouldBeExtract, double solute, double marker)
    {
        ArgumentNullException.ThrowIfNull(model);
        solute = Math.Clamp(solute, 0, 1);
        marker = Math.Clamp(marker, 0, 1 - solute);
        Ternary z = shouldBeExtract ? new Ternary(solute, marker, 1 - solute - marker) : new Ternary(solute, 1 - solute - marker, marker);
        PhaseSplit split;
        try
        {
            split = model.Split(z, temperatureKelvin);
        }
        catch (EquilibriumException)
        {
            return 0;
        }

        if (!split.IsTwoPhase)
        {
            return 0;
        }

        // ExtractFraction is the lever-rule share of the extract phase in z.
        return shouldBeExtract ? 1 - split.ExtractFraction : split.ExtractFraction;
    }
}
