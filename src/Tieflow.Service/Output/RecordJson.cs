using System.Globalization;
using System.Text.Json;
using Tieflow.Core.Monitoring.Records;

namespace Tieflow.Service.Output;

/// <summary>Writes analysis records as one JSON object per line (measurement, tags, fields, time), the shape of the store's points.</summary>
internal static class RecordJson
{
    public static void Write(Utf8JsonWriter w, string site, MonitorRecord r)
    {
        w.WriteStartObject();
        w.WriteString("measurement", r.Measurement);
        w.WriteString("time", r.Time.UtcDateTime.ToString("yyyy-MM-ddTHH:mm:ss.fffZ", CultureInfo.InvariantCulture));
        w.WriteStartObject("tags");
        w.WriteString("site", site);
        w.WriteString("unit", r.Unit);
        switch (r)
        {
            case StreamRecord s:
                w.WriteString("stream", s.Stream);
                break;
            case StageRecord s:
                w.WriteString("stage", s.Stage.ToString(CultureInfo.InvariantCulture));
                break;
            case SoftSensorRecord s:
                w.WriteString("sensor", s.Sensor);
                break;
            case AlertRecord a:
                w.WriteString("kind", a.Kind);
                w.WriteString("severity", a.Severity.ToString().ToLowerInvariant());
                if (a.Stage is int st)
                {
                    w.WriteString("stage", st.ToString(CultureInfo.InvariantCulture));
                }

                if (a.Tag is not null)
                {
                    w.WriteString("tag", a.Tag);
                }

                break;
            case SignalRecord s:
                w.WriteString("tag", s.Tag);
                break;
        }

        w.WriteEndObject();
        w.WriteStartObject("fields");
        switch (r)
        {
            case StreamRecord s:
                Number(w, "flow", s.Flow.Value);
                Number(w, "flow_sigma", s.Flow.Sigma);
                foreach ((string c, EstimatedValue v) in s.Fractions)
                {
                    Number(w, $"x_{c}", v.Value);
                    Number(w, $"x_{c}_sigma", v.Sigma);
                }

                break;
            case StageRecord s:
                if (s.Efficiency is { } e)
                {
                    Number(w, "efficiency", e.Value);
                    Number(w, "efficiency_sigma", e.Sigma);
                }

                Number(w, "entrainment", s.Entrainment);
                Number(w, "temperature", s.TemperatureKelvin);
                break;
            case UnitRecord u:
                Number(w, "global_test", u.GlobalTest);
                Number(w, "global_test_critical", u.GlobalTestCritical);
                Number(w, "steady", u.Steady ? 1 : 0);
                Number(w, "solvent_loss_dissolved", u.SolventLossDissolved);
                Number(w, "solvent_loss_unaccounted", u.SolventLossUnaccounted);
                Number(w, "solvent_to_feed_needed", u.SolventToFeedNeeded);
                break;
            case SoftSensorRecord s:
                Number(w, "value", s.Value);
                Number(w, "sigma", s.Sigma);
                Number(w, "lab_bias", s.LabBias);
                break;
            case AlertRecord a:
                Number(w, "active", a.Active ? 1 : 0);
                w.WriteString("message", a.Message);
                break;
            case SignalRecord s:
                Number(w, "value", s.Value);
                Number(w, "quality", (int)s.Quality);
                break;
        }

        w.WriteEndObject();
        if (r is AlertRecord { Evidence.Count: > 0 } alert)
        {
            w.WriteStartObject("evidence");
            foreach ((string k, double v) in alert.Evidence)
            {
                Number(w, k, v);
            }

            w.WriteEndObject();
        }

        w.WriteEndObject();
    }

    /// <summary>A finite number, or nothing: NaN and infinities never reach an output.</summary>
    private static void Number(Utf8JsonWriter w, string name, double? value)
    {
        if (value is double v && double.IsFinite(v))
        {
            w.WriteNumber(name, JsonOutput.Round(v));
        }
    }
}
