namespace Tieflow.Service.Report;

/// <summary>One point of a decimated series: the means of the values and sigmas in a time bucket, with their range.</summary>
/// <param name="Time">Mean time of the values in the bucket.</param>
/// <param name="Value">Mean value.</param>
/// <param name="Sigma">Mean sigma (zero for series without one).</param>
/// <param name="Min">Smallest value.</param>
/// <param name="Max">Largest value.</param>
internal readonly record struct SeriesPoint(DateTimeOffset Time, double Value, double Sigma, double Min, double Max);
