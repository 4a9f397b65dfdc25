using System.Globalization;
using Tieflow.Storage.Points;

namespace Tieflow.Storage.Tests.Influx;

/// <summary>What a victoria-metrics export must hold for a set of points: one sample per field (strings as 0), series named measurement_field, tags as labels.</summary>
internal static class ExpectedSamples
{
    public static Dictionary<string, double> Of(IEnumerable<StorePoint> points)
    {
        var result = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (StorePoint p in points)
        {
            string labels = string.Join(',', LineProtocol.ParseTags(p.Tags).Select(t => $"{t.Key}={t.Value}").Order(StringComparer.Ordinal));
            foreach (var (field, value) in LineProtocol.ParseFields(p.Fields))
            {
                // victoria-metrics keeps a string field (the alert message) as a sample of value 0.
                result[$"{p.Measurement}_{field}{{{labels}}}@{p.TimeMs.ToString(CultureInfo.InvariantCulture)}"] = value is double d ? d : 0.0;
            }
        }

        return result;
    }

    /// <summary>Asserts that every expected sample arrived exactly once with its value, and nothing else did.</summary>
    public static void AssertExactlyOnce(Dictionary<string, double> expected, Dictionary<string, List<double>> exported)
    {
        var missing = expected.Keys.Where(k => !exported.ContainsKey(k)).Take(5).ToList();
        Assert.True(missing.Count == 0, $"{expected.Keys.Count(k => !exported.ContainsKey(k))} samples missing, for example {string.Join("; ", missing)}");
        var duplicated = exported.Where(e => e.Value.Count != 1).Take(5).Select(e => $"{e.Key} x{e.Value.Count}").ToList();
        Assert.True(duplicated.Count == 0, $"samples that arrived more than once: {string.Join("; ", duplicated)}");
        var extra = exported.Keys.Where(k => !expected.ContainsKey(k)).Take(5).ToList();
        Assert.True(extra.Count == 0, $"samples nobody wrote: {string.Join("; ", extra)}");
        foreach (var (key, value) in expected)
        {
            // victoria-metrics keeps about 12 significant decimal digits (seen here, 1138.3220469291891 comes back as 1138.32204693).
            double got = exported[key][0];
            Assert.True(Math.Abs(got - value) <= 1e-11 * Math.Max(1.0, Math.Abs(value)), $"{key}: wrote {value}, read back {got}");
        }
    }
}
