using Tieflow.Core.Numerics;

namespace Tieflow.Core.Equilibrium.Distribution;

/// <summary>
/// A rising isotherm Y = f(X) through table points: the shared monotone cubic between the points, and beyond the last
/// point a straight line along the last interval's chord; with its inverse X = f^-1(Y).
/// </summary>
internal sealed class IsothermCurve
{
    private readonly MonotoneCubic _cubic;
    private readonly double _lastX;
    private readonly double _lastY;
    private readonly double _lastSlope;

    /// <summary>Points strictly rising in X and in Y, at least two.</summary>
    public IsothermCurve(double[] x, double[] y)
    {
        _cubic = new MonotoneCubic(x, y);
        int n = x.Length;
        _lastX = x[n - 1];
        _lastY = y[n - 1];
        _lastSlope = (y[n - 1] - y[n - 2]) / (x[n - 1] - x[n - 2]);
    }

    public double Evaluate(double x) => x >= _lastX ? _lastY + ((x - _lastX) * _lastSlope) : _cubic.Value(0, x);

    /// <summary>The X whose Y is <paramref name="y"/> (y at least the first point's value).</summary>
    public double Inverse(double y) => y >= _lastY ? _lastX + ((y - _lastY) / _lastSlope) : _cubic.FirstCrossing(0, y);
}
