namespace Tieflow.Core.Monitoring.Envelope;

/// <summary>The carried-over phase in a stream whose composition is measured in two components.</summary>
/// <param name="Fraction">Mass (or mole, on a mole basis) fraction of the stream that is the other phase; 0 when below the detection limit.</param>
/// <param name="Sigma">Its standard deviation by the delta method.</param>
/// <param name="Raw">The lever-rule fraction before the detection limit.</param>
/// <param name="Detected">True when <see cref="Raw"/> exceeds the detection limit.</param>
public sealed record EntrainmentEstimate(double Fraction, double Sigma, double Raw, bool Detected);
