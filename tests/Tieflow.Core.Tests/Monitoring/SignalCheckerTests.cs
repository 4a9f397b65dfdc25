using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Signals;
using Tieflow.Core.Plant;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class SignalCheckerTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    private static Instrument FlowMeter => DemoUnits.Train().FindInstrument("FI-301")!;

    private static Instrument Analyzer => DemoUnits.Train().FindInstrument("AI-312")!;

    [Fact]
    public void PureNoise_IsNeverFlagged()
    {
        var checker = new SignalChecker(FlowMeter);
        var random = new Random(11);
        int flagged = 0;
        for (int i = 0; i < 20_000; i++)
        {
            TagCheckState s = checker.Check(new SignalSample("FI-301", T0.AddSeconds(i), 1000 + (8 * Gauss(random)), SignalQuality.Good));
            flagged += s.Used ? 0 : 1;
        }

        // Frozen at 1e-6 lower tail and spikes beyond 8 robust sigmas: 20,000 normal readings should raise none.
        Assert.Equal(0, flagged);
    }

    [Fact]
    public void BadQualityAndOutOfRange_AreLeftOut()
    {
        var checker = new SignalChecker(FlowMeter);
        Assert.Equal(SignalProblem.BadQuality, checker.Check(new SignalSample("FI-301", T0, 1000, SignalQuality.Bad)).Problem);
        Assert.Equal(SignalProblem.OutOfRange, checker.Check(new SignalSample("FI-301", T0.AddSeconds(1), 2600, SignalQuality.Good)).Problem);
        Assert.Equal(SignalProblem.OutOfRange, checker.Check(new SignalSample("FI-301", T0.AddSeconds(2), -1, SignalQuality.Good)).Problem);
        TagCheckState ok = checker.Check(new SignalSample("FI-301", T0.AddSeconds(3), 1000, SignalQuality.Good));
        Assert.True(ok.Used);
        Assert.Equal(SignalProblem.None, ok.Problem);
    }

    [Fact]
    public void StuckValue_IsFrozenOnceTheHistoryIsFull()
    {
        var checker = new SignalChecker(FlowMeter);
        var random = new Random(3);
        for (int i = 0; i < 100; i++)
        {
            Assert.True(checker.Check(new SignalSample("FI-301", T0.AddSeconds(i), 1000 + (8 * Gauss(random)), SignalQuality.Good)).Used);
        }

        TagCheckState last = default;
        for (int i = 100; i < 160; i++)
        {
            last = checker.Check(new SignalSample("FI-301", T0.AddSeconds(i), 1003.2, SignalQuality.Good));
        }

        Assert.Equal(SignalProblem.Frozen, last.Problem);
        Assert.Contains("FI-301", last.Detail, StringComparison.Ordinal);
    }

    [Theory]
    [Trait("Category", "Slow")]
    [InlineData(null, 0)]
    [InlineData(1e-6, 1)]
    public void HealthyNoiseOverMonthsOfTagDays_IsNeverFrozen(double? probability, int atLeast)
    {
        const int TagDays = 120;

        // The variance test runs at every reading over overlapping stretches, so its per-test probability must be far
        // below the rate of readings: 120 tag-days of healthy noise at a reading a second (seeded). The default calls
        // none of it frozen; the old 1e-6 does (the check that this test can fail).
        SignalCheckSettings settings = probability is double p ? new SignalCheckSettings { FrozenProbability = p } : new SignalCheckSettings();
        var random = new Random(17);
        int frozen = 0;
        for (int tag = 0; tag < TagDays; tag++)
        {
            var checker = new SignalChecker(FlowMeter, settings);
            for (int i = 0; i < 86_400; i++)
            {
                if (checker.Check(new SignalSample("FI-301", T0.AddSeconds(i), 1000 + (8 * Gauss(random)), SignalQuality.Good)).Problem == SignalProblem.Frozen)
                {
                    frozen++;
                    break;
                }
            }
        }

        if (atLeast == 0)
        {
            Assert.Equal(0, frozen);
        }
        else
        {
            Assert.True(frozen >= atLeast, $"{frozen} of {TagDays} tag-days called frozen");
        }
    }

    [Fact]
    public void Spike_IsLeftOutAndTheNextReadingIsUsed()
    {
        var checker = new SignalChecker(FlowMeter);
        var random = new Random(5);
        for (int i = 0; i < 80; i++)
        {
            checker.Check(new SignalSample("FI-301", T0.AddSeconds(i), 1000 + (8 * Gauss(random)), SignalQuality.Good));
        }

        Assert.Equal(SignalProblem.Spike, checker.Check(new SignalSample("FI-301", T0.AddSeconds(80), 1200, SignalQuality.Good)).Problem);
        Assert.True(checker.Check(new SignalSample("FI-301", T0.AddSeconds(81), 1001, SignalQuality.Good)).Used);
    }

    [Fact]
    public void Analyzer_HeldRepeatsAreNotUpdates_AndSilenceMakesItStale()
    {
        var checker = new SignalChecker(Analyzer);
        Assert.True(checker.Check(new SignalSample("AI-312", T0, 19.2, SignalQuality.Good)).Used);
        TagCheckState held = checker.Check(new SignalSample("AI-312", T0.AddMinutes(1), 19.2, SignalQuality.Good));
        Assert.False(held.IsUpdate);
        Assert.False(held.Used);
        Assert.True(checker.Check(new SignalSample("AI-312", T0.AddMinutes(6), 19.25, SignalQuality.Good)).Used);

        Assert.Equal(SignalProblem.None, checker.Advance(T0.AddMinutes(6 + 17)));
        Assert.Equal(SignalProblem.Stale, checker.Advance(T0.AddMinutes(6 + 19)));
    }

    private static double Gauss(Random r) => Math.Sqrt(-2 * Math.Log(1 - r.NextDouble())) * Math.Cos(2 * Math.PI * r.NextDouble());
}
