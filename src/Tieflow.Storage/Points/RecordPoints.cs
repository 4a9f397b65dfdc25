using System.Globalization;
using System.Text;
using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Storage.Points;

/// <summary>
/// The one mapping of analysis records to store points, as docs/stores.md names them: every point has the tags
/// <c>site</c> and <c>unit</c>; the measurements, extra tags and fields are those of the contract's table. Null members
/// become absent fields; non-finite numbers (which line protocol cannot carry) are left out too. Both the SQLite store
/// and the InfluxDB writer use this mapping, so the two hold the same points.
/// </summary>
public static class RecordPoints
{
    [ThreadStatic]
    private static StringBuilder? _builder;

    /// <summary>The record as a point of the site, or null when it has no field to store (a stage with nothing determinable).</summary>
    /// <exception cref="ArgumentException">A tag or field name the store cannot hold (empty unit, stream, sensor or tag).</exception>
    public static StorePoint? ToPoint(MonitorRecord record, string site)
    {
        ArgumentNullException.ThrowIfNull(record);
        ArgumentException.ThrowIfNullOrWhiteSpace(site);
        if (string.IsNullOrWhiteSpace(record.Unit))
        {
            throw new ArgumentException($"a {record.Measurement} record has an empty unit id", nameof(record));
        }

        var tags = new TagSet(site, record.Unit);
        StringBuilder f = _builder ??= new StringBuilder(256);
        f.Clear();
        switch (record)
        {
            case StreamRecord s:
                tags.Add("stream", Required(s.Stream, "stream", s));
                Field(f, "flow", s.Flow.Value);
                Field(f, "flow_sigma", s.Flow.Sigma);
                foreach (var (component, x) in s.Fractions.OrderBy(p => p.Key, StringComparer.Ordinal))
                {
                    Field(f, "x_" + component, x.Value);
                    Field(f, "x_" + component + "_sigma", x.Sigma);
                }

                break;
            case StageRecord s:
                tags.Add("stage", s.Stage.ToString(CultureInfo.InvariantCulture));
                if (s.Efficiency is { } e)
                {
                    Field(f, "efficiency", e.Value);
                    Field(f, "efficiency_sigma", e.Sigma);
                }

                Field(f, "entrainment", s.Entrainment);
                Field(f, "temperature", s.TemperatureKelvin);
                break;
            case UnitRecord u:
                Field(f, "global_test", u.GlobalTest);
                Field(f, "global_test_critical", u.GlobalTestCritical);
                IntegerField(f, "steady", u.Steady ? 1 : 0);
                Field(f, "solvent_loss_dissolved", u.SolventLossDissolved);
                Field(f, "solvent_loss_unaccounted", u.SolventLossUnaccounted);
                Field(f, "solvent_to_feed_needed", u.SolventToFeedNeeded);
                break;
            case SoftSensorRecord s:
                tags.Add("sensor", Required(s.Sensor, "sensor", s));
                Field(f, "value", s.Value);
                Field(f, "sigma", s.Sigma);
                Field(f, "lab_bias", s.LabBias);
                break;
            case AlertRecord a:
                tags.Add("kind", Required(a.Kind, "kind", a));
                tags.Add("severity", SeverityName(a.Severity));
                if (a.Stage is { } stage)
                {
                    tags.Add("stage", stage.ToString(CultureInfo.InvariantCulture));
                }

                if (!string.IsNullOrEmpty(a.Tag))
                {
                    tags.Add("tag", a.Tag);
                }

                IntegerField(f, "active", a.Active ? 1 : 0);
                StringField(f, "message", a.Message ?? string.Empty);
                foreach (var (name, value) in a.Evidence.OrderBy(p => p.Key, StringComparer.Ordinal))
                {
                    Field(f, "evidence_" + name, value);
                }

                break;
            case SignalRecord s:
                tags.Add("tag", Required(s.Tag, "tag", s));
                Field(f, "value", s.Value);
                IntegerField(f, "quality", (int)s.Quality);
                break;
            default:
                throw new ArgumentException($"records of type {record.GetType().Name} have no measurement in the store", nameof(record));
        }

        if (f.Length == 0)
        {
            return null;
        }

        return new StorePoint(record.Measurement, tags.ToString(), f.ToString(), record.Time.ToUnixTimeMilliseconds(), record.Unit, record.IsExpendable);
    }

    /// <summary>The severity's name in the store: <c>low</c>, <c>medium</c>, <c>high</c>.</summary>
    public static string SeverityName(AlertSeverity severity) => severity switch
    {
        AlertSeverity.Low => "low",
        AlertSeverity.Medium => "medium",
        AlertSeverity.High => "high",
        _ => throw new ArgumentOutOfRangeException(nameof(severity), severity, "unknown alert severity"),
    };

    private static string Required(string? value, string name, MonitorRecord record) =>
        string.IsNullOrEmpty(value) ? throw new ArgumentException($"a {record.Measurement} record of unit {record.Unit} has an empty {name}", nameof(record)) : value;

    private static void Field(StringBuilder f, string name, double? value)
    {
        if (value is not { } v || !double.IsFinite(v))
        {
            return;
        }

        Separator(f);
        LineProtocol.AppendKey(f, name);
        f.Append('=');
        f.Append(v.ToString("R", CultureInfo.InvariantCulture));
    }

    private static void IntegerField(StringBuilder f, string name, long value)
    {
        Separator(f);
        LineProtocol.AppendKey(f, name);
        f.Append('=');
        f.Append(value.ToString(CultureInfo.InvariantCulture));
        f.Append('i');
    }

    private static void StringField(StringBuilder f, string name, string value)
    {
        Separator(f);
        LineProtocol.AppendKey(f, name);
        f.Append("=\"");
        LineProtocol.AppendStringValue(f, value);
        f.Append('"');
    }

    private static void Separator(StringBuilder f)
    {
        if (f.Length > 0)
        {
            f.Append(',');
        }
    }

    /// <summary>A small tag set, kept sorted by key when written.</summary>
    private struct TagSet(string site, string unit)
    {
        private (string Key, string Value) _a;
        private (string Key, string Value) _b;
        private (string Key, string Value) _c;
        private (string Key, string Value) _d;
        private int _count;

        public void Add(string key, string value)
        {
            switch (_count++)
            {
                case 0: _a = (key, value); break;
                case 1: _b = (key, value); break;
                case 2: _c = (key, value); break;
                case 3: _d = (key, value); break;
                default: throw new InvalidOperationException("more than four extra tags");
            }
        }

        public override readonly string ToString()
        {
            var all = new List<(string Key, string Value)>(_count + 2) { ("site", site), ("unit", unit) };
            if (_count > 0) { all.Add(_a); }
            if (_count > 1) { all.Add(_b); }
            if (_count > 2) { all.Add(_c); }
            if (_count > 3) { all.Add(_d); }
            all.Sort((x, y) => string.CompareOrdinal(x.Key, y.Key));
            var s = new StringBuilder(64);
            foreach (var (key, value) in all)
            {
                if (s.Length > 0)
                {
                    s.Append(',');
                }

                LineProtocol.AppendKey(s, key);
                s.Append('=');
                LineProtocol.AppendKey(s, value);
            }

            return s.ToString();
        }
    }
}
