namespace Tieflow.Core.Numerics;

/// <summary>In-place Gaussian elimination with partial pivoting on small dense systems (row-major storage).</summary>
internal static class DenseLinear
{
    /// <summary>Solves A x = b, overwriting A and putting x into b; false when A is singular to working precision.</summary>
    public static bool Solve(double[] a, double[] b, int n)
    {
        double scale = 0;
        for (int i = 0; i < n * n; i++)
        {
            scale = Math.Max(scale, Math.Abs(a[i]));
        }

        double tiny = 1e-14 * scale;
        for (int k = 0; k < n; k++)
        {
            int pivot = k;
            double best = Math.Abs(a[(k * n) + k]);
            for (int i = k + 1; i < n; i++)
            {
                double v = Math.Abs(a[(i * n) + k]);
                if (v > best)
                {
                    best = v;
                    pivot = i;
                }
            }

            if (!(best > tiny))
            {
                return false;
            }

            if (pivot != k)
            {
                for (int j = k; j < n; j++)
                {
                    (a[(k * n) + j], a[(pivot * n) + j]) = (a[(pivot * n) + j], a[(k * n) + j]);
                }

                (b[k], b[pivot]) = (b[pivot], b[k]);
            }

            double diag = a[(k * n) + k];
            for (int i = k + 1; i < n; i++)
            {
                double factor = a[(i * n) + k] / diag;
                if (factor == 0)
                {
                    continue;
                }

                for (int j = k + 1; j < n; j++)
                {
                    a[(i * n) + j] -= factor * a[(k * n) + j];
                }

                b[i] -= factor * b[k];
            }
        }

        for (int i = n - 1; i >= 0; i--)
        {
            double sum = b[i];
            for (int j = i + 1; j < n; j++)
            {
                sum -= a[(i * n) + j] * b[j];
            }

            b[i] = sum / a[(i * n) + i];
        }

        return true;
    }
}
