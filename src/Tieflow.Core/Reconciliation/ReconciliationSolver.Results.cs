namespace Tieflow.Core.Reconciliation;

/// <content>What a solution says: the values, the classification and variances of the quantities, the degrees of freedom, and the multipliers of held values.</content>
internal sealed partial class ReconciliationSolver
{
    /// <summary>
    /// Whether the last iterations of a solve that did not converge shrank their steps steadily, or were too few to tell
    /// (more iterations would help).
    /// </summary>
    public bool StillConverging { get; private set; }

    /// <summary>Degrees of freedom of the last solution: the rank of the projected balances.</summary>
    public int DegreesOfFreedom => _q;

    /// <summary>Number of redundant measurements at the last solution.</summary>
    public int RedundantCount => _redundantCount;

    /// <summary>The value of a quantity at the last solution (last iterate after a failure).</summary>
    public double ValueAt(int variable) => _z[variable];

    /// <summary>Whether adjusted measurement <paramref name="k"/> is redundant, with the variances of its estimate and its adjustment.</summary>
    public bool Measured(int k, out double variance, out double adjustmentVariance)
    {
        variance = _varMeasured[k];
        adjustmentVariance = _varAdjustment[k];
        return _redundant[k];
    }

    /// <summary>
    /// Whether an unmeasured quantity (a column or a substituted fraction) is observable, with its variance.
    /// </summary>
    public bool Unmeasured(int variable, out double variance)
    {
        int col = _column[variable];
        if (col == Dependent)
        {
            variance = _varDependent[variable / _stride];
            return !double.IsNaN(variance);
        }

        int pos = _positionOf[~col];
        variance = _varUnmeasured[pos];
        return _observable[pos];
    }

    /// <summary>Whether a network position is an adjusted measurement, held, or unmeasured in this layout.</summary>
    public bool IsHeld(int variable) => _column[variable] == Held;

    /// <summary>
    /// The derivative of the optimal weighted sum of squares (half of it) with respect to held quantity
    /// <paramref name="h"/>, through the balances only: the multiplier of the constraint that holds it. The caller adds
    /// (value - reading) / sigma^2 when the quantity is a measurement held at a bound.
    /// </summary>
    public double HeldMultiplier(int h)
    {
        // With L = J + mu' (Q2' f + B dx), dL/db = mu' Q2' a_b over the projected rows the Cholesky kept; closed on the
        // band, L = J + lambda' (f + A dz) and dL/db = lambda' a_b with a_b not projected.
        ReadOnlySpan<double> a = _ah.AsSpan(h * _m, _m);
        double sum = 0;
        if (_closedOnBand)
        {
            for (int i = 0; i < _m; i++)
            {
                sum += _lambda[i] * a[i];
            }

            return sum;
        }

        for (int i = 0; i < _q; i++)
        {
            sum += _mu[i] * a[_rank + _gsel[i]];
        }

        return sum;
    }
}
