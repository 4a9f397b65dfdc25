using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Storage.Points;

namespace Tieflow.Storage.Tests.Points;

public sealed class RecordPointsTests
{
    private static readonly DateTimeOffset T = Records.Start;
    private const long Ms = 1772438400000; // 2026-03-02T08:00:00Z

    [Fact]
    public void Stream_has_flow_and_every_fraction_with_sigma()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Stream(T), Records.Site)!;
        Assert.Equal("tieflow_stream", p.Measurement);
        Assert.Equal("site=Brackenmoor,stream=raffinate-4,unit=X300", p.Tags);
        Assert.Equal("flow=1180.5,flow_sigma=6.2,x_acetone=0.021,x_acetone_sigma=0.0004,x_tce=0.029,x_tce_sigma=0.001,x_water=0.95,x_water_sigma=0.002", p.Fields);
        Assert.Equal(Ms, p.TimeMs);
        Assert.False(p.Expendable);
    }

    [Fact]
    public void Stage_has_efficiency_entrainment_temperature_and_leaves_out_what_is_unknown()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Stage(T), Records.Site)!;
        Assert.Equal("tieflow_stage,site=Brackenmoor,stage=2,unit=X300 efficiency=0.88,efficiency_sigma=0.03,entrainment=0.004,temperature=298.4 " + Ms, p.ToLine());

        StorePoint partial = RecordPoints.ToPoint(new StageRecord("X300", T, 1, null, null, 300.0), Records.Site)!;
        Assert.Equal("temperature=300", partial.Fields);

        Assert.Null(RecordPoints.ToPoint(new StageRecord("X300", T, 1, null, null, null), Records.Site));
    }

    [Fact]
    public void Unit_has_the_test_steady_flag_and_solvent_figures()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Unit(T, steady: false), Records.Site)!;
        Assert.Equal("tieflow_unit,site=Brackenmoor,unit=X300 global_test=7.9,global_test_critical=12.59,steady=0i,solvent_loss_dissolved=3.1,solvent_loss_unaccounted=0.4 " + Ms, p.ToLine());
        StorePoint needed = RecordPoints.ToPoint(Records.Unit(T) with { SolventToFeedNeeded = 1.35 }, Records.Site)!;
        Assert.EndsWith(",solvent_to_feed_needed=1.35", needed.Fields);
        Assert.Contains("steady=1i", needed.Fields);
    }

    [Fact]
    public void Soft_sensor_has_value_sigma_and_lab_bias()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Sensor(T), Records.Site)!;
        Assert.Equal("tieflow_soft_sensor,sensor=raffinate-acetone,site=Brackenmoor,unit=X300 value=0.0208,sigma=0.0006,lab_bias=-0.0002 " + Ms, p.ToLine());
    }

    [Fact]
    public void Alert_has_kind_severity_stage_and_tag_tags_and_active_and_message_fields()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Alert(T), Records.Site)!;
        Assert.Equal("tieflow_alert", p.Measurement);
        Assert.Equal("kind=efficiency-drift,severity=medium,site=Brackenmoor,stage=3,unit=X300", p.Tags);
        Assert.StartsWith("active=1i,message=\"Stage 3 efficiency 0.61 \u00b1 0.04 is below 0.75 for 00:30:00\"", p.Fields);
        Assert.EndsWith(",evidence_threshold=0.75,evidence_value=0.61", p.Fields);

        var cleared = new AlertRecord("X300", T, "suspect-instrument", AlertSeverity.High, null, "AI-314", false, "say \"why\"", new Dictionary<string, double>());
        StorePoint c = RecordPoints.ToPoint(cleared, Records.Site)!;
        Assert.Equal("kind=suspect-instrument,severity=high,site=Brackenmoor,tag=AI-314,unit=X300", c.Tags);
        Assert.Equal("active=0i,message=\"say \\\"why\\\"\"", c.Fields);
    }

    [Fact]
    public void Signal_has_value_and_quality_and_is_the_only_expendable_record()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Signal(T, quality: SignalQuality.Uncertain), Records.Site)!;
        Assert.Equal("tieflow_signal,site=Brackenmoor,tag=FI-301,unit=X300 value=1500.25,quality=1i " + Ms, p.ToLine());
        Assert.True(p.Expendable);
        Assert.Equal("quality=0i", RecordPoints.ToPoint(Records.Signal(T, quality: SignalQuality.Bad), Records.Site)!.Fields.Split(',')[1]);
        Assert.Equal("quality=2i", RecordPoints.ToPoint(Records.Signal(T), Records.Site)!.Fields.Split(',')[1]);
    }

    [Fact]
    public void Tag_values_with_spaces_commas_and_equals_signs_are_escaped_and_read_back()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Signal(T, tag: "FI 301,a=b"), "North site")!;
        Assert.Equal("site=North\\ site,tag=FI\\ 301\\,a\\=b,unit=X300", p.Tags);
        var tags = LineProtocol.ParseTags(p.Tags);
        Assert.Equal(["North site", "FI 301,a=b", "X300"], tags.Select(t => t.Value));
    }

    [Fact]
    public void Fields_read_back_as_numbers_and_strings()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Alert(T), Records.Site)!;
        var fields = LineProtocol.ParseFields(p.Fields).ToDictionary(f => f.Key, f => f.Value);
        Assert.Equal(1.0, fields["active"]);
        Assert.Equal("Stage 3 efficiency 0.61 \u00b1 0.04 is below 0.75 for 00:30:00", fields["message"]);
        Assert.Equal(0.61, fields["evidence_value"]);
    }

    [Fact]
    public void Non_finite_numbers_are_left_out_because_line_protocol_cannot_carry_them()
    {
        StorePoint p = RecordPoints.ToPoint(Records.Sensor(T) with { Sigma = double.NaN, LabBias = double.PositiveInfinity }, Records.Site)!;
        Assert.Equal("value=0.0208", p.Fields);
    }

    [Fact]
    public void The_same_record_maps_to_the_same_point_so_a_rewrite_overwrites()
    {
        Assert.Equal(RecordPoints.ToPoint(Records.Stage(T), Records.Site), RecordPoints.ToPoint(Records.Stage(T), Records.Site));
    }

    [Fact]
    public void An_empty_unit_or_tag_is_refused_with_a_message_that_names_it()
    {
        var e = Assert.Throws<ArgumentException>(() => RecordPoints.ToPoint(Records.Signal(T, tag: ""), Records.Site));
        Assert.Contains("empty tag", e.Message);
        Assert.Throws<ArgumentException>(() => RecordPoints.ToPoint(Records.Stage(T) with { Unit = "" }, Records.Site));
    }
}
