using Tieflow.Core.Cascade;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Records;
using Tieflow.Core.Plant;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class PlantAnalysisTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
    private static readonly double[] Truth = [0.92, 0.9, 0.85, 0.8];

    [Fact]
    public void Add_RoutesByTag_SameRecordsAsTheUnitAnalyzerAlone()
    {
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Truth);
        var plant = new PlantAnalysis(new PlantDescription("Brackenmoor", [unit]));
        var alone = new UnitAnalyzer(unit);
        var viaPlant = new List<MonitorRecord>();
        var direct = new List<MonitorRecord>();

        foreach (SignalSample s in UnitAnalyzerTests.Readings(unit, truth, TimeSpan.FromHours(2), seed: 5))
        {
            plant.Add(s, viaPlant);
            alone.Add(s, direct);
        }

        plant.Add(new SignalSample("XX-999", T0.AddHours(2), 1, SignalQuality.Good), viaPlant);
        plant.Advance(T0.AddHours(2), viaPlant);
        alone.Advance(T0.AddHours(2), direct);

        Assert.NotEmpty(direct);
        Assert.Equal(direct.Count, viaPlant.Count);
        Assert.Equal(direct.Select(r => (r.Measurement, r.Time)), viaPlant.Select(r => (r.Measurement, r.Time)));
        Assert.Equal(1, plant.UnknownTags["XX-999"]);
        Assert.Equal(T0.AddHours(2), plant.LastTime);
    }

    [Fact]
    public void Add_SameRecords_WhetherEachReadingsTagIsOneStringOrANewOne()
    {
        // The analysis finds a tag's unit by the string's identity first; a new string with the same text (as a live
        // source may hand) must be routed the same, and so must tags that no unit has, however often they come.
        UnitDescription unit = DemoUnits.Train(4);
        CascadeResult truth = new CascadeSolver(unit.Equilibrium, 298.15).SolveCountercurrent(unit.Nominal.Feed, unit.Nominal.Solvent, Truth);
        var shared = new PlantAnalysis(new PlantDescription("Brackenmoor", [unit]));
        var fresh = new PlantAnalysis(new PlantDescription("Brackenmoor", [unit]));
        var sharedRecords = new List<MonitorRecord>();
        var freshRecords = new List<MonitorRecord>();
        int i = 0;
        foreach (SignalSample s in UnitAnalyzerTests.Readings(unit, truth, TimeSpan.FromHours(2), seed: 7))
        {
            SignalSample other = i++ % 50 == 0 ? s with { Tag = "XX-" + (i % 3) } : s;
            shared.Add(other, sharedRecords);
            fresh.Add(other with { Tag = new string(other.Tag.AsSpan()) }, freshRecords);
        }

        shared.Advance(T0.AddHours(2), sharedRecords);
        fresh.Advance(T0.AddHours(2), freshRecords);

        Assert.NotEmpty(sharedRecords);
        Assert.Equal(sharedRecords.Select(r => (r.Measurement, r.Time)), freshRecords.Select(r => (r.Measurement, r.Time)));
        Assert.Equal(shared.Samples, fresh.Samples);
        Assert.Equal(shared.UnknownTags.OrderBy(p => p.Key, StringComparer.Ordinal), fresh.UnknownTags.OrderBy(p => p.Key, StringComparer.Ordinal));
        Assert.Equal(3, shared.UnknownTags.Count);
    }

    [Fact]
    public void SourceLostThenResumed_OneGapAlertRaisedAndClearedPerUnit()
    {
        var plant = new PlantAnalysis(new PlantDescription("Brackenmoor", [DemoUnits.Train(4)]));
        var records = new List<MonitorRecord>();

        plant.SourceLost(T0, "server went away", records);
        plant.SourceLost(T0.AddMinutes(1), "still away", records);
        Assert.True(plant.InGap);
        plant.SourceResumed(T0.AddMinutes(5), records);
        plant.SourceResumed(T0.AddMinutes(6), records);

        Assert.False(plant.InGap);
        Assert.Collection(
            records.Cast<AlertRecord>(),
            raised =>
            {
                Assert.Equal((PlantAnalysis.SourceGapKind, true, T0, "X300"), (raised.Kind, raised.Active, raised.Time, raised.Unit));
                Assert.Contains("server went away", raised.Message, StringComparison.Ordinal);
            },
            cleared =>
            {
                Assert.Equal((PlantAnalysis.SourceGapKind, false, T0.AddMinutes(5)), (cleared.Kind, cleared.Active, cleared.Time));
                Assert.Equal(300, cleared.Evidence["gapSeconds"], 6);
            });
    }
}
