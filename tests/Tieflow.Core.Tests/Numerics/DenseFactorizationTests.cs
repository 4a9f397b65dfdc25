using Tieflow.Core.Numerics;

namespace Tieflow.Core.Tests.Numerics;

public sealed class DenseFactorizationTests
{
    // A random m x n column-major matrix of the given rank (a product of random m x rank and rank x n factors).
    private static double[] RandomMatrix(Random random, int m, int n, int rank)
    {
        var left = new double[m * rank];
        var right = new double[rank * n];
        for (int i = 0; i < left.Length; i++)
        {
            left[i] = random.NextDouble() - 0.5;
        }

        for (int i = 0; i < right.Length; i++)
        {
            right[i] = random.NextDouble() - 0.5;
        }

        var a = new double[m * n];
        for (int j = 0; j < n; j++)
        {
            for (int i = 0; i < m; i++)
            {
                double sum = 0;
                for (int k = 0; k < rank; k++)
                {
                    sum += left[(k * m) + i] * right[(j * rank) + k];
                }

                a[(j * m) + i] = sum;
            }
        }

        return a;
    }

    [Theory]
    [InlineData(8, 5, 5, false)]
    [InlineData(8, 6, 3, false)]
    [InlineData(12, 9, 7, true)]
    [InlineData(5, 9, 4, true)]
    public void HouseholderQr_QTransposeOfAP_IsR(int m, int n, int rank, bool masks)
    {
        var random = new Random(m + (10 * n) + (100 * rank));
        double[] a = RandomMatrix(random, m, n, rank);

        // Scale one column by 1e6 and another by 1e-6: the pivoting judges ratios, not sizes.
        for (int i = 0; i < m; i++)
        {
            a[i] *= 1e6;
            a[m + i] *= 1e-6;
        }

        double[] original = [.. a];
        var v = new double[m * n];
        var tau = new double[n];
        var norm0 = new double[n];
        var perm = new int[n];
        var scratch = new double[m];
        ulong[] columnMasks = masks ? [.. Enumerable.Repeat((1UL << m) - 1, n)] : [];
        ulong[] reflectorMasks = masks ? new ulong[n] : [];
        int r = PivotedHouseholderQr.Factor(a, m, n, v, tau, norm0, perm, scratch, columnMasks, reflectorMasks, 1e-9);

        Assert.Equal(rank, r);
        Assert.Equal(Enumerable.Range(0, n), perm.Order());
        var column = new double[m];
        for (int j = 0; j < n; j++)
        {
            original.AsSpan(perm[j] * m, m).CopyTo(column);
            PivotedHouseholderQr.ApplyQTranspose(v, tau, m, r, column);
            double scale = norm0[j];
            for (int i = 0; i < m; i++)
            {
                // Q' A P = R: the first r columns match R exactly (zeros below the diagonal); every column has nothing
                // left below row r, since the rank is r.
                double expected = j < r ? (i <= j ? a[(j * m) + i] : 0) : (i < r ? a[(j * m) + i] : 0);
                Assert.True(Math.Abs(column[i] - expected) <= 1e-10 * scale, $"({i}, {j}): {column[i]} vs {expected}");
            }
        }

        // R11 x = b.
        var x = new double[r];
        var b = new double[r];
        for (int i = 0; i < r; i++)
        {
            x[i] = i + 1;
        }

        for (int i = 0; i < r; i++)
        {
            for (int j = i; j < r; j++)
            {
                b[i] += a[(j * m) + i] * x[j];
            }
        }

        PivotedHouseholderQr.SolveR(a, m, r, b);
        for (int i = 0; i < r; i++)
        {
            Assert.True(Math.Abs(b[i] - x[i]) < 1e-6 * (i + 1), $"{i}: {b[i]}");
        }
    }

    [Theory]
    [InlineData(6, 6)]
    [InlineData(7, 4)]
    [InlineData(5, 0)]
    public void PivotedCholesky_LLTranspose_IsTheSelectedG(int p, int rank)
    {
        // G = B B' with B of p x rank: positive semidefinite of the given rank.
        var random = new Random((10 * p) + rank);
        var bm = new double[p * Math.Max(rank, 1)];
        for (int i = 0; i < bm.Length; i++)
        {
            bm[i] = rank == 0 ? 0 : random.NextDouble() - 0.5;
        }

        var g = new double[p * p];
        for (int i = 0; i < p; i++)
        {
            for (int j = 0; j < p; j++)
            {
                for (int k = 0; k < rank; k++)
                {
                    g[(i * p) + j] += bm[(i * rank) + k] * bm[(j * rank) + k];
                }
            }
        }

        double[] original = [.. g];
        var diag0 = new double[p];
        var selected = new int[p];
        int q = PivotedCholesky.Factor(g, p, diag0, selected, 1e-12);

        Assert.Equal(rank, q);
        for (int i = 0; i < q; i++)
        {
            for (int j = 0; j <= i; j++)
            {
                double sum = 0;
                for (int k = 0; k <= j; k++)
                {
                    sum += g[(i * p) + k] * g[(j * p) + k];
                }

                Assert.True(Math.Abs(sum - original[(selected[i] * p) + selected[j]]) < 1e-12, $"({i}, {j})");
            }
        }

        // L L' x = b over the selected rows.
        var x = new double[q];
        for (int i = 0; i < q; i++)
        {
            x[i] = 1 - (0.1 * i);
        }

        var rhs = new double[q];
        for (int i = 0; i < q; i++)
        {
            for (int j = 0; j < q; j++)
            {
                rhs[i] += original[(selected[i] * p) + selected[j]] * x[j];
            }
        }

        PivotedCholesky.ForwardSolve(g, p, q, rhs);
        PivotedCholesky.BackSolve(g, p, q, rhs);
        for (int i = 0; i < q; i++)
        {
            Assert.True(Math.Abs(rhs[i] - x[i]) < 1e-8, $"{i}: {rhs[i]}");
        }
    }

    [Fact]
    public void DenseCholesky_SolvesAndRejectsIndefinite()
    {
        double[] g = [4, 2, 0.4, 2, 5, 1, 0.4, 1, 3];
        double[] original = [.. g];
        Assert.True(DenseCholesky.Factor(g, 3));
        double[] x = [1, -2, 0.5];
        var b = new double[3];
        for (int i = 0; i < 3; i++)
        {
            for (int j = 0; j < 3; j++)
            {
                b[i] += original[(i * 3) + j] * x[j];
            }
        }

        DenseCholesky.Solve(g, 3, b);
        for (int i = 0; i < 3; i++)
        {
            Assert.True(Math.Abs(b[i] - x[i]) < 1e-14);
        }

        Assert.False(DenseCholesky.Factor([1, 2, 2, 1], 2));
    }

    [Theory]
    [InlineData(1)]
    [InlineData(7)]
    [InlineData(33)]
    public void DenseKernels_MatchPlainLoops(int n)
    {
        var random = new Random(n);
        double[] a = [.. Enumerable.Range(0, n).Select(_ => random.NextDouble() - 0.5)];
        double[] b = [.. Enumerable.Range(0, n).Select(_ => random.NextDouble() - 0.5)];
        double dot = 0;
        for (int i = 0; i < n; i++)
        {
            dot += a[i] * b[i];
        }

        Assert.True(Math.Abs(DenseKernels.Dot(a, b) - dot) < 1e-14);
        double[] y = [.. b];
        DenseKernels.Axpy(0.7, a, y);
        for (int i = 0; i < n; i++)
        {
            Assert.True(Math.Abs(y[i] - (b[i] + (0.7 * a[i]))) < 1e-15);
        }

        // A Householder reflection keeps the norm.
        double[] v = [1, .. a.Skip(1)];
        double tau = 2 / DenseKernels.Dot(v, v);
        double[] t = [.. b];
        DenseKernels.Reflect(v, tau, t);
        Assert.True(Math.Abs(DenseKernels.Dot(t, t) - DenseKernels.Dot(b, b)) < 1e-13);
    }
}
