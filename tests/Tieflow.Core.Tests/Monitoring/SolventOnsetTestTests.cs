using Tieflow.Core.Monitoring.Envelope;

namespace Tieflow.Core.Tests.Monitoring;

/// <summary>
/// The onset test on synthetic windows (seeded noise of the window means' sigmas): the unaccounted solvent is the
/// meter's solvent less the extract's, as the analysis computes it. Analytic cases: a step in the meter alone, a step
/// in the extract alone, both together (a set-point change, no open balance), and half of each (neither hypothesis).
/// </summary>
public sealed class SolventOnsetTestTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    [Theory]
    [InlineData(4.5, 0.0, SolventOnsetKind.MeterBias)]
    [InlineData(0.0, -4.5, SolventOnsetKind.Loss)]
    [InlineData(20.0, 20.0, SolventOnsetKind.Undecided)]
    [InlineData(2.25, -2.25, SolventOnsetKind.Undecided)]
    public void Judge_StepAtTheEighthWindow_SaysWhatMoved(double meterStep, double extractStep, SolventOnsetKind expected)
    {
        var test = new SolventOnsetTest();
        var random = new Random(7);
        const double MeterSigma = 0.3, ExtractSigma = 0.27;
        for (int w = 0; w < 12; w++)
        {
            double meter = 450 + (w >= 8 ? meterStep : 0) + (MeterSigma * Gaussian(random));
            double extract = 440 + (w >= 8 ? extractStep : 0) + (ExtractSigma * Gaussian(random));
            test.Add(T0.AddMinutes(30 * (w + 1)), meter - extract - 10, Math.Sqrt((MeterSigma * MeterSigma) + (ExtractSigma * ExtractSigma)), meter, MeterSigma, extract, ExtractSigma);
        }

        SolventOnsetVerdict verdict = test.Judge();
        Assert.Equal(expected, verdict.Kind);
        if (expected == SolventOnsetKind.MeterBias)
        {
            Assert.Equal(meterStep, verdict.Size, 0.6);
            Assert.Equal(T0.AddMinutes(30 * 9), verdict.Onset);
        }
        else if (expected == SolventOnsetKind.Loss)
        {
            Assert.Equal(-extractStep, verdict.Size, 0.6);
        }
    }

    [Fact]
    public void Judge_WithoutAStep_IsUndecided()
    {
        var test = new SolventOnsetTest();
        for (int w = 0; w < 6; w++)
        {
            test.Add(T0.AddMinutes(30 * w), 5, 0.4, 450, 0.3, 440, 0.27);
        }

        Assert.Equal(SolventOnsetKind.Undecided, test.Judge().Kind);
        Assert.Null(test.Judge().Onset);
    }

    private static double Gaussian(Random r) => Math.Sqrt(-2 * Math.Log(1 - r.NextDouble())) * Math.Cos(2 * Math.PI * r.NextDouble());
}
