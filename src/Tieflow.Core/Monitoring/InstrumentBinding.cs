using Tieflow.Core.Plant;
using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Monitoring;

/// <summary>An instrument and the network quantity its readings measure (null for a temperature).</summary>
/// <param name="Instrument">The instrument.</param>
/// <param name="Key">The measured quantity of the reconciliation network, or null.</param>
public sealed record InstrumentBinding(Instrument Instrument, QuantityKey? Key);
