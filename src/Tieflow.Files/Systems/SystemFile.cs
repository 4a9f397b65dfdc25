using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;

namespace Tieflow.Files;

/// <summary>A system file read and validated: its components, basis, equilibrium data and the model built from them.</summary>
public sealed record SystemFile(string Path, string Name, TernarySystem System, EquilibriumSpec Spec, IPhaseEquilibrium Model);
