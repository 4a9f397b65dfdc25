using Tieflow.Core.Reconciliation;

namespace Tieflow.Core.Tests.Reconciliation;

public sealed class NodeAccumulationTests
{
    private static ProcessNetwork Tank(IEnumerable<string>? components = null) =>
        new(["T"], [new NetworkStream("in", null, "T"), new NetworkStream("out", "T", null)], components);

    [Fact]
    public void FlowOnly_AccumulationThatExplainsTheImbalance_LeavesTheReadingsAlone()
    {
        // 100 in, 90 out: a tank filling at 10 per hour closes its balance with no adjustment (analytic).
        Measurement[] m = [Measurement.Flow("in", 100, 1), Measurement.Flow("out", 90, 1)];
        ReconciliationResult steady = ReconciliationProblem.Create(Tank(), m).Reconcile();
        ReconciliationResult filling = ReconciliationProblem.Create(Tank(), m, null, [new NodeAccumulation("T", null, 10)]).Reconcile();

        // Steady: equal weights split the imbalance, and the statistic is 5^2 + 5^2 (analytic).
        Assert.Equal(95, steady.Flow("in").Value, 9);
        Assert.Equal(50, steady.GlobalTest.Statistic, 6);
        Assert.Equal(100, filling.Flow("in").Value, 9);
        Assert.Equal(90, filling.Flow("out").Value, 9);
        Assert.Equal(0, filling.GlobalTest.Statistic, 9);
    }

    [Fact]
    public void Components_EstimatesKeepTheBalanceWithTheAccumulation()
    {
        // A tank losing 4 per hour of A and gaining 4 of B: the reconciled component flows keep in - out = accumulation.
        Measurement[] m =
        [
            Measurement.Flow("in", 100, 1), Measurement.Flow("out", 100.5, 1),
            Measurement.Fraction("in", "A", 0.30, 0.002), Measurement.Fraction("out", "A", 0.3405, 0.002),
        ];
        NodeAccumulation[] acc = [new("T", "A", -4), new("T", "B", 4)];
        ReconciliationResult r = ReconciliationProblem.Create(Tank(["A", "B"]), m, null, acc).Reconcile();

        double inA = r.Flow("in").Value * r.Fraction("in", "A").Value;
        double outA = r.Flow("out").Value * r.Fraction("out", "A").Value;
        double inB = r.Flow("in").Value * r.Fraction("in", "B").Value;
        double outB = r.Flow("out").Value * r.Fraction("out", "B").Value;
        Assert.Equal(-4, inA - outA, 6);
        Assert.Equal(4, inB - outB, 6);
        Assert.True(r.GlobalTest.Passed);
    }

    [Theory]
    [InlineData("X", null, 1.0, "unknown node")]
    [InlineData("T", "C", 1.0, "not declared")]
    [InlineData("T", "A", double.NaN, "expected a finite number")]
    public void BadAccumulation_IsRejectedByName(string node, string? component, double rate, string expected)
    {
        Measurement[] m = [Measurement.Flow("in", 100, 1), Measurement.Flow("out", 90, 1)];
        var ex = Assert.Throws<ArgumentException>(() => ReconciliationProblem.Create(Tank(["A", "B"]), m, null, [new NodeAccumulation(node, component, rate)]));
        Assert.Contains(expected, ex.Message, StringComparison.Ordinal);
        Assert.Contains($"node '{node}'", ex.Message, StringComparison.Ordinal);
    }
}
