using System.Text.Json;
using Tieflow.Service.Monitor;
using Tieflow.Service.Output;

namespace Tieflow.Service.Health;

/// <summary>
/// The <c>/status</c> document: <c>{ "site", "phase", "dataTime", "sources": [{ "name", "primary", "state", "since",
/// "reason" }], "store": { "kind", "target", "written", "lastWrite", "lastError", "pendingRecords", "pendingBytes",
/// "maxBytes", "outbox", "forwarder", "problem" }, "samples", "records", "failure", "units": [{ "id", "lastWindow",
/// "windows", "stages": [{ "stage", "efficiency", "sigma" }], "softSensor": { "name", "time", "value", "sigma",
/// "labBias", "spec", "offSpec" }, "alerts": [{ "kind", "severity", "stage", "tag", "raised", "message" }] }], "notice" }</c>.
/// </summary>
internal static class StatusJson
{
    public static string Write(StatusSnapshot s)
    {
        using var buffer = new MemoryStream();
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Indented = true }))
        {
            w.WriteStartObject();
            w.WriteString("site", s.Site);
            w.WriteString("phase", s.Phase);
            Time(w, "dataTime", s.DataTime);
            w.WriteStartArray("sources");
            foreach (SourceStatus src in s.Sources)
            {
                w.WriteStartObject();
                w.WriteString("name", src.Name);
                w.WriteBoolean("primary", src.Primary);
                w.WriteString("state", src.State.ToString().ToLowerInvariant());
                Time(w, "since", src.Since);
                w.WriteString("reason", src.Reason);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            if (s.Store is { } st)
            {
                w.WriteStartObject("store");
                w.WriteString("kind", st.Kind);
                w.WriteString("target", st.Target);
                w.WriteNumber("written", st.Written);
                Time(w, "lastWrite", st.LastWrite);
                w.WriteString("lastError", st.LastError);
                w.WriteNumber("pendingRecords", st.PendingRecords);
                w.WriteNumber("pendingBytes", st.PendingBytes);
                w.WriteNumber("maxBytes", st.MaxBytes);
                w.WriteString("outbox", st.Outbox?.ToString().ToLowerInvariant());
                w.WriteString("forwarder", st.Forwarder?.ToString().ToLowerInvariant());
                w.WriteString("problem", st.Problem);
                w.WriteEndObject();
            }
            else
            {
                w.WriteNull("store");
            }

            w.WriteNumber("samples", s.Samples);
            w.WriteNumber("records", s.Records);
            w.WriteString("failure", s.Failure);
            w.WriteStartArray("units");
            foreach (UnitStatus u in s.Units)
            {
                w.WriteStartObject();
                w.WriteString("id", u.Id);
                Time(w, "lastWindow", u.LastWindow);
                w.WriteNumber("windows", u.Windows);
                w.WriteStartArray("stages");
                foreach (StageStatus stage in u.Stages)
                {
                    w.WriteStartObject();
                    w.WriteNumber("stage", stage.Stage);
                    Number(w, "efficiency", stage.Efficiency);
                    Number(w, "sigma", stage.Sigma);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                if (u.SoftSensor is { } soft)
                {
                    w.WriteStartObject("softSensor");
                    w.WriteString("name", soft.Name);
                    Time(w, "time", soft.Time);
                    Number(w, "value", soft.Value);
                    Number(w, "sigma", soft.Sigma);
                    Number(w, "labBias", soft.LabBias);
                    Number(w, "spec", u.Spec);
                    w.WriteBoolean("offSpec", soft.Value > u.Spec);
                    w.WriteEndObject();
                }
                else
                {
                    w.WriteNull("softSensor");
                }

                w.WriteStartArray("alerts");
                foreach (ActiveAlert a in u.Alerts)
                {
                    w.WriteStartObject();
                    w.WriteString("kind", a.Kind);
                    w.WriteString("severity", a.Severity);
                    if (a.Stage is int k)
                    {
                        w.WriteNumber("stage", k);
                    }
                    else
                    {
                        w.WriteNull("stage");
                    }

                    w.WriteString("tag", a.Tag);
                    Time(w, "raised", a.Raised);
                    w.WriteString("message", a.Message);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                w.WriteEndObject();
            }

            w.WriteEndArray();
            JsonOutput.WriteNotice(w);
            w.WriteEndObject();
        }

        return System.Text.Encoding.UTF8.GetString(buffer.ToArray());
    }

    private static void Time(Utf8JsonWriter w, string name, DateTimeOffset? t)
    {
        if (t is DateTimeOffset v)
        {
            w.WriteString(name, v.ToUniversalTime().ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", System.Globalization.CultureInfo.InvariantCulture));
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static void Number(Utf8JsonWriter w, string name, double? value)
    {
        if (value is double v)
        {
            JsonOutput.WriteNumber(w, name, v);
        }
        else
        {
            w.WriteNull(name);
        }
    }
}
