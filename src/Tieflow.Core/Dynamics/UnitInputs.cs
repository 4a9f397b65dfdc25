using Tieflow.Core.Chemistry;
using Tieflow.Core.Scenarios;

namespace Tieflow.Core.Dynamics;

/// <summary>
/// What drives a unit during one step: the streams that actually reach it, its temperature, and the faults acting
/// on its stages. Flows and fractions on the system's basis. Arrays are per stage, stage 1 first; the caller owns
/// them and may reuse them between steps.
/// </summary>
public sealed class UnitInputs
{
    /// <summary>Inputs for a unit of <paramref name="stages"/> stages, all efficiencies and entrainments zero.</summary>
    public UnitInputs(int stages)
    {
        Efficiencies = new double[stages];
        Entrainment = new double[stages];
        Carried = new EntrainedPhase[stages];
    }

    /// <summary>Feed to stage 1.</summary>
    public MaterialStream Feed { get; set; }

    /// <summary>Solvent that reaches the unit (after any unmeasured loss): to stage N counter-current, to every stage cross-current.</summary>
    public MaterialStream Solvent { get; set; }

    /// <summary>Temperature of every stage, kelvin.</summary>
    public double TemperatureKelvin { get; set; }

    /// <summary>Murphree raffinate efficiency of each stage.</summary>
    public double[] Efficiencies { get; }

    /// <summary>Carried-over mass fraction of each stage's leaving phase (0 without entrainment).</summary>
    public double[] Entrainment { get; }

    /// <summary>Which phase is carried over at each stage.</summary>
    public EntrainedPhase[] Carried { get; }
}
