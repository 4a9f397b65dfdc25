using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// The rate at which each stage's hold-ups gain each component while the unit settles, from the trend of the raffinate
/// leaving the stage. A mixer-settler train with an hour of flow in its settlers keeps moving for many hours after a
/// change (the slowest composition mode of a counter-current train is several times one stage's residence time), and a
/// balance that leaves out what the hold-ups take up reads the accumulation as transfer between the phases: that biases
/// every efficiency computed from it. With the accumulation as a known term of each stage's balance
/// (<see cref="NodeAccumulation"/>), a settling window keeps honest balances.
/// </summary>
/// <remarks>
/// The model is the one of the stage itself: a mixer of hold-up H_m and a settler whose hold-up is split between the
/// layers in proportion to the design flows of the two phases; both layers lie on the phase envelope, and the extract
/// layer is taken to move along the tie line through the raffinate layer (a stage near equilibrium; common practice, no
/// source). With the raffinate solute slope s = dx/dt from the analyzer's trend, the raffinate layer changes along the
/// raffinate branch, dR/dt = R'(x) s, the extract layer along the extract end of the tie lines, dE/dt = E'(x) s, and the
/// mixer, holding both phases in their flow ratio, by (L dR/dt + V dE/dt) / (L + V). The accumulation is
/// H_R dR/dt + H_E dE/dt + H_m dz/dt per component; the total is zero (constant hold-ups).
/// </remarks>
public static class HoldupAccumulation
{
    /// <summary>Estimates the accumulation of every stage whose raffinate trend is known.</summary>
    /// <param name="model">The unit model.</param>
    /// <param name="design">The unit's design cascade (its stage flows split the settler between the layers).</param>
    /// <param name="temperatureKelvin">The unit's temperature.</param>
    /// <param name="raffinateSolute">Per stage (index stage - 1) the solute fraction of the raffinate leaving it, or null.</param>
    /// <param name="raffinateSlope">Per stage its slope dx/dt, fraction per hour, or null when not known.</param>
    /// <param name="soluteRate">When given (one per stage), receives each stage's solute accumulation (zero where none is estimated).</param>
    /// <returns>The accumulation per stage node and component, in the unit's flow unit (per hour); empty when no slope is known.</returns>
    public static IReadOnlyList<NodeAccumulation> Estimate(UnitModel model, CascadeResult design, double temperatureKelvin, IReadOnlyList<double?> raffinateSolute, IReadOnlyList<double?> raffinateSlope, double[]? soluteRate = null)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(design);
        ArgumentNullException.ThrowIfNull(raffinateSolute);
        ArgumentNullException.ThrowIfNull(raffinateSlope);
        UnitDescription unit = model.Unit;
        IPhaseEquilibrium eq = unit.Equilibrium;
        var result = new List<NodeAccumulation>();
        for (int k = 1; k <= unit.Stages && k <= design.Stages.Count; k++)
        {
            if (raffinateSolute[k - 1] is not double x || raffinateSlope[k - 1] is not double s || s == 0)
            {
                continue;
            }

            StageResult d = design.Stages[k - 1];
            double l = d.Raffinate.Flow, v = d.Extract.Flow;
            if (!(l + v > 0))
            {
                continue;
            }

            double max = eq.SoluteLimits(temperatureKelvin).Raffinate;
            double h = Math.Max(1e-5, 1e-3 * x);
            double lo = Math.Clamp(x - h, 0, max), hi = Math.Clamp(x + h, 0, max);
            if (!(hi > lo))
            {
                continue;
            }

            TieLine a = eq.TieLineFromRaffinate(lo, temperatureKelvin), b = eq.TieLineFromRaffinate(hi, temperatureKelvin);
            Ternary dR = (s / (hi - lo)) * (b.Raffinate - a.Raffinate);
            Ternary dE = (s / (hi - lo)) * (b.Extract - a.Extract);
            Ternary dz = (1 / (l + v)) * ((l * dR) + (v * dE));
            double hR = unit.Holdup.SettlerKg * l / (l + v), hE = unit.Holdup.SettlerKg * v / (l + v);
            Ternary rate = (hR * dR) + (hE * dE) + (unit.Holdup.MixerKg * dz);
            if (soluteRate is not null)
            {
                soluteRate[k - 1] = rate.Solute;
            }

            string node = UnitModel.StageNode(k);
            for (int c = 0; c < 3; c++)
            {
                result.Add(new NodeAccumulation(node, model.ComponentIds[c], rate[c]));
            }
        }

        return result;
    }
}
