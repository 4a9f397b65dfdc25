namespace Tieflow.Core.Numerics;

/// <summary>
/// Householder QR factorisation with column pivoting, A P = Q R, of a dense m x n matrix in column-major storage
/// (column j at offset j m), in place (Golub and Van Loan, Matrix Computations, 4th ed., 2013, section 5.4.1). The
/// pivot is the column with the largest ratio of its remaining norm to its original norm, so that columns of very
/// different scales are judged alike; the factorisation stops at the rank, when no ratio exceeds the tolerance.
/// <para>
/// Optional row-support bit masks (one per column, for m up to 64) let the factorisation skip reflections of columns
/// that share no nonzero row with a reflector: for sparse balances this removes most of the work.
/// </para>
/// </summary>
internal static class PivotedHouseholderQr
{
    /// <summary>
    /// Factorises <paramref name="a"/> in place: on return its first <c>rank</c> columns hold R (upper triangle, zeros
    /// below), the others the remainder; <paramref name="v"/> holds the Householder vectors (column k from row k, unit
    /// first entry) and <paramref name="tau"/> their factors; <paramref name="perm"/> the original column of each
    /// position and <paramref name="norm0"/> the original column norms in pivoted order.
    /// </summary>
    /// <param name="a">The m x n matrix, column-major.</param>
    /// <param name="m">Rows.</param>
    /// <param name="n">Columns.</param>
    /// <param name="v">m x n workspace for the Householder vectors.</param>
    /// <param name="tau">n reflector factors.</param>
    /// <param name="norm0">n original column norms (pivoted order on return).</param>
    /// <param name="perm">n column positions.</param>
    /// <param name="scratch">At least m doubles.</param>
    /// <param name="masks">Row-support masks of the columns (updated), or empty for none; only when m is at most 64.</param>
    /// <param name="reflectorMasks">Row-support masks of the reflectors (n), or empty with no masks.</param>
    /// <param name="tolerance">Smallest remaining-to-original norm ratio of a pivot.</param>
    /// <returns>The numerical rank.</returns>
    public static int Factor(
        Span<double> a,
        int m,
        int n,
        Span<double> v,
        Span<double> tau,
        Span<double> norm0,
        Span<int> perm,
        Span<double> scratch,
        Span<ulong> masks,
        Span<ulong> reflectorMasks,
        double tolerance)
    {
        bool useMasks = !masks.IsEmpty;
        for (int j = 0; j < n; j++)
        {
            perm[j] = j;
            ReadOnlySpan<double> col = a.Slice(j * m, m);
            norm0[j] = Math.Sqrt(DenseKernels.Dot(col, col));
        }

        int limit = Math.Min(m, n);
        int rank = 0;
        for (int k = 0; k < limit; k++)
        {
            int pivot = -1;
            double best = tolerance;
            double bestNorm = 0;
            ulong rowsFromK = useMasks ? ulong.MaxValue << k : ulong.MaxValue;
            for (int j = k; j < n; j++)
            {
                if (norm0[j] <= 0 || (useMasks && (masks[j] & rowsFromK) == 0))
                {
                    continue;
                }

                ReadOnlySpan<double> rest = a.Slice((j * m) + k, m - k);
                double norm = Math.Sqrt(DenseKernels.Dot(rest, rest));
                double ratio = norm / norm0[j];
                if (ratio > best)
                {
                    best = ratio;
                    pivot = j;
                    bestNorm = norm;
                }
            }

            if (pivot < 0)
            {
                break;
            }

            if (pivot != k)
            {
                a.Slice(k * m, m).CopyTo(scratch);
                a.Slice(pivot * m, m).CopyTo(a.Slice(k * m, m));
                scratch[..m].CopyTo(a.Slice(pivot * m, m));
                (perm[k], perm[pivot]) = (perm[pivot], perm[k]);
                (norm0[k], norm0[pivot]) = (norm0[pivot], norm0[k]);
                if (useMasks)
                {
                    (masks[k], masks[pivot]) = (masks[pivot], masks[k]);
                }
            }

            ulong maskV = useMasks ? (masks[k] & rowsFromK) | (1UL << k) : ulong.MaxValue;
            if (useMasks)
            {
                reflectorMasks[k] = maskV;
            }

            Span<double> x = a.Slice((k * m) + k, m - k);
            double x0 = x[0];
            double beta = x0 >= 0 ? -bestNorm : bestNorm;
            double t = (beta - x0) / beta;
            double inv = 1.0 / (x0 - beta);
            Span<double> vk = v.Slice((k * m) + k, m - k);
            vk[0] = 1;
            for (int i = 1; i < vk.Length; i++)
            {
                vk[i] = x[i] * inv;
            }

            tau[k] = t;
            x[0] = beta;
            x[1..].Clear();
            for (int j = k + 1; j < n; j++)
            {
                if (!useMasks || (masks[j] & maskV) != 0)
                {
                    DenseKernels.Reflect(vk, t, a.Slice((j * m) + k, m - k));
                    if (useMasks)
                    {
                        masks[j] |= maskV;
                    }
                }
            }

            rank = k + 1;
        }

        return rank;
    }

    /// <summary>Applies Q' (the first <paramref name="rank"/> reflectors) to a column of length m in place.</summary>
    public static void ApplyQTranspose(ReadOnlySpan<double> v, ReadOnlySpan<double> tau, int m, int rank, Span<double> column)
    {
        for (int k = 0; k < rank; k++)
        {
            DenseKernels.Reflect(v.Slice((k * m) + k, m - k), tau[k], column[k..m]);
        }
    }

    /// <summary>Solves R11 x = b in place, R11 the leading rank x rank block of the factorised matrix.</summary>
    public static void SolveR(ReadOnlySpan<double> r, int m, int rank, Span<double> x)
    {
        for (int i = rank - 1; i >= 0; i--)
        {
            double sum = x[i];
            for (int j = i + 1; j < rank; j++)
            {
                sum -= r[(j * m) + i] * x[j];
            }

            x[i] = sum / r[(i * m) + i];
        }
    }
}
