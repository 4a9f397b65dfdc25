using BenchmarkDotNet.Attributes;
using Tieflow.Core.Reconciliation;
using Tieflow.Core.Tests.Reconciliation;

namespace Tieflow.Bench.Reconciliation;

/// <summary>
/// How the bilinear reconciliation of a counter-current train grows with its stage count: 2 to 48 stages, measured
/// as in the six-stage benchmark (boundary streams complete, solute and diluent of every internal stream), one of 16
/// pre-drawn noisy reading sets per call. Run: <c>dotnet run -c Release --project tests/Tieflow.Bench -- --filter '*TrainScaling*'</c>;
/// the log-log slope of time against stages is the figure to watch (1 is linear).
/// </summary>
[MemoryDiagnoser]
[ShortRunJob]
public class TrainScalingBenchmarks
{
    private const int Sets = 16;
    private ReconciliationProblem _problem = null!;
    private double[][] _readings = null!;
    private int _next;

    /// <summary>Stages of the train.</summary>
    [Params(2, 4, 8, 12, 16, 24, 32, 48)]
    public int Stages { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(42);
        ProcessNetwork train = TestNetworks.Train(Stages);
        double[] truth = TestNetworks.TrainState(Stages);
        var template = new List<Measurement>();
        for (int v = 0; v < train.QuantityCount; v++)
        {
            QuantityKey key = train.KeyAt(v);
            if (TestNetworks.IsMeasuredInTrain(key, Stages))
            {
                template.Add(new Measurement(key, truth[v], TestNetworks.TrainSigma(key, truth[v])));
            }
        }

        _problem = ReconciliationProblem.Create(train, template);
        _readings = new double[Sets][];
        for (int s = 0; s < Sets; s++)
        {
            _readings[s] = [.. template.Select(m => Math.Clamp(m.Value + (m.Sigma * TestNetworks.Gaussian(random)), 0, m.Key.Quantity == MeasuredQuantity.Flow ? double.MaxValue : 1))];
        }
    }

    [Benchmark]
    public int Reconcile() => _problem.Reconcile(_readings[_next++ & (Sets - 1)]).Iterations;
}
