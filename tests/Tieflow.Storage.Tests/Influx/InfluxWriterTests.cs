using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Influx;
using Tieflow.Storage.Points;

namespace Tieflow.Storage.Tests.Influx;

/// <summary>The InfluxDB writer against a real victoria-metrics started by the test.</summary>
public sealed class InfluxWriterTests : IDisposable
{
    private readonly VictoriaMetricsServer _server = new();

    public void Dispose() => _server.Dispose();

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public async Task Records_arrive_with_the_contract_names_the_window_time_and_their_values(bool gzip)
    {
        using var writer = new InfluxLineWriter(new InfluxWriterOptions { Url = _server.Url, Org = "tieflow", Bucket = "tieflow", Gzip = gzip });
        await using var sink = new InfluxRecordSink(writer, Records.Site, batchSize: 700);
        List<MonitorRecord> records = Records.Mixed(3000);
        await sink.WriteAsync(records, CancellationToken.None);

        var expected = ExpectedSamples.Of(records.Select(r => RecordPoints.ToPoint(r, Records.Site)!));
        var exported = await _server.ExportAsync(expected.Count);
        StageRecord first = records.OfType<StageRecord>().First();
        Assert.Equal(first.Efficiency!.Value.Value, exported[$"tieflow_stage_efficiency{{site=Brackenmoor,stage=1,unit=X300}}@{Records.Start.ToUnixTimeMilliseconds()}"].Single(), 10);
        ExpectedSamples.AssertExactlyOnce(expected, exported);
    }

    [Fact]
    public async Task Writing_the_same_records_again_overwrites_the_same_points()
    {
        using var writer = new InfluxLineWriter(new InfluxWriterOptions { Url = _server.Url, Org = "tieflow", Bucket = "tieflow" });
        await using var sink = new InfluxRecordSink(writer, Records.Site);
        MonitorRecord stage = Records.Stage(Records.Start);
        await sink.WriteAsync([stage], CancellationToken.None);
        await sink.WriteAsync([stage], CancellationToken.None);
        var exported = await _server.ExportAsync(expected: 8);
        // victoria-metrics keeps both samples of one timestamp (InfluxDB keeps one): the point, series and time are the same.
        var samples = exported.Where(e => e.Key.StartsWith("tieflow_stage_efficiency{", StringComparison.Ordinal)).ToList();
        Assert.Single(samples);
        Assert.All(samples[0].Value, v => Assert.Equal(0.88, v, 12));
    }

    [Fact]
    public async Task A_server_that_is_not_there_makes_the_write_fail()
    {
        _server.Stop();
        using var writer = new InfluxLineWriter(new InfluxWriterOptions { Url = _server.Url, Org = "tieflow", Bucket = "tieflow", Timeout = TimeSpan.FromSeconds(5) });
        await Assert.ThrowsAnyAsync<Exception>(() => writer.WriteAsync([RecordPoints.ToPoint(Records.Stage(Records.Start), Records.Site)!.ToLine()], CancellationToken.None));
    }
}
