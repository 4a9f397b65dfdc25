using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;
using Tieflow.Core.Tests.Reference;
using Xunit.Abstractions;

namespace Tieflow.Core.Tests.Equilibrium;

/// <summary>
/// The activity models' split against an independent Gibbs-energy minimisation (<see cref="GibbsMinimisation"/>) over
/// the whole two-phase region of the NRTL and UNIQUAC sample systems at several temperatures, the plait-point region
/// included (exact thermodynamics, no published values: the minimum of the Gibbs energy is the equilibrium).
/// </summary>
public sealed class SplitAgainstGibbsMinimisationTests
{
    private static readonly Dictionary<(string, double), (GibbsMinimisation, List<double[]>, GibbsMinimisation.Reference[])> Surveys = [];

    private readonly ITestOutputHelper _output;

    public SplitAgainstGibbsMinimisationTests(ITestOutputHelper output) => _output = output;

    /// <summary>How the model met the feed: one model for the whole survey in grid order, a fresh model for every
    /// feed, or one that last worked at another temperature.</summary>
    public enum History
    {
        Shared,
        Fresh,
        OtherTemperature,
    }

    public static TheoryData<string, double, History> Cases()
    {
        var data = new TheoryData<string, double, History>();
        foreach (History h in Enum.GetValues<History>())
        {
            data.Add("nrtl", 323.15, h);
            data.Add("nrtl", 343.0, h);
            data.Add("nrtl", 363.15, h);
            data.Add("uniquac", 308.15, h);
            data.Add("uniquac", 318.15, h);
            data.Add("uniquac", 328.15, h);
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Split_OverTheTwoPhaseRegion_IsTheGibbsEnergyMinimum(string system, double t, History history)
    {
        ActivityCoefficientModel shared = Create(system);
        (GibbsMinimisation reference, List<double[]> feeds, GibbsMinimisation.Reference[] answers) = Survey(system, t);
        var failures = new List<string>();
        int twoPhase = 0;
        int onePhase = 0;
        for (int k = 0; k < feeds.Count; k++)
        {
            // A fresh model traces its tie lines anew for every feed (a few milliseconds): those histories take a
            // sample of the feeds, denser near the plait point.
            int stride = history == History.Fresh ? 3 : 7;
            if (history != History.Shared && k % stride != 0)
            {
                continue;
            }

            double[] z = feeds[k];
            ActivityCoefficientModel model = shared;
            if (history != History.Shared)
            {
                model = Create(system);
                if (history == History.OtherTemperature)
                {
                    _ = model.SoluteLimits(t + 5);
                }
            }

            string? failure = Compare(model, reference, answers[k], z, t, ref twoPhase, ref onePhase);
            if (failure is not null)
            {
                failures.Add(failure);
            }
        }

        _output.WriteLine($"{system} at {t} K, {history}: {feeds.Count} feeds, {twoPhase} two-phase, {onePhase} one-phase, {failures.Count} disagreements");
        foreach (string f in failures.Take(40))
        {
            _output.WriteLine(f);
        }

        Assert.Empty(failures);
    }

    [Theory]
    [InlineData("nrtl", 343.0)]
    [InlineData("uniquac", 318.15)]
    public void Split_NearThePlaitPoint_DoesNotDependOnCallOrder(string system, double t)
    {
        // The feeds around the plait point split by one model in order, by another in reverse order after work at
        // other temperatures, and each by a fresh model: the same answers.
        List<double[]> feeds = Feeds(Create(system), t, includeGrid: false);
        ActivityCoefficientModel forward = Create(system);
        ActivityCoefficientModel backward = Create(system);
        _ = backward.SoluteLimits(t - 10);
        _ = backward.Split(new Ternary(0.1, 0.5, 0.4), t + 10);
        var first = feeds.Select(z => forward.Split(new Ternary(z[0], z[1], z[2]), t)).ToArray();
        for (int k = feeds.Count - 1; k >= 0; k--)
        {
            var z = new Ternary(feeds[k][0], feeds[k][1], feeds[k][2]);
            PhaseSplit again = backward.Split(z, t);
            PhaseSplit fresh = k % 5 == 0 ? Create(system).Split(z, t) : again;
            foreach (PhaseSplit other in new[] { again, fresh })
            {
                Assert.True(first[k].IsTwoPhase == other.IsTwoPhase, $"{z}: {first[k].IsTwoPhase} then {other.IsTwoPhase}");
                Assert.True(Ternary.MaxDifference(first[k].Raffinate, other.Raffinate) < 1e-9, $"{z}");
                Assert.True(Ternary.MaxDifference(first[k].Extract, other.Extract) < 1e-9, $"{z}");
            }
        }
    }

    // The reference answers are the same for every history: computed once per system and temperature.
    private static (GibbsMinimisation Reference, List<double[]> Feeds, GibbsMinimisation.Reference[] Answers) Survey(string system, double t)
    {
        lock (Surveys)
        {
            if (!Surveys.TryGetValue((system, t), out var survey))
            {
                var reference = new GibbsMinimisation(Create(system), t);
                List<double[]> feeds = Feeds(Create(system), t);
                survey = (reference, feeds, feeds.Select(z => reference.Solve(z)).ToArray());
                Surveys[(system, t)] = survey;
            }

            return survey;
        }
    }

    internal static ActivityCoefficientModel Create(string system) => system switch
    {
        "nrtl" => new NrtlModel(ReferenceNrtl.System(), ReferenceNrtl.Pairs, new TemperatureRange(298.15, 363.15)),
        _ => ReferenceUniquac.AcetonitrileBenzeneHeptane(),
    };

    // A grid over the triangle, and a dense patch around the plait point.
    internal static List<double[]> Feeds(ActivityCoefficientModel model, double t, bool includeGrid = true)
    {
        var feeds = new List<double[]>();
        int n = includeGrid ? 40 : -1;
        for (int i = 0; i <= n; i++)
        {
            for (int j = 0; i + j <= n; j++)
            {
                double s = i / (double)n;
                double d = j / (double)n;
                double v = 1 - s - d;
                if (s > 1e-9 && d > 1e-9 && v > 1e-9)
                {
                    feeds.Add([s, d, v]);
                }
            }
        }

        Ternary p = model.System.ToMole(model.EstimatePlaitPoint(t).Composition);
        for (int i = -15; i <= 15; i++)
        {
            for (int j = -15; j <= 15; j++)
            {
                double s = p.Solute + (0.004 * i);
                double v = p.Solvent + (0.004 * j);
                double d = 1 - s - v;
                if (s > 1e-6 && d > 1e-6 && v > 1e-6)
                {
                    feeds.Add([s, d, v]);
                }
            }
        }

        return feeds;
    }

    internal static string? Compare(ActivityCoefficientModel model, GibbsMinimisation reference, GibbsMinimisation.Reference r, double[] z, double t, ref int twoPhase, ref int onePhase)
    {
        var zt = new Ternary(z[0], z[1], z[2]);
        PhaseSplit split = model.Split(zt, t);
        if (r.Unstable && !r.TwoPhase)
        {
            return $"{Show(z)}: the reference minimisation did not converge (grid tpd {r.GridTpd:G3}, curvature {r.Curvature:G3})";
        }

        if (!split.IsTwoPhase)
        {
            onePhase++;
            return r.TwoPhase
                ? $"{Show(z)}: one phase, but the reference splits into {Show(r.PhaseA!)} and {Show(r.PhaseB!)} (length {Length(r.PhaseA!, r.PhaseB!):G3}, grid tpd {r.GridTpd:G3}, curvature {r.Curvature:G3}, energy {r.Energy - reference.G(z):G3} below one phase)"
                : null;
        }

        twoPhase++;
        double[] ra = [split.Raffinate.Solute, split.Raffinate.Diluent, split.Raffinate.Solvent];
        double[] ex = [split.Extract.Solute, split.Extract.Diluent, split.Extract.Solvent];
        double energy = reference.Energy(ra, ex, split.ExtractFraction);
        double length = Length(ra, ex);
        if (!r.TwoPhase)
        {
            // The grid is finite: a split the grid cannot see must still be a genuine minimum, below one phase, with
            // its tangent plane below the Gibbs energy everywhere, and shorter than the grid can resolve.
            return energy < reference.G(z) && reference.Certificate(ra) > -1e-9 && length < 3 * reference.GridSpacing
                ? null
                : $"{Show(z)}: two phases {Show(ra)} and {Show(ex)} (length {length:G3}), but the reference finds one phase (grid tpd {r.GridTpd:G3})";
        }

        // Match the reference phases in either order.
        double[] a = r.PhaseA!;
        double[] b = r.PhaseB!;
        double direct = Math.Max(Length(ra, a), Length(ex, b));
        double swapped = Math.Max(Length(ra, b), Length(ex, a));
        double difference = Math.Min(direct, swapped);
        double certificate = reference.Certificate(ra);
        // Near the plait point the energy is flat along the binodal and the reference resolves the phases only to
        // about its gradient tolerance over the curvature: there a split as low in energy as the reference's and
        // isoactive to 1e-10 is the minimum too.
        double tolerance = length > 0.02 ? 1e-7 : Math.Max(1e-7, 0.05 * length);
        bool asLow = energy <= r.Energy + 1e-14 && length <= 0.02 && Isoactivity(reference, ra, ex) < 1e-10;
        return (difference < tolerance || asLow) && energy <= r.Energy + 1e-12 && certificate > -1e-9
            ? null
            : $"{Show(z)}: split {Show(ra)} / {Show(ex)} differs from the reference {Show(a)} / {Show(b)} by {difference:G3}, energy {energy - r.Energy:G3}, certificate {certificate:G3}";
    }

    private static double Isoactivity(GibbsMinimisation reference, double[] a, double[] b)
    {
        Span<double> ma = stackalloc double[3];
        Span<double> mb = stackalloc double[3];
        reference.Mu(a, ma);
        reference.Mu(b, mb);
        return Math.Max(Math.Abs(ma[0] - mb[0]), Math.Max(Math.Abs(ma[1] - mb[1]), Math.Abs(ma[2] - mb[2])));
    }

    private static double Length(double[] a, double[] b) => Math.Max(Math.Abs(a[0] - b[0]), Math.Max(Math.Abs(a[1] - b[1]), Math.Abs(a[2] - b[2])));

    private static string Show(double[] x) => FormattableString.Invariant($"({x[0]:F5}, {x[1]:F5}, {x[2]:F5})");
}
