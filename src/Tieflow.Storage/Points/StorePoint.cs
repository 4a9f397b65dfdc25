namespace Tieflow.Storage.Points;

/// <summary>
/// One record as a point of the time-series store: the measurement, the tag set and the field set in InfluxDB line
/// protocol text, and the time in milliseconds since 1970-01-01 UTC. Two points with the same measurement, tags and
/// time are the same point: writing one again overwrites the other (in SQLite and in InfluxDB alike).
/// </summary>
/// <param name="Measurement">Measurement name (<c>tieflow_stage</c>, ...).</param>
/// <param name="Tags">Tag set, keys sorted, escaped: <c>site=Brackenmoor,stage=2,unit=X300</c>.</param>
/// <param name="Fields">Field set, escaped: <c>efficiency=0.9,efficiency_sigma=0.01</c>.</param>
/// <param name="TimeMs">Unix time in milliseconds.</param>
/// <param name="Unit">The unit's id (also in <paramref name="Tags"/>).</param>
/// <param name="Expendable">True when a full outbox may drop it (signal samples only).</param>
public sealed record StorePoint(string Measurement, string Tags, string Fields, long TimeMs, string Unit, bool Expendable)
{
    /// <summary>The point as one line of InfluxDB line protocol with a millisecond timestamp.</summary>
    public string ToLine() => string.Concat(Measurement, ",", Tags, " ", Fields, " ", TimeMs.ToString(System.Globalization.CultureInfo.InvariantCulture));

    /// <summary>The time as a UTC <see cref="DateTimeOffset"/>.</summary>
    public DateTimeOffset Time => DateTimeOffset.FromUnixTimeMilliseconds(TimeMs);
}
