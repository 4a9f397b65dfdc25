using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Plant;

/// <summary>A lab sample point: the stream drawn and the component analysed (fraction on the system's basis).</summary>
/// <param name="Stream">The stream sampled.</param>
/// <param name="Component">The component analysed.</param>
public sealed record LabPoint(UnitStream Stream, ComponentRole Component);
