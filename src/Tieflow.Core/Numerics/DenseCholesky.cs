namespace Tieflow.Core.Numerics;

/// <summary>
/// Cholesky factorisation G = L L' of a small dense symmetric positive definite matrix in row-major storage, in place
/// (L in the lower triangle), and the solves with it. For matrices of tens of rows, without the bookkeeping of a
/// general library routine.
/// </summary>
internal static class DenseCholesky
{
    /// <summary>Factorises the n x n matrix <paramref name="g"/> in place; false when a pivot is not above zero.</summary>
    public static bool Factor(Span<double> g, int n)
    {
        for (int j = 0; j < n; j++)
        {
            double d = g[(j * n) + j];
            for (int k = 0; k < j; k++)
            {
                d -= g[(j * n) + k] * g[(j * n) + k];
            }

            if (!(d > 0))
            {
                return false;
            }

            double ljj = Math.Sqrt(d);
            g[(j * n) + j] = ljj;
            for (int i = j + 1; i < n; i++)
            {
                double sum = g[(i * n) + j];
                for (int k = 0; k < j; k++)
                {
                    sum -= g[(i * n) + k] * g[(j * n) + k];
                }

                g[(i * n) + j] = sum / ljj;
            }
        }

        return true;
    }

    /// <summary>Solves L y = b in place (forward substitution) with the factor from <see cref="Factor"/>.</summary>
    public static void ForwardSolve(ReadOnlySpan<double> l, int n, Span<double> x)
    {
        for (int i = 0; i < n; i++)
        {
            double sum = x[i];
            for (int j = 0; j < i; j++)
            {
                sum -= l[(i * n) + j] * x[j];
            }

            x[i] = sum / l[(i * n) + i];
        }
    }

    /// <summary>Solves L' x = y in place (back substitution) with the factor from <see cref="Factor"/>.</summary>
    public static void BackSolve(ReadOnlySpan<double> l, int n, Span<double> x)
    {
        for (int i = n - 1; i >= 0; i--)
        {
            double sum = x[i];
            for (int j = i + 1; j < n; j++)
            {
                sum -= l[(j * n) + i] * x[j];
            }

            x[i] = sum / l[(i * n) + i];
        }
    }

    /// <summary>Solves G x = b in place with the factor from <see cref="Factor"/>.</summary>
    public static void Solve(ReadOnlySpan<double> l, int n, Span<double> x)
    {
        ForwardSolve(l, n, x);
        BackSolve(l, n, x);
    }
}
