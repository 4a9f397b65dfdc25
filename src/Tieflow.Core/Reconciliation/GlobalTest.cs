namespace Tieflow.Core.Reconciliation;

/// <summary>
/// The global test: the weighted sum of squared adjustments compared with the chi-square distribution whose
/// degrees of freedom are the rank of the projected balances.
/// </summary>
/// <param name="Statistic">Weighted sum of squared adjustments (the objective at the solution); zero or more.</param>
/// <param name="DegreesOfFreedom">Rank of the balances after the unmeasured quantities are projected out.</param>
/// <param name="Critical">Chi-square quantile at one minus the significance; zero when there is no degree of freedom.</param>
/// <param name="PValue">Probability of a statistic at least this large with no gross error; one when there is no degree of freedom.</param>
/// <param name="Passed">Whether the statistic is at or below the critical value (no gross error detected).</param>
public sealed record GlobalTest(double Statistic, int DegreesOfFreedom, double Critical, double PValue, bool Passed);
