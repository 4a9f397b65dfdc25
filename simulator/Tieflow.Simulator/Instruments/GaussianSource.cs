namespace Tieflow.Simulator.Instruments;

/// <summary>
/// Deterministic normal deviates: xoshiro256** (Blackman and Vigna, 2018) seeded through SplitMix64 from the
/// scenario's seed and a stream number, with the Box-Muller transform. One source per instrument and lab point, so
/// that adding an instrument to a plant does not change the noise of the others. Our own generator rather than
/// System.Random so that the sequence is fixed by this code, not by the runtime's choice of algorithm.
/// </summary>
internal sealed class GaussianSource
{
    private ulong _s0;
    private ulong _s1;
    private ulong _s2;
    private ulong _s3;
    private double _spare;
    private bool _hasSpare;

    public GaussianSource(int seed, int stream)
    {
        ulong x = unchecked(((ulong)(uint)seed << 32) ^ ((uint)stream * 0x9E3779B97F4A7C15UL) ^ 0x5DEECE66DUL);
        _s0 = SplitMix(ref x);
        _s1 = SplitMix(ref x);
        _s2 = SplitMix(ref x);
        _s3 = SplitMix(ref x);
    }

    /// <summary>A uniform deviate in (0, 1).</summary>
    public double NextUniform()
    {
        ulong result = unchecked(RotateLeft(_s1 * 5, 7) * 9);
        ulong t = _s1 << 17;
        _s2 ^= _s0;
        _s3 ^= _s1;
        _s1 ^= _s2;
        _s0 ^= _s3;
        _s2 ^= t;
        _s3 = RotateLeft(_s3, 45);
        return ((result >> 11) + 0.5) * (1.0 / (1UL << 53));
    }

    /// <summary>A standard normal deviate.</summary>
    public double NextStandardNormal()
    {
        if (_hasSpare)
        {
            _hasSpare = false;
            return _spare;
        }

        double radius = Math.Sqrt(-2.0 * Math.Log(NextUniform()));
        double angle = 2.0 * Math.PI * NextUniform();
        _spare = radius * Math.Sin(angle);
        _hasSpare = true;
        return radius * Math.Cos(angle);
    }

    private static ulong RotateLeft(ulong x, int k) => (x << k) | (x >> (64 - k));

    private static ulong SplitMix(ref ulong x)
    {
        unchecked
        {
            ulong z = x += 0x9E3779B97F4A7C15UL;
            z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
            z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
            return z ^ (z >> 31);
        }
    }
}
