namespace Tieflow.Core.Reconciliation;

/// <summary>Settings of a reconciliation.</summary>
public sealed record ReconciliationOptions
{
    /// <summary>Default settings: significance 0.05, tolerance 1e-10, step tolerance 1e-7, 50 iterations.</summary>
    public static ReconciliationOptions Default { get; } = new();

    /// <summary>Significance level of the global and measurement tests, in (0, 0.5]; default 0.05.</summary>
    public double Significance { get; init; } = 0.05;

    /// <summary>
    /// Convergence tolerance of the bilinear iteration: largest balance residual relative to the sum of the
    /// absolute terms of its balance, and largest relative step; default 1e-10.
    /// </summary>
    public double Tolerance { get; init; } = 1e-10;

    /// <summary>
    /// Largest change of any quantity in the last step of the bilinear iteration (flows relative to the largest flow,
    /// fractions absolute) for convergence, in (0, 1); default 1e-7. The iteration converges linearly near the
    /// solution (about a factor 50 per step for typical adjustments), so the distance left is far below the sigmas.
    /// </summary>
    public double StepTolerance { get; init; } = 1e-7;

    /// <summary>Iteration limit of the bilinear iteration; default 50. A flow-only network needs one step.</summary>
    public int MaxIterations { get; init; } = 50;

    /// <summary>
    /// Solve every step by the dense projection, never on the band: the reference the banded step is tested against
    /// (the same answers to roundoff, much slower for long trains).
    /// </summary>
    internal bool DenseReference { get; init; }

    /// <summary>Throws <see cref="ArgumentOutOfRangeException"/> when a setting is outside its range.</summary>
    public void Validate()
    {
        if (!(Significance > 0 && Significance <= 0.5))
        {
            throw new ArgumentOutOfRangeException(nameof(Significance), Significance, "Expected a significance above 0 and at most 0.5.");
        }

        if (!(Tolerance > 0 && Tolerance < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(Tolerance), Tolerance, "Expected a tolerance above 0 and below 1.");
        }

        if (!(StepTolerance > 0 && StepTolerance < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(StepTolerance), StepTolerance, "Expected a step tolerance above 0 and below 1.");
        }

        if (MaxIterations < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(MaxIterations), MaxIterations, "Expected at least one iteration.");
        }
    }
}
