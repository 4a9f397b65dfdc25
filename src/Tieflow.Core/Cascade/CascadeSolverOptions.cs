namespace Tieflow.Core.Cascade;

/// <summary>Tolerance and iteration limits of the stage and cascade solvers.</summary>
public sealed record CascadeSolverOptions
{
    /// <summary>
    /// Convergence tolerance: on component balances relative to the total inflow, on the Murphree relation in
    /// solute fraction, and on the leaving extract's solute fraction of a single stage. Default 1e-12; at least 1e-15.
    /// </summary>
    public double Tolerance { get; init; } = 1e-12;

    /// <summary>Largest number of Newton steps plus stage sweeps of a counter-current solve. Default 200.</summary>
    public int MaxIterations { get; init; } = 200;

    /// <summary>Largest number of root-finding steps of one stage. Default 200.</summary>
    public int MaxStageIterations { get; init; } = 200;

    /// <summary>
    /// Whether counter-current solves first build a spline table of the model's envelope (once per solver, about 160
    /// tie lines) and use it to find a start close to the answer and for the Jacobian; the residuals always come from
    /// the model, so answers are the model's within <see cref="Tolerance"/>. Null (the default) uses it for activity
    /// models (NRTL, UNIQUAC), whose tie lines are iterative and costly, and not for the table and distribution models.
    /// </summary>
    public bool? UseEnvelopeTable { get; init; }

    /// <summary>The default options.</summary>
    public static CascadeSolverOptions Default { get; } = new();

    internal void Validate()
    {
        if (!(Tolerance >= 1e-15 && Tolerance < 1e-2))
        {
            throw new ArgumentOutOfRangeException(nameof(Tolerance), Tolerance, "Expected a tolerance between 1e-15 and 1e-2.");
        }

        ArgumentOutOfRangeException.ThrowIfLessThan(MaxIterations, 1, nameof(MaxIterations));
        ArgumentOutOfRangeException.ThrowIfLessThan(MaxStageIterations, 1, nameof(MaxStageIterations));
    }
}
