using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Plant;
using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Truth;

/// <summary>
/// The ground truth of one unit once a simulated minute: the efficiency and entrainment acting on each stage, the
/// final raffinate's solute fraction, the solvent lost unmeasured, and for a column the theoretical stages achieved:
/// the fractional number of equilibrium stages that gives the same final raffinate from the same feed and solvent
/// (the design calculation's stage count at efficiency 1, counted stage by stage from the feed end).
/// </summary>
internal sealed class TruthSampler
{
    private const double IntervalSeconds = 60;

    private readonly CascadeDesign? _design;
    private double _next;
    private (MaterialStream Feed, MaterialStream Solvent, double Raffinate) _lastKey;
    private double? _lastStages;

    public TruthSampler(UnitDescription unit)
    {
        if (unit.Kind == UnitKind.Column)
        {
            _design = new CascadeDesign(unit.Equilibrium, unit.Nominal.TemperatureKelvin);
        }
    }

    public bool Due(double seconds)
    {
        if (seconds + 1e-9 < _next)
        {
            return false;
        }

        _next = (Math.Floor((seconds + 1e-9) / IntervalSeconds) + 1) * IntervalSeconds;
        return true;
    }

    public TruthSample Sample(DateTimeOffset time, UnitSimulation unit)
    {
        double raffinate = unit.Dynamics.FinalRaffinate.Composition.Solute;
        return new TruthSample(
            time,
            [.. unit.Inputs.Efficiencies],
            raffinate,
            [.. unit.Inputs.Entrainment],
            unit.SolventLossRate,
            _design is null ? null : TheoreticalStages(unit.Inputs.Feed, unit.Inputs.Solvent, raffinate));
    }

    private double? TheoreticalStages(MaterialStream feed, MaterialStream solvent, double raffinate)
    {
        // In steady operation the inputs repeat exactly.
        var key = (feed, solvent, raffinate);
        if (key == _lastKey)
        {
            return _lastStages;
        }

        _lastKey = key;
        try
        {
            // The design's stage stepping alone (no minimum-solvent search, no cascade solve): about a stage solve per stage.
            _lastStages = raffinate > 0 && raffinate < feed.Composition.Solute
                ? _design!.CountStages(feed, solvent.Composition, solvent.Flow, raffinate, [1.0])
                : null;
        }
        catch (Exception e) when (e is CascadeException or InfeasibleSpecificationException or ArgumentOutOfRangeException)
        {
            // Not reachable with equilibrium stages at these flows (a transient far from design): no number rather than a wrong one.
            _lastStages = null;
        }

        return _lastStages;
    }
}
