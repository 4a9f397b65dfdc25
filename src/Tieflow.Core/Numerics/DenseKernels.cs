using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace Tieflow.Core.Numerics;

/// <summary>
/// Vector kernels for the small dense systems of a reconciliation. The systems have tens of rows, where a general
/// library routine spends more time on bookkeeping than on arithmetic, so these work on spans of column-major storage.
/// </summary>
internal static class DenseKernels
{
    /// <summary>Dot product of two spans of equal length.</summary>
    public static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        int n = a.Length;
        int i = 0;
        double sum = 0;
        if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count * 2)
        {
            ref double ra = ref MemoryMarshal.GetReference(a);
            ref double rb = ref MemoryMarshal.GetReference(b);
            var acc = Vector<double>.Zero;
            for (; i <= n - Vector<double>.Count; i += Vector<double>.Count)
            {
                acc += Vector.LoadUnsafe(ref ra, (nuint)i) * Vector.LoadUnsafe(ref rb, (nuint)i);
            }

            sum = Vector.Sum(acc);
        }

        for (; i < n; i++)
        {
            sum += a[i] * b[i];
        }

        return sum;
    }

    /// <summary>y += alpha x, for spans of equal length.</summary>
    public static void Axpy(double alpha, ReadOnlySpan<double> x, Span<double> y)
    {
        int n = x.Length;
        int i = 0;
        if (Vector.IsHardwareAccelerated && n >= Vector<double>.Count * 2)
        {
            ref double rx = ref MemoryMarshal.GetReference(x);
            ref double ry = ref MemoryMarshal.GetReference(y);
            var va = new Vector<double>(alpha);
            for (; i <= n - Vector<double>.Count; i += Vector<double>.Count)
            {
                (Vector.LoadUnsafe(ref ry, (nuint)i) + (va * Vector.LoadUnsafe(ref rx, (nuint)i))).StoreUnsafe(ref ry, (nuint)i);
            }
        }

        for (; i < n; i++)
        {
            y[i] += alpha * x[i];
        }
    }

    /// <summary>Applies the reflector I - tau v v' to a span of the same length as v.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Reflect(ReadOnlySpan<double> v, double tau, Span<double> target)
    {
        double w = tau * Dot(v, target);
        if (w != 0)
        {
            Axpy(-w, v, target);
        }
    }
}
