namespace Tieflow.Core.Equilibrium.Activity;

/// <content>
/// Trial phases near the mixture for the stability test, and the cache of tie-line families per temperature.
/// </content>
public abstract partial class ActivityCoefficientModel
{
    private const int FamilyCacheSize = 8;

    // A trial phase near the mixture proves instability at a distance this far below zero: the distance is a sum of
    // three terms of order one, so its rounding is a few 1e-16.
    private const double NearFeedDistance = -1e-13;

    private static readonly double[] NearFeedSteps = [1e-3, 2e-3, 5e-3, 1e-2, 2e-2, 5e-2, 0.1, 0.2, 0.4];

    private volatile FamilyEntry[] _families = [];

    /// <summary>
    /// Curvature of the Gibbs energy of mixing at the mixture and trial phases near it. Near the plait point the trial
    /// phases rich in one component all fall back to the mixture, although the mixture splits: its second phase is
    /// close by, along the direction in which the Gibbs energy of mixing curves least. Inside the spinodal that
    /// curvature is negative and the mixture is unstable whatever the trial phases do; elsewhere points along both
    /// principal directions of the curvature, from 0.001 to 0.4 away, are tried as phases directly (one evaluation
    /// each) and the lowest of each direction starts a substitution of the tangent plane distance.
    /// </summary>
    /// <returns>True with the trial phase of negative distance (or, inside the spinodal, the point of least distance
    /// along the direction of negative curvature).</returns>
    private bool FindUnstableNearFeed(ReadOnlySpan<double> state, ReadOnlySpan<double> z, Span<double> trial, out double minTm, ref int iterations)
    {
        minTm = 0;
        Span<double> mu = stackalloc double[N];
        Span<double> x = stackalloc double[N];
        Span<double> jac = stackalloc double[N * N];
        Span<double> zn = stackalloc double[N];
        z.CopyTo(zn);
        if (!ChemicalPotentialJacobian(state, zn, z, x, mu, jac, sign: 1))
        {
            return false;
        }

        // Principal directions of the curvature in the plane of the present components (d mu / d n of one mole is
        // the Hessian of its Gibbs energy on that plane).
        Span<double> directions = stackalloc double[2 * N];
        Span<double> curvatures = stackalloc double[2];
        int count = PrincipalDirections(z, jac, directions, curvatures);
        if (count == 0)
        {
            return false;
        }

        Span<double> starts = stackalloc double[4 * N];
        Span<double> w = stackalloc double[N];
        Span<double> lg = stackalloc double[N];
        int startCount = 0;
        bool negative = false;
        double bestTpd = double.PositiveInfinity;
        Span<double> bestPoint = stackalloc double[N];
        for (int d = 0; d < count; d++)
        {
            for (int sign = -1; sign <= 1; sign += 2)
            {
                double rayBest = double.PositiveInfinity;
                foreach (double step in NearFeedSteps)
                {
                    bool inside = true;
                    for (int i = 0; i < N; i++)
                    {
                        w[i] = z[i] > 0 ? z[i] + (sign * step * directions[(d * N) + i]) : 0;
                        inside &= !(z[i] > 0) || w[i] > 1e-12;
                    }

                    if (!inside)
                    {
                        break;
                    }

                    iterations++;
                    LnGammaCore(state, w, lg);
                    double tpd = 0;
                    for (int i = 0; i < N; i++)
                    {
                        if (z[i] > 0)
                        {
                            tpd += w[i] * (Math.Log(w[i]) + lg[i] - mu[i]);
                        }
                    }

                    if (tpd < rayBest)
                    {
                        rayBest = tpd;
                        w.CopyTo(starts.Slice(startCount * N, N));
                    }

                    if (tpd < bestTpd)
                    {
                        bestTpd = tpd;
                        w.CopyTo(bestPoint);
                    }

                    negative |= tpd < NearFeedDistance;
                }

                if (double.IsFinite(rayBest))
                {
                    startCount++;
                }
            }
        }

        bool spinodal = curvatures[0] < 0;
        if (startCount > 0 && FindUnstableTrial(state, z, starts[..(startCount * N)], trial, out minTm, ref iterations, stopAtFirst: false, NearFeedDistance))
        {
            return true;
        }

        if (negative || spinodal)
        {
            // Substitution fell back to the mixture from every start, yet a point of negative distance is known (or
            // the mixture is inside the spinodal): that point is the trial phase.
            bestPoint.CopyTo(trial);
            minTm = Math.Min(bestTpd, 0);
            return true;
        }

        return false;
    }

    // Unit directions (summing to zero over the present components) of least and most curvature of the Gibbs energy
    // of mixing, with the curvatures; returns how many (2 for three components, 1 for two, 0 otherwise).
    private static int PrincipalDirections(ReadOnlySpan<double> z, ReadOnlySpan<double> jac, Span<double> directions, Span<double> curvatures)
    {
        Span<int> present = stackalloc int[N];
        int n = 0;
        for (int i = 0; i < N; i++)
        {
            if (z[i] > 0)
            {
                present[n++] = i;
            }
        }

        directions.Clear();
        if (n < 2)
        {
            return 0;
        }

        if (n == 2)
        {
            directions[present[0]] = 1 / Math.Sqrt(2);
            directions[present[1]] = -1 / Math.Sqrt(2);
            curvatures[0] = Quadratic(jac, directions[..N], directions[..N]);
            return double.IsFinite(curvatures[0]) ? 1 : 0;
        }

        Span<double> u = [1 / Math.Sqrt(2), 0, -1 / Math.Sqrt(2)];
        Span<double> v = [1 / Math.Sqrt(6), -2 / Math.Sqrt(6), 1 / Math.Sqrt(6)];
        double huu = Quadratic(jac, u, u);
        double hvv = Quadratic(jac, v, v);
        double huv = 0.5 * (Quadratic(jac, u, v) + Quadratic(jac, v, u));
        if (!double.IsFinite(huu) || !double.IsFinite(hvv) || !double.IsFinite(huv))
        {
            return 0;
        }

        double mean = 0.5 * (huu + hvv);
        double radius = Math.Sqrt((0.25 * (huu - hvv) * (huu - hvv)) + (huv * huv));
        curvatures[0] = mean - radius;
        curvatures[1] = mean + radius;

        // Angle of the eigenvector of least curvature in the (u, v) plane; the other is perpendicular.
        double angle = 0.5 * Math.Atan2(2 * huv, huu - hvv) + (Math.PI / 2);
        double c = Math.Cos(angle);
        double s = Math.Sin(angle);
        for (int i = 0; i < N; i++)
        {
            directions[i] = (c * u[i]) + (s * v[i]);
            directions[N + i] = (-s * u[i]) + (c * v[i]);
        }

        return 2;
    }

    private static double Quadratic(ReadOnlySpan<double> m, ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        double sum = 0;
        for (int i = 0; i < N; i++)
        {
            for (int j = 0; j < N; j++)
            {
                sum += a[i] * m[(i * N) + j] * b[j];
            }
        }

        return sum;
    }

    /// <summary>
    /// Near the plait point, where substitution crawls and Newton on isoactivity may wander from its start, a descent
    /// on the total Gibbs energy itself: Newton steps on the moles of phase B with the Hessian (d mu / d n of both
    /// phases) shifted until positive definite, and backtracking that lowers the energy (within its rounding, the
    /// residual). A descent cannot return to the mixture, whose energy the start already undercuts.
    /// </summary>
    private bool MinimiseGibbs(ReadOnlySpan<double> state, ReadOnlySpan<double> z, ReadOnlySpan<double> trial, Span<double> xa, Span<double> xb, out double beta, ref int iterations)
    {
        beta = 0;
        Span<double> w = stackalloc double[N];
        double sw = 0;
        for (int i = 0; i < N; i++)
        {
            w[i] = z[i] > 0 ? Math.Max(trial[i], 0) : 0;
            sw += w[i];
        }

        if (!(sw > 0))
        {
            return false;
        }

        // Phase B the trial phase, phase A mirrored through the mixture (at most half way to the triangle's side).
        double tMax = double.PositiveInfinity;
        for (int i = 0; i < N; i++)
        {
            w[i] /= sw;
            double d = z[i] - w[i];
            if (d < 0)
            {
                tMax = Math.Min(tMax, -z[i] / d);
            }
        }

        double t = Math.Min(1, 0.5 * tMax);
        if (!(t > 0) || !double.IsFinite(t))
        {
            return false;
        }

        double b0 = t / (1 + t);
        Span<double> nb = stackalloc double[N];
        Span<double> na = stackalloc double[N];
        Span<double> nbTrial = stackalloc double[N];
        Span<double> f = stackalloc double[N];
        Span<double> fTrial = stackalloc double[N];
        Span<double> ja = stackalloc double[N * N];
        Span<double> jb = stackalloc double[N * N];
        Span<double> h = stackalloc double[N * N];
        Span<double> step = stackalloc double[N];
        for (int i = 0; i < N; i++)
        {
            nb[i] = b0 * w[i];
            na[i] = z[i] - nb[i];
        }

        double energy = TotalEnergy(state, z, nb, xa, xb);
        if (!double.IsFinite(energy))
        {
            return false;
        }

        for (int it = 0; it < MaxIterations; it++)
        {
            iterations++;

            // f = mu(a) - mu(b) = -dG/dnb; d f / d nb = -(Ja + Jb).
            if (!ChemicalPotentialJacobian(state, na, z, xa, f, ja, sign: 1) || !ChemicalPotentialJacobian(state, nb, z, xb, f, jb, sign: -1, accumulate: true))
            {
                return false;
            }

            double residual = MaxAbs(f);
            if (residual <= Tolerance)
            {
                beta = nb[0] + nb[1] + nb[2];
                return beta > 0 && beta < 1 && Distance(xa, xb) > TrivialDistance;
            }

            double scale = 0;
            for (int k = 0; k < N * N; k++)
            {
                h[k] = ja[k] + jb[k];
                scale = Math.Max(scale, Math.Abs(h[k]));
            }

            for (int i = 0; i < N; i++)
            {
                if (!(z[i] > 0))
                {
                    for (int j = 0; j < N; j++)
                    {
                        h[(i * N) + j] = 0;
                        h[(j * N) + i] = 0;
                    }

                    h[(i * N) + i] = scale;
                    f[i] = 0;
                }
            }

            // Descent direction: (H + s I) step = f, i.e. step = -(H + s I)^-1 dG/dnb, with the least shift s >= 0
            // that keeps H + s I positive definite.
            if (!SolveShiftedPositive(h, f, step, scale))
            {
                return false;
            }

            double lambda = 1;
            for (int i = 0; i < N; i++)
            {
                if (z[i] > 0)
                {
                    double next = nb[i] + step[i];
                    if (next <= 0)
                    {
                        lambda = Math.Min(lambda, 0.9 * nb[i] / -step[i]);
                    }
                    else if (next >= z[i])
                    {
                        lambda = Math.Min(lambda, 0.9 * (z[i] - nb[i]) / step[i]);
                    }
                }
            }

            double noise = 1e-14 * (1 + Math.Abs(energy));
            bool accepted = false;
            for (int attempt = 0; attempt < 40 && !accepted; attempt++, lambda *= 0.5)
            {
                for (int i = 0; i < N; i++)
                {
                    nbTrial[i] = z[i] > 0 ? nb[i] + (lambda * step[i]) : 0;
                }

                double next = TotalEnergy(state, z, nbTrial, xa, xb);
                if (next < energy - noise
                    || (next <= energy + noise && Residual(state, z, nbTrial, xa, xb, fTrial) && MaxAbs(fTrial) < 0.5 * residual))
                {
                    accepted = true;
                    energy = next;
                }
            }

            if (!accepted)
            {
                return false;
            }

            for (int i = 0; i < N; i++)
            {
                nb[i] = nbTrial[i];
                na[i] = z[i] - nb[i];
            }
        }

        return false;
    }

    // Total Gibbs energy of mixing over RT of phase A (z - nb) and phase B (nb); phase compositions out; NaN when a
    // phase is empty.
    private double TotalEnergy(ReadOnlySpan<double> state, ReadOnlySpan<double> z, ReadOnlySpan<double> nb, Span<double> xa, Span<double> xb)
    {
        double ta = 0;
        double tb = 0;
        for (int i = 0; i < N; i++)
        {
            ta += z[i] - nb[i];
            tb += nb[i];
        }

        if (!(ta > 0 && tb > 0))
        {
            return double.NaN;
        }

        for (int i = 0; i < N; i++)
        {
            xa[i] = (z[i] - nb[i]) / ta;
            xb[i] = nb[i] / tb;
        }

        Span<double> lga = stackalloc double[N];
        Span<double> lgb = stackalloc double[N];
        LnGammaCore(state, xa, lga);
        LnGammaCore(state, xb, lgb);
        double g = 0;
        for (int i = 0; i < N; i++)
        {
            if (xa[i] > 0)
            {
                g += (z[i] - nb[i]) * (Math.Log(xa[i]) + lga[i]);
            }

            if (xb[i] > 0)
            {
                g += nb[i] * (Math.Log(xb[i]) + lgb[i]);
            }
        }

        return g;
    }

    // Solves (a + s I) x = b by Cholesky with the least shift s >= 0 (from 1e-10 of the scale, growing fourfold) that
    // makes the matrix positive definite.
    private static bool SolveShiftedPositive(ReadOnlySpan<double> a, ReadOnlySpan<double> b, Span<double> x, double scale)
    {
        Span<double> m = stackalloc double[N * N];
        double shift = 0;
        for (int attempt = 0; attempt < 80; attempt++)
        {
            a.CopyTo(m);
            for (int i = 0; i < N; i++)
            {
                m[(i * N) + i] += shift;
            }

            if (Cholesky3(m, b, x))
            {
                return true;
            }

            shift = shift == 0 ? 1e-10 * Math.Max(scale, 1e-300) : shift * 4;
        }

        return false;
    }

    private static bool Cholesky3(ReadOnlySpan<double> a, ReadOnlySpan<double> b, Span<double> x)
    {
        // a is symmetric in exact arithmetic; use its lower triangle averaged with the upper.
        double a10 = 0.5 * (a[3] + a[1]);
        double a20 = 0.5 * (a[6] + a[2]);
        double a21 = 0.5 * (a[7] + a[5]);
        if (!(a[0] > 0))
        {
            return false;
        }

        double l00 = Math.Sqrt(a[0]);
        double l10 = a10 / l00;
        double l20 = a20 / l00;
        double d11 = a[4] - (l10 * l10);
        if (!(d11 > 0))
        {
            return false;
        }

        double l11 = Math.Sqrt(d11);
        double l21 = (a21 - (l20 * l10)) / l11;
        double d22 = a[8] - (l20 * l20) - (l21 * l21);
        if (!(d22 > 0))
        {
            return false;
        }

        double l22 = Math.Sqrt(d22);
        double y0 = b[0] / l00;
        double y1 = (b[1] - (l10 * y0)) / l11;
        double y2 = (b[2] - (l20 * y0) - (l21 * y1)) / l22;
        x[2] = y2 / l22;
        x[1] = (y1 - (l21 * x[2])) / l11;
        x[0] = (y0 - (l10 * x[1]) - (l20 * x[2])) / l00;
        return double.IsFinite(x[0]) && double.IsFinite(x[1]) && double.IsFinite(x[2]);
    }

    private TieLineFamily? CachedFamily(double temperatureKelvin)
    {
        foreach (FamilyEntry entry in _families)
        {
            if (entry.TemperatureKelvin.Equals(temperatureKelvin))
            {
                return entry.Family;
            }
        }

        return null;
    }

    // The tie lines at a temperature, traced once and kept for the last few temperatures used; a temperature at which
    // the diluent and solvent do not split is remembered too, with its message.
    private TieLineFamily Family(double temperatureKelvin)
    {
        Preconditions.Positive(temperatureKelvin);
        foreach (FamilyEntry entry in _families)
        {
            if (entry.TemperatureKelvin.Equals(temperatureKelvin))
            {
                return entry.Family ?? throw new EquilibriumException(entry.Error!);
            }
        }

        try
        {
            TieLineFamily family = TraceFamily(temperatureKelvin);
            Remember(new FamilyEntry(temperatureKelvin, family, null));
            return family;
        }
        catch (EquilibriumException e)
        {
            Remember(new FamilyEntry(temperatureKelvin, null, e.Message));
            throw;
        }
    }

    // The tie lines at a temperature, or null when there are none (no exception).
    private TieLineFamily? FamilyOrNull(double temperatureKelvin)
    {
        try
        {
            return Family(temperatureKelvin);
        }
        catch (EquilibriumException)
        {
            return null;
        }
    }

    private void Remember(FamilyEntry entry)
    {
        // Newest first; a lost update under a race only costs a second tracing.
        FamilyEntry[] old = _families;
        int keep = Math.Min(old.Length, FamilyCacheSize - 1);
        var next = new FamilyEntry[keep + 1];
        next[0] = entry;
        Array.Copy(old, 0, next, 1, keep);
        _families = next;
    }

    private sealed record FamilyEntry(double TemperatureKelvin, TieLineFamily? Family, string? Error);
}
