namespace Tieflow.Core.Numerics;

/// <summary>
/// Cholesky factorisation with symmetric pivoting of a dense symmetric positive semidefinite p x p matrix in row-major
/// storage, P' G P = L L', in place, stopping at the numerical rank (Higham, Accuracy and Stability of Numerical
/// Algorithms, 2nd ed., SIAM 2002, section 10.3). A pivot is judged against the original diagonal of its own row, so
/// that a dependent row (roundoff only) is dropped whatever the scale of the others.
/// </summary>
internal static class PivotedCholesky
{
    /// <summary>
    /// Factorises <paramref name="g"/> in place: on return its leading q x q lower triangle holds L (rows and columns in
    /// pivoted order, the upper triangle mirrored), and <paramref name="selected"/> the original row of each position.
    /// </summary>
    /// <param name="g">The p x p matrix, row-major.</param>
    /// <param name="p">Order.</param>
    /// <param name="diag0">p doubles: the original diagonal (by original row) on return.</param>
    /// <param name="selected">p positions.</param>
    /// <param name="tolerance">Smallest ratio of a remaining diagonal to its original for a pivot.</param>
    /// <returns>The numerical rank q.</returns>
    public static int Factor(Span<double> g, int p, Span<double> diag0, Span<int> selected, double tolerance)
    {
        double maxDiag = 0;
        for (int i = 0; i < p; i++)
        {
            diag0[i] = g[(i * p) + i];
            maxDiag = Math.Max(maxDiag, diag0[i]);
            selected[i] = i;
        }

        int q = 0;
        for (int k = 0; k < p; k++)
        {
            int pivot = -1;
            double best = tolerance;
            for (int i = k; i < p; i++)
            {
                double d0 = diag0[selected[i]];
                double ratio = d0 > 0 ? g[(i * p) + i] / d0 : 0;
                if (ratio > best)
                {
                    best = ratio;
                    pivot = i;
                }
            }

            if (pivot < 0 || maxDiag <= 0)
            {
                break;
            }

            if (pivot != k)
            {
                for (int j = 0; j < p; j++)
                {
                    (g[(k * p) + j], g[(pivot * p) + j]) = (g[(pivot * p) + j], g[(k * p) + j]);
                }

                for (int i = 0; i < p; i++)
                {
                    (g[(i * p) + k], g[(i * p) + pivot]) = (g[(i * p) + pivot], g[(i * p) + k]);
                }

                (selected[k], selected[pivot]) = (selected[pivot], selected[k]);
            }

            double lkk = Math.Sqrt(g[(k * p) + k]);
            g[(k * p) + k] = lkk;
            for (int i = k + 1; i < p; i++)
            {
                g[(i * p) + k] /= lkk;
            }

            for (int j = k + 1; j < p; j++)
            {
                double ljk = g[(j * p) + k];
                for (int i = j; i < p; i++)
                {
                    double value = g[(i * p) + j] - (g[(i * p) + k] * ljk);
                    g[(i * p) + j] = value;
                    g[(j * p) + i] = value;
                }
            }

            q = k + 1;
        }

        return q;
    }

    /// <summary>Solves L y = b in place over the leading q rows (L of stride p).</summary>
    public static void ForwardSolve(ReadOnlySpan<double> l, int p, int q, Span<double> x)
    {
        for (int i = 0; i < q; i++)
        {
            double sum = x[i];
            for (int j = 0; j < i; j++)
            {
                sum -= l[(i * p) + j] * x[j];
            }

            x[i] = sum / l[(i * p) + i];
        }
    }

    /// <summary>Solves L' x = y in place over the leading q rows (L of stride p).</summary>
    public static void BackSolve(ReadOnlySpan<double> l, int p, int q, Span<double> x)
    {
        for (int i = q - 1; i >= 0; i--)
        {
            double sum = x[i];
            for (int j = i + 1; j < q; j++)
            {
                sum -= l[(j * p) + i] * x[j];
            }

            x[i] = sum / l[(i * p) + i];
        }
    }
}
