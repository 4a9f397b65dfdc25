using BenchmarkDotNet.Attributes;
using Tieflow.Core.Reconciliation;
using Tieflow.Core.Tests.Reconciliation;

namespace Tieflow.Bench.Reconciliation;

/// <summary>
/// Reconciliation speed. Each call reconciles one of 64 pre-drawn noisy reading sets (so that the solver never sees
/// the same data twice in a row) and includes classification, covariance, the global and the measurement tests.
/// Targets: six-stage ternary train (bilinear) at least 10,000 per second, 28-stream flow-only at least 200,000.
/// </summary>
[MemoryDiagnoser]
public class ReconciliationBenchmarks
{
    private const int Sets = 64;
    private ReconciliationProblem _train = null!;
    private ProcessNetwork _trainNetwork = null!;
    private List<Measurement>[] _trainMeasurements = null!;
    private double[][] _trainReadings = null!;
    private ReconciliationProblem _flow = null!;
    private ProcessNetwork _flowNetwork = null!;
    private List<Measurement>[] _flowMeasurements = null!;
    private double[][] _flowReadings = null!;
    private int _next;

    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(42);
        ProcessNetwork train = TestNetworks.SixStageTrain();
        double[] truth = TestNetworks.SixStageTrainState();
        var template = new List<Measurement>();
        for (int v = 0; v < train.QuantityCount; v++)
        {
            QuantityKey key = train.KeyAt(v);
            if (TestNetworks.IsMeasuredInTrain(key))
            {
                template.Add(new Measurement(key, truth[v], key.Quantity == MeasuredQuantity.Flow ? 0.01 * truth[v] : 0.002));
            }
        }

        _train = ReconciliationProblem.Create(train, template);
        _trainNetwork = train;
        _trainReadings = new double[Sets][];
        _trainMeasurements = new List<Measurement>[Sets];
        for (int s = 0; s < Sets; s++)
        {
            _trainReadings[s] = [.. template.Select(m => Math.Clamp(m.Value + (m.Sigma * TestNetworks.Gaussian(random)), 0, m.Key.Quantity == MeasuredQuantity.Flow ? double.MaxValue : 1))];
            double[] readings = _trainReadings[s];
            _trainMeasurements[s] = [.. template.Select((m, i) => m with { Value = readings[i] })];
        }

        // 28 streams, 22 measured (six internal streams unmeasured), sigma 2 % of the flow.
        _flowNetwork = TestNetworks.ElevenNodeNetwork();
        double[] flows = TestNetworks.ConsistentFlows(_flowNetwork, random);
        string[] unmeasured = ["C3", "C7", "B2", "B5", "B8", "R9"];
        var measured = _flowNetwork.Streams.Select((s, i) => (s.Id, i)).Where(p => !unmeasured.Contains(p.Id)).ToList();
        _flowMeasurements = new List<Measurement>[Sets];
        _flowReadings = new double[Sets][];
        for (int s = 0; s < Sets; s++)
        {
            _flowMeasurements[s] = [.. measured.Select(p => Measurement.Flow(p.Id, flows[p.i] + (0.02 * flows[p.i] * TestNetworks.Gaussian(random)), 0.02 * flows[p.i]))];
            _flowReadings[s] = [.. _flowMeasurements[s].Select(m => m.Value)];
        }

        _flow = ReconciliationProblem.Create(_flowNetwork, _flowMeasurements[0]);
    }

    [Benchmark]
    public double TernaryTrainBilinear()
    {
        ReconciliationResult r = _train.Reconcile(_trainReadings[_next++ & (Sets - 1)]);
        return r.GlobalTest.Statistic;
    }

    [Benchmark]
    public double TernaryTrainBilinearPreparedEachCall()
    {
        ReconciliationResult r = ReconciliationProblem.Create(_trainNetwork, _trainMeasurements[_next++ & (Sets - 1)]).Reconcile();
        return r.GlobalTest.Statistic;
    }

    [Benchmark]
    public double FlowOnly28Streams()
    {
        ReconciliationResult r = _flow.Reconcile(_flowReadings[_next++ & (Sets - 1)]);
        return r.GlobalTest.Statistic;
    }

    [Benchmark]
    public double FlowOnly28StreamsPreparedEachCall()
    {
        ReconciliationResult r = ReconciliationProblem.Create(_flowNetwork, _flowMeasurements[_next++ & (Sets - 1)]).Reconcile();
        return r.GlobalTest.Statistic;
    }
}
