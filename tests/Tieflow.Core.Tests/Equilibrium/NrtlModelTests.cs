using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Tests.Reference;

namespace Tieflow.Core.Tests.Equilibrium;

public sealed class NrtlModelTests
{
    private const double T = 343.0;

    [Fact]
    public void LnGamma_EquimolarMixture_MatchesReferenceValues()
    {
        // Reference values computed from the NRTL equations (Renon and Prausnitz, AIChE J. 14, 135, 1968) with the
        // parameters credited to Renon and Prausnitz (1969) in the project's reference notes (section 3):
        // ethyl acetate 1.77781, water 2.26744, ethanol 1.15854 at 343 K.
        Ternary gamma = ReferenceNrtl.Model().ActivityCoefficients(new Ternary(1.0 / 3, 1.0 / 3, 1.0 / 3), T);
        Assert.Equal(1.77781, gamma.Solvent, 1e-5);
        Assert.Equal(2.26744, gamma.Diluent, 1e-5);
        Assert.Equal(1.15854, gamma.Solute, 1e-5);
    }

    [Fact]
    public void Split_ReferenceFlash_MatchesPublishedPhases()
    {
        // Reference notes section 3 (notebook value; an independent script agrees to 5 decimals): at 343 K,
        // z = (ethyl acetate 0.42, water 0.52, ethanol 0.06) gives an ester-rich phase (0.58177, 0.34614, 0.07210),
        // a water-rich phase (0.02192, 0.94784, 0.03024) and 0.28895 of the feed moles in the water-rich phase.
        NrtlModel model = ReferenceNrtl.Model();
        PhaseSplit split = model.Split(new Ternary(0.06, 0.52, 0.42), T);
        Assert.True(split.IsTwoPhase);
        Assert.Equal(0.02192, split.Raffinate.Solvent, 1e-5);
        Assert.Equal(0.94784, split.Raffinate.Diluent, 1e-5);
        Assert.Equal(0.03024, split.Raffinate.Solute, 1e-5);
        Assert.Equal(0.58177, split.Extract.Solvent, 1e-5);
        Assert.Equal(0.34614, split.Extract.Diluent, 1e-5);
        Assert.Equal(0.07210, split.Extract.Solute, 1e-5);
        Assert.Equal(0.28895, 1 - split.ExtractFraction, 1e-5);
    }

    [Fact]
    public void Split_MassBasisSystem_GivesTheSamePhasesAndTheMassShare()
    {
        NrtlModel mole = ReferenceNrtl.Model();
        NrtlModel mass = ReferenceNrtl.Model(CompositionBasis.Mass);
        var zMole = new Ternary(0.06, 0.52, 0.42);
        PhaseSplit byMole = mole.Split(zMole, T);
        Ternary zMass = mass.System.MoleToMass(zMole);
        PhaseSplit byMass = mass.Split(zMass, T);
        Assert.True(Ternary.MaxDifference(mass.System.MassToMole(byMass.Raffinate), byMole.Raffinate) < 1e-10);
        Assert.True(Ternary.MaxDifference(mass.System.MassToMole(byMass.Extract), byMole.Extract) < 1e-10);

        // Mass share of the extract = moles of extract times its mean molar mass over the feed's (exact).
        double mExtract = mass.System.MeanMolarMass(byMass.Extract);
        double mFeed = mass.System.MeanMolarMass(zMass);
        Assert.Equal(byMole.ExtractFraction * mExtract / mFeed, byMass.ExtractFraction, 1e-10);
        Assert.True(ActivityAssertions.BalanceResidual(byMass, zMass) < 1e-12);
    }

    public static TheoryData<double, double, bool> Grid()
    {
        // Two phases except beyond the binodal on the solvent-rich side (checked by the independent Gibbs-energy
        // minimisation of SplitAgainstGibbsMinimisationTests): solvent share 0.7 from 5 % solute, 0.5 at 14 %.
        var data = new TheoryData<double, double, bool>();
        foreach (double s in new[] { 0.0, 0.02, 0.05, 0.08, 0.11, 0.14 })
        {
            foreach (double v in new[] { 0.1, 0.3, 0.5, 0.7 })
            {
                bool onePhase = (v == 0.7 && s >= 0.05) || (v == 0.5 && s == 0.14);
                data.Add(s, v, !onePhase);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Grid))]
    public void Split_ColdStartOnAGrid_SatisfiesIsoactivityAndBalance(double solute, double solventShare, bool twoPhase)
    {
        var z = new Ternary(solute, (1 - solute) * (1 - solventShare), (1 - solute) * solventShare);
        ActivityAssertions.SplitIsSound(ReferenceNrtl.Model(), z, T, twoPhase);
    }

    [Fact]
    public void Split_WarmStartFromANeighbour_AgreesWithColdStart()
    {
        NrtlModel model = ReferenceNrtl.Model();
        var random = new Random(5);
        PhaseSplit previous = model.Split(new Ternary(0.06, 0.52, 0.42), T);
        for (int n = 0; n < 200; n++)
        {
            TieLine line = model.TieLineFromRaffinate(random.NextDouble() * 0.15, T);
            double beta = 0.05 + (0.9 * random.NextDouble());
            Ternary z = ((1 - beta) * line.Raffinate) + (beta * line.Extract);
            PhaseSplit cold = model.Split(z, T);
            PhaseSplit warm = model.Split(z, T, previous);
            Assert.True(cold.IsTwoPhase && warm.IsTwoPhase, $"{z}");
            Assert.True(Ternary.MaxDifference(cold.Raffinate, warm.Raffinate) < 1e-9);
            Assert.True(Ternary.MaxDifference(cold.Extract, warm.Extract) < 1e-9);
            Assert.Equal(cold.ExtractFraction, warm.ExtractFraction, 1e-9);
            Assert.True(Ternary.MaxDifference(cold.Raffinate, line.Raffinate) < 1e-8);
            Assert.Equal(beta, cold.ExtractFraction, 1e-7);
            previous = warm;
        }
    }

    [Fact]
    public void Split_ColdStartWithoutTracedTieLines_GivesTheSameAnswers()
    {
        // The stability-test path alone (no traced tie lines to start from) against the default path.
        NrtlModel plain = new(ReferenceNrtl.System(), ReferenceNrtl.Pairs, new TemperatureRange(298.15, 353.15)) { ColdStartFromTieLines = false };
        NrtlModel traced = ReferenceNrtl.Model();
        _ = traced.SoluteLimits(T);
        var random = new Random(23);
        for (int n = 0; n < 100; n++)
        {
            var z = new Ternary(0.2 * random.NextDouble(), random.NextDouble(), random.NextDouble());
            z = z.Normalized();
            PhaseSplit a = plain.Split(z, T);
            PhaseSplit b = traced.Split(z, T);
            Assert.Equal(a.IsTwoPhase, b.IsTwoPhase);
            Assert.True(Ternary.MaxDifference(a.Raffinate, b.Raffinate) < 1e-9, $"{z}");
            Assert.True(Ternary.MaxDifference(a.Extract, b.Extract) < 1e-9, $"{z}");
            Assert.Equal(a.ExtractFraction, b.ExtractFraction, 1e-9);
        }
    }

    [Theory]
    [InlineData(0.1, 0.9, 0.0)]
    [InlineData(0.05, 0.93, 0.02)]
    [InlineData(0.5, 0.3, 0.2)]
    [InlineData(0.3, 0.0, 0.7)]
    [InlineData(0.0, 0.0, 1.0)]
    [InlineData(0.0, 1.0, 0.0)]
    [InlineData(1.0, 0.0, 0.0)]
    [InlineData(0.05, 0.05, 0.9)]
    public void Split_PointsClearlyOutside_AreStableAndOnePhase(double s, double d, double v)
    {
        NrtlModel model = ReferenceNrtl.Model();
        var z = new Ternary(s, d, v);
        Assert.True(model.TestStability(z, T).IsStable);
        PhaseSplit split = model.Split(z, T);
        Assert.False(split.IsTwoPhase);
        Assert.Equal(z, split.Raffinate);
    }

    [Fact]
    public void TestStability_ReferenceFeed_IsUnstableWithAWaterRichTrialPhase()
    {
        StabilityTestResult result = ReferenceNrtl.Model().TestStability(new Ternary(0.06, 0.52, 0.42), T);
        Assert.False(result.IsStable);
        Assert.True(result.TangentPlaneDistance < 0);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(0.01)]
    [InlineData(0.03024)]
    [InlineData(0.08)]
    [InlineData(0.15)]
    public void TieLineFromRaffinate_SatisfiesIsoactivityAndRoundTrips(double x)
    {
        NrtlModel model = ReferenceNrtl.Model();
        TieLine line = model.TieLineFromRaffinate(x, T);
        Assert.Equal(x, line.Raffinate.Solute, 1e-12);
        Assert.True(ActivityAssertions.IsoactivityResidual(model, line, T) < 1e-9);
        if (x <= 0.1)
        {
            // Beyond about 0.14 the extract solute passes a maximum (0.182) before the plait point, so an extract
            // solute fraction there belongs to two tie lines; the model returns the one nearer the binary end.
            TieLine back = model.TieLineFromExtract(line.Extract.Solute, T);
            Assert.True(Ternary.MaxDifference(line.Raffinate, back.Raffinate) < 1e-8);
        }
    }

    [Fact]
    public void TieLineFromRaffinate_ReferenceRaffinate_GivesTheReferenceExtract()
    {
        // The reference flash's water-rich phase has ethanol 0.03024; its conjugate is the ester-rich phase
        // (0.58177, 0.34614, 0.07210) to the printed digits (reference notes section 3).
        TieLine line = ReferenceNrtl.Model().TieLineFromRaffinate(0.03024, T);
        Assert.Equal(0.07210, line.Extract.Solute, 5e-5);
        Assert.Equal(0.58177, line.Extract.Solvent, 5e-5);
    }

    [Fact]
    public void SoluteLimits_NearThePlaitPoint_SplitsJustInsideWithoutError()
    {
        NrtlModel model = ReferenceNrtl.Model();
        SoluteLimits limits = model.SoluteLimits(T);
        Assert.InRange(limits.Raffinate, 0.1, 0.3);
        Assert.Throws<EquilibriumException>(() => model.TieLineFromRaffinate(limits.Raffinate + 0.01, T));
        TieLine nearPlait = model.TieLineFromRaffinate(limits.Raffinate * 0.999, T);
        Assert.True(ActivityAssertions.IsoactivityResidual(model, nearPlait, T) < 1e-9);
        Ternary z = 0.5 * (nearPlait.Raffinate + nearPlait.Extract);
        PhaseSplit split = model.Split(z, T);
        Assert.True(split.IsTwoPhase);
        Assert.True(ActivityAssertions.BalanceResidual(split, z) < 1e-12);
        Assert.True(model.EstimatePlaitPoint(T).Found);
    }

    [Fact]
    public void Constructor_MissingPair_ThrowsNamingIt()
    {
        ArgumentException ex = Assert.Throws<ArgumentException>(() =>
            new NrtlModel(ReferenceNrtl.System(), ReferenceNrtl.Pairs[..2], new TemperatureRange(300, 350)));
        Assert.Contains("ethanol-water", ex.Message, StringComparison.Ordinal);
        Assert.Contains("missing", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Constructor_RepeatedPair_Throws()
    {
        NrtlPair[] pairs = [.. ReferenceNrtl.Pairs, new NrtlPair(1, 2, 0.4, 0, 0, 2510, 1335, InteractionUnits.CaloriePerMole)];
        ArgumentException ex = Assert.Throws<ArgumentException>(() => new NrtlModel(ReferenceNrtl.System(), pairs, new TemperatureRange(300, 350)));
        Assert.Contains("twice", ex.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0.2, 0.3, 0.5)]
    [InlineData(0.05, 0.9, 0.05)]
    [InlineData(0.6, 0.2, 0.2)]
    public void LnGamma_GibbsDuhem_Holds(double s, double d, double v)
    {
        // Exact identity sum_i x_i d ln gamma_i = 0 at constant T (thermodynamics); central differences, error ~1e-9.
        NrtlModel model = ReferenceNrtl.Model();
        double[] x = [s, d, v];
        Assert.True(Math.Abs(ActivityAssertions.GibbsDuhemResidual(model, T, x, 0, 1)) < 1e-7);
        Assert.True(Math.Abs(ActivityAssertions.GibbsDuhemResidual(model, T, x, 2, 0)) < 1e-7);
    }

    [Theory]
    [InlineData(0.2, 0.3, 0.5)]
    [InlineData(0.05, 0.9, 0.05)]
    [InlineData(0.0, 0.4, 0.6)]
    public void LnGammaDerivatives_MatchCentralDifferences(double s, double d, double v)
    {
        // d ln gamma_i / d n_j at one mole, against central differences of the mole numbers (error about 1e-9).
        NrtlModel model = ReferenceNrtl.Model();
        double[] x = [s, d, v];
        Span<double> lg = stackalloc double[3];
        Span<double> analytic = stackalloc double[9];
        Assert.True(model.TryLnGammaDerivatives(T, x, lg, analytic));
        Span<double> plus = stackalloc double[3];
        Span<double> minus = stackalloc double[3];
        Span<double> lgPlus = stackalloc double[3];
        Span<double> lgMinus = stackalloc double[3];
        const double H = 1e-6;
        for (int j = 0; j < 3; j++)
        {
            x.CopyTo(plus);
            x.CopyTo(minus);
            plus[j] += H;
            minus[j] -= H;
            double tp = plus[0] + plus[1] + plus[2];
            double tm = minus[0] + minus[1] + minus[2];
            for (int i = 0; i < 3; i++)
            {
                plus[i] /= tp;
                minus[i] /= tm;
            }

            if (minus[j] < 0)
            {
                continue;
            }

            model.LnGamma(T, plus, lgPlus);
            model.LnGamma(T, minus, lgMinus);
            for (int i = 0; i < 3; i++)
            {
                Assert.Equal((lgPlus[i] - lgMinus[i]) / (2 * H), analytic[(i * 3) + j], 1e-7);
            }
        }
    }

    [Fact]
    public void LnGamma_PureComponent_IsZero()
    {
        NrtlModel model = ReferenceNrtl.Model();
        Span<double> lg = stackalloc double[3];
        model.LnGamma(T, [0, 0, 1], lg);
        Assert.Equal(0, lg[2], 1e-14);
    }
}
