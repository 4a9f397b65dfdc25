namespace Tieflow.Core.Scenarios;

/// <summary>The faults a scenario can inject into a simulated plant.</summary>
public enum FaultKind
{
    /// <summary>A stage's (or every stage's) Murphree efficiency falls to a new value over a ramp.</summary>
    StageEfficiency,

    /// <summary>One phase leaving a stage carries droplets of the other.</summary>
    Entrainment,

    /// <summary>A fraction of the solvent flow is lost unmeasured before it reaches the unit.</summary>
    SolventLoss,

    /// <summary>An instrument reads a constant offset.</summary>
    SensorBias,

    /// <summary>An instrument's offset grows linearly with time.</summary>
    SensorDrift,

    /// <summary>An instrument keeps its last value with good quality from the fault's start.</summary>
    SensorStuck,

    /// <summary>An instrument reports bad quality.</summary>
    SignalBad,

    /// <summary>An instrument's value stops changing while its quality stays good, until the fault ends.</summary>
    SignalFrozen,
}
