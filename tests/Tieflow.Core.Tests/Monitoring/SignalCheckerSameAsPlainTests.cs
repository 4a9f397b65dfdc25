using MathNet.Numerics.Distributions;
using Tieflow.Core.Monitoring;
using Tieflow.Core.Monitoring.Signals;
using Tieflow.Core.Plant;

namespace Tieflow.Core.Tests.Monitoring;

/// <summary>
/// The signal checker keeps its recent values sorted and skips exact work that cannot change a verdict; it must judge
/// every reading exactly as the plain form of the same checks (sort the recent values for each reading, loop for the
/// spread), written out here, on streams with steps, spikes and spreads close to the frozen limit.
/// </summary>
public sealed class SignalCheckerSameAsPlainTests
{
    private static readonly DateTimeOffset T0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);

    [Theory]
    [InlineData("FI-301", 1)]
    [InlineData("FI-301", 2)]
    [InlineData("AI-312", 3)]
    public void EveryReading_IsJudgedAsByThePlainChecks(string tag, int seed)
    {
        Instrument instrument = DemoUnits.Train().FindInstrument(tag)!;
        var settings = new SignalCheckSettings();
        var checker = new SignalChecker(instrument, settings);
        var plain = new PlainChecker(instrument, settings);
        var random = new Random(seed);
        double level = instrument.IsAnalyzer ? 10 : 1000, spread = instrument.Sigma;
        int frozenOrSpike = 0;
        for (int i = 0; i < 30_000; i++)
        {
            double u = random.NextDouble();
            if (u < 0.002)
            {
                level += (random.NextDouble() - 0.5) * 40 * instrument.Sigma;
            }
            else if (u < 0.004)
            {
                // A spread near the frozen limit: a variance of about critical / (n - 1) sigma^2.
                spread = instrument.Sigma * Math.Sqrt(plain.Critical / (plain.Length - 1)) * (0.8 + (0.4 * random.NextDouble()));
            }
            else if (u < 0.006)
            {
                spread = instrument.Sigma;
            }

            double value = level + (spread * Normal.Sample(random, 0, 1));
            if (random.NextDouble() < 0.003)
            {
                value += (random.NextDouble() < 0.5 ? -1 : 1) * 30 * instrument.Sigma;
            }

            value = Math.Round(value, 3);
            var sample = new SignalSample(tag, T0.AddSeconds(instrument.IsAnalyzer ? 360 * i : i), value, SignalQuality.Good);
            TagCheckState fast = checker.Check(sample);
            (bool used, bool update, SignalProblem problem) = plain.Check(sample);
            Assert.True(fast.Used == used && fast.IsUpdate == update && fast.Problem == problem, $"reading {i}: {fast} against {(used, update, problem)}");
            frozenOrSpike += problem is SignalProblem.Frozen or SignalProblem.Spike ? 1 : 0;
        }

        Assert.True(frozenOrSpike > 20, $"{frozenOrSpike} readings judged frozen or spikes: the streams must test both");
    }

    /// <summary>The checks in their plain form (sort per reading, loops for the spread).</summary>
    private sealed class PlainChecker(Instrument instrument, SignalCheckSettings settings)
    {
        private readonly double[] _recent = new double[Math.Max(3, instrument.IsAnalyzer ? settings.AnalyzerHistory : settings.ContinuousHistory)];
        private readonly TimeSpan _interval = instrument.UpdateInterval ?? settings.ContinuousUpdateInterval;
        private int _count;
        private int _next;
        private DateTimeOffset? _lastUpdate;
        private double _lastValue = double.NaN;
        private double _pendingSpike;
        private double _pendingSpikeValue;
        private SignalQuality _lastQuality = SignalQuality.Good;
        private SignalProblem _problem;

        public int Length => _recent.Length;

        public double Critical => ChiSquared.InvCDF(_recent.Length - 1, settings.FrozenProbability);

        public (bool Used, bool Update, SignalProblem Problem) Check(SignalSample sample)
        {
            if (instrument.IsAnalyzer && _lastUpdate is { } last && sample.Quality != SignalQuality.Bad && _lastQuality != SignalQuality.Bad
                && sample.Value.Equals(_lastValue) && sample.Time - last < _interval * 1.5)
            {
                return (false, false, _problem);
            }

            _lastUpdate = sample.Time;
            _lastValue = sample.Value;
            _lastQuality = sample.Quality;
            if (sample.Quality == SignalQuality.Bad || !double.IsFinite(sample.Value))
            {
                return Set(SignalProblem.BadQuality, false);
            }

            if (!instrument.InRange(sample.Value))
            {
                return Set(SignalProblem.OutOfRange, false);
            }

            if (_count >= _recent.Length && IsSpike(sample.Value, out double side))
            {
                if (_pendingSpike != 0 && Math.Sign(side) == Math.Sign(_pendingSpike))
                {
                    _recent[0] = _pendingSpikeValue;
                    _next = 1;
                    _count = 1;
                    _pendingSpike = 0;
                }
                else
                {
                    _pendingSpike = side;
                    _pendingSpikeValue = sample.Value;
                    return (false, true, SignalProblem.Spike);
                }
            }
            else
            {
                _pendingSpike = 0;
            }

            _recent[_next] = sample.Value;
            _next = (_next + 1) % _recent.Length;
            _count = Math.Min(_count + 1, _recent.Length);
            return _count >= _recent.Length && IsFrozen() ? Set(SignalProblem.Frozen, false) : Set(SignalProblem.None, true);
        }

        private (bool, bool, SignalProblem) Set(SignalProblem problem, bool used)
        {
            _problem = problem;
            return (used, true, problem);
        }

        private bool IsFrozen()
        {
            double mean = 0;
            for (int i = 0; i < _recent.Length; i++)
            {
                mean += _recent[i];
            }

            mean /= _recent.Length;
            double ss = 0;
            for (int i = 0; i < _recent.Length; i++)
            {
                double d = _recent[i] - mean;
                ss += d * d;
            }

            double sigma = instrument.Sigma;
            return !(instrument.Resolution > 0 && instrument.Resolution > sigma) && ss / (sigma * sigma) < Critical;
        }

        private bool IsSpike(double value, out double side)
        {
            double[] sorted = [.. _recent];
            Array.Sort(sorted);
            double median = Median(sorted);
            for (int i = 0; i < sorted.Length; i++)
            {
                sorted[i] = Math.Abs(sorted[i] - median);
            }

            Array.Sort(sorted);
            double scale = Math.Max(1.4826 * Median(sorted), instrument.Sigma);
            side = value - median;
            double deviation = Math.Abs(side);
            return deviation / scale > settings.SpikeZ && deviation > settings.SpikeSigmas * instrument.Sigma;
        }

        private static double Median(double[] sorted)
        {
            int n = sorted.Length;
            return n % 2 == 1 ? sorted[n / 2] : 0.5 * (sorted[(n / 2) - 1] + sorted[n / 2]);
        }
    }
}
