using Tieflow.Core.Numerics;

namespace Tieflow.Core.Reconciliation;

/// <content>The iteration: starting values, the balances and their residuals, and the constrained Gauss-Newton step.</content>
internal sealed partial class ReconciliationSolver
{
    /// <summary>
    /// Reconciles the readings of the adjusted measurements (in the order given at construction) with the held values
    /// set; on success the classification and variances are those of the solution.
    /// </summary>
    /// <param name="readings">One finite reading per adjusted measurement.</param>
    /// <param name="iterations">Linearisation steps taken.</param>
    /// <param name="residual">Largest balance residual relative to the sum of the absolute terms of its balance.</param>
    /// <param name="step">Largest relative change of the last step.</param>
    public SolverOutcome Solve(ReadOnlySpan<double> readings, out int iterations, out double residual, out double step)
    {
        readings.CopyTo(_y);
        double tolerance = _options.Tolerance;
        if (_nc == 0)
        {
            // Linear: the projection depends on the structure and the sigmas only, so it is factorised once.
            Array.Clear(_z);
            SetMeasuredToReadings();

            if (!_linearPrepared)
            {
                Factorize();
                ComputeVariances();
                _linearPrepared = true;
            }

            step = Step();
            iterations = 1;
            residual = RelativeResidual();

            // Only held values can leave a balance open in a linear problem: they contradict each other.
            return residual <= Math.Max(tolerance, 1e-12) ? SolverOutcome.Converged : SolverOutcome.Infeasible;
        }

        SolverOutcome outcome = Iterate(allowBand: _order is not null, out iterations, out residual, out step, out bool redo);
        if (redo)
        {
            // The banded steps assumed a regular layout that the closing dense factorisation did not find: solve again
            // on the dense path.
            outcome = Iterate(allowBand: false, out iterations, out residual, out step, out _);
        }

        return outcome;
    }

    // The iteration; with the band allowed, a step is taken on the band whenever the last dense factorisation of the
    // layout found it regular (so the first solve of a layout starts dense).
    private SolverOutcome Iterate(bool allowBand, out int iterations, out double residual, out double step, out bool redo)
    {
        double tolerance = _options.Tolerance;
        redo = false;
        _closedOnBand = false;
        Initialize();
        step = double.PositiveInfinity;
        residual = double.PositiveInfinity;
        iterations = 0;
        int shrinking = 0;
        StillConverging = false;
        while (iterations < _options.MaxIterations)
        {
            iterations++;
            double previous = step;
            bool banded = false;
            if (allowBand && _bandTrusted)
            {
                _z.CopyTo(_zPrevious, 0);
                banded = BandedStep(out step);
                if (!banded)
                {
                    _zPrevious.CopyTo(_z, 0);
                    _balancesCurrent = false;
                }
            }

            if (!banded)
            {
                Factorize();
                if (_order is not null)
                {
                    _bandTrusted = DenseFactorizationIsRegular();
                }

                step = Step();
            }

            residual = RelativeResidual();
            shrinking = step < 0.9 * previous ? shrinking + 1 : 0;
            StillConverging = shrinking >= 3 || iterations < 4;
            if (!double.IsFinite(step) || !double.IsFinite(residual))
            {
                return SolverOutcome.NotConverged;
            }

            if (residual <= tolerance && step <= _options.StepTolerance)
            {
                if (banded)
                {
                    // The classification, covariance and multipliers come from a factorisation at the point of the last
                    // step, which is taken again from there: QR on the band, or the dense factorisation when the band
                    // is near singular (the dense path's answer to roundoff either way).
                    _zPrevious.CopyTo(_z, 0);
                    _balancesCurrent = false;
                    if (BandedClose(out step))
                    {
                        residual = RelativeResidual();
                        return SolverOutcome.Converged;
                    }

                    _zPrevious.CopyTo(_z, 0);
                    _balancesCurrent = false;
                    Factorize();
                    _bandTrusted = DenseFactorizationIsRegular();
                    if (!_bandTrusted)
                    {
                        redo = true;
                        return SolverOutcome.NotConverged;
                    }

                    step = Step();
                    residual = RelativeResidual();
                }

                ComputeVariances();
                return SolverOutcome.Converged;
            }

            // The step has stopped while a balance stays open: no adjustment of the measurements closes it with the
            // held values (a Gauss-Newton step on balances that cannot all hold).
            if (step <= _options.StepTolerance && iterations > 2 && residual > Math.Sqrt(tolerance))
            {
                return SolverOutcome.Infeasible;
            }
        }

        return SolverOutcome.NotConverged;
    }

    private void SetMeasuredToReadings()
    {
        _balancesCurrent = false;
        for (int i = 0; i < _nx; i++)
        {
            _z[_varOfMeasurement[i]] = _y[i];
        }

        for (int h = 0; h < _nh; h++)
        {
            _z[_varOfHeld[h]] = _heldValue[h];
        }
    }

    // Starting values of the bilinear iteration: measured values as read, unknown flows from the total balances where a
    // node has a single unknown flow, unknown fractions from the remainder to one or from a node's component balance.
    private void Initialize()
    {
        Array.Clear(_z);
        SetMeasuredToReadings();
        int ns = _network.Streams.Count;
        int nn = _network.Nodes.Count;
        Span<bool> flowKnown = ns <= 256 ? stackalloc bool[ns] : new bool[ns];
        Span<bool> compositionKnown = ns <= 256 ? stackalloc bool[ns] : new bool[ns];
        double measuredFlowSum = 0;
        int measuredFlowCount = 0;
        for (int s = 0; s < ns; s++)
        {
            int flowColumn = _column[s * _stride];
            flowKnown[s] = flowColumn >= 0 || flowColumn == Held;
            if (flowColumn >= 0)
            {
                measuredFlowSum += Math.Abs(_z[s * _stride]);
                measuredFlowCount++;
            }
        }

        double fallbackFlow = measuredFlowCount > 0 && measuredFlowSum > 0 ? measuredFlowSum / measuredFlowCount : 1.0;
        bool progress = true;
        while (progress)
        {
            progress = false;
            for (int node = 0; node < nn; node++)
            {
                int unknown = -1;
                int count = 0;
                double sum = 0;
                for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
                {
                    int s = _incidenceStream[e];
                    if (flowKnown[s])
                    {
                        sum += _incidenceSign[e] * _z[s * _stride];
                    }
                    else
                    {
                        unknown = e;
                        count++;
                    }
                }

                if (count == 1)
                {
                    int s = _incidenceStream[unknown];
                    double value = -sum / _incidenceSign[unknown];
                    _z[s * _stride] = value > 0 ? value : fallbackFlow;
                    flowKnown[s] = true;
                    progress = true;
                }
            }
        }

        for (int s = 0; s < ns; s++)
        {
            if (!flowKnown[s])
            {
                _z[s * _stride] = fallbackFlow;
            }

            int unknownCount = 0;
            double knownSum = 0;
            for (int c = 0; c < _nc; c++)
            {
                int v = (s * _stride) + 1 + c;
                if (_column[v] >= 0 || _column[v] == Held)
                {
                    knownSum += _z[v];
                }
                else
                {
                    unknownCount++;
                }
            }

            compositionKnown[s] = unknownCount < _nc;
            if (unknownCount > 0 && unknownCount < _nc)
            {
                double share = Math.Max(0, 1 - knownSum) / unknownCount;
                for (int c = 0; c < _nc; c++)
                {
                    int v = (s * _stride) + 1 + c;
                    if (_column[v] < 0 && _column[v] != Held)
                    {
                        _z[v] = share;
                    }
                }
            }
        }

        progress = true;
        while (progress)
        {
            progress = false;
            for (int node = 0; node < nn; node++)
            {
                int unknown = -1;
                int count = 0;
                for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
                {
                    if (!compositionKnown[_incidenceStream[e]])
                    {
                        unknown = e;
                        count++;
                    }
                }

                if (count != 1)
                {
                    continue;
                }

                int t = _incidenceStream[unknown];
                double flow = _z[t * _stride];
                double total = 0;
                for (int c = 0; c < _nc; c++)
                {
                    double sum = 0;
                    for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
                    {
                        int s = _incidenceStream[e];
                        if (s != t)
                        {
                            sum += _incidenceSign[e] * _z[s * _stride] * _z[(s * _stride) + 1 + c];
                        }
                    }

                    double part = flow > 0 ? Math.Max(0, -sum / _incidenceSign[unknown]) / flow : 0;
                    _z[(t * _stride) + 1 + c] = part;
                    total += part;
                }

                for (int c = 0; c < _nc; c++)
                {
                    int v = (t * _stride) + 1 + c;
                    _z[v] = total > 0 ? _z[v] / total : 1.0 / _nc;
                }

                compositionKnown[t] = true;
                progress = true;
            }
        }

        for (int s = 0; s < ns; s++)
        {
            if (!compositionKnown[s])
            {
                for (int c = 0; c < _nc; c++)
                {
                    _z[(s * _stride) + 1 + c] = 1.0 / _nc;
                }
            }
        }

        UpdateDependents();
        _startFlowScale = 0;
        for (int s = 0; s < ns; s++)
        {
            _startFlowScale = Math.Max(_startFlowScale, Math.Abs(_z[s * _stride]));
        }
    }

    private void UpdateDependents()
    {
        _balancesCurrent = false;
        for (int s = 0; s < _dependentOf.Length; s++)
        {
            int d = _dependentOf[s];
            if (d < 0)
            {
                continue;
            }

            double sum = 0;
            for (int c = 0; c < _nc; c++)
            {
                int v = (s * _stride) + 1 + c;
                if (v != d)
                {
                    sum += _z[v];
                }
            }

            _z[d] = 1 - sum;
        }
    }

    // Balance residuals f(z) and, per balance, the sum of the absolute terms (for relative residuals).
    private void EvaluateBalances()
    {
        _balancesCurrent = true;
        int nn = _network.Nodes.Count;
        Array.Clear(_f);
        Array.Clear(_scale);
        for (int node = 0; node < nn; node++)
        {
            for (int e = _incidenceStart[node]; e < _incidenceStart[node + 1]; e++)
            {
                int s = _incidenceStream[e];
                double sign = _incidenceSign[e];
                double flow = _z[s * _stride];
                if (_nc == 0)
                {
                    _f[node] += sign * flow;
                    _scale[node] += Math.Abs(flow);
                    continue;
                }

                for (int c = 0; c < _nc; c++)
                {
                    int row = (node * _nc) + c;
                    double term = flow * _z[(s * _stride) + 1 + c];
                    _f[row] += sign * term;
                    _scale[row] += Math.Abs(term);
                }
            }
        }

        if (_accumulation is not null)
        {
            for (int row = 0; row < _accumulation.Length; row++)
            {
                _f[row] -= _accumulation[row];
                _scale[row] += Math.Abs(_accumulation[row]);
            }
        }

        if (_nc > 0)
        {
            int ns = _network.Streams.Count;
            for (int s = 0; s < ns; s++)
            {
                int row = _normalizationRow[s];
                if (row < 0)
                {
                    continue;
                }

                double sum = 0;
                double abs = 0;
                for (int c = 0; c < _nc; c++)
                {
                    double x = _z[(s * _stride) + 1 + c];
                    sum += x;
                    abs += Math.Abs(x);
                }

                _f[row] = sum - 1;
                _scale[row] = Math.Max(1, abs);
            }
        }
    }

    // A node balance is judged relative to the sum of its absolute terms, but never to less than a hundredth of the
    // largest such sum or of the largest flow read or held: a balance of streams near zero flow (streams held at zero)
    // carries the roundoff of the large readings.
    private double RelativeResidual()
    {
        EvaluateBalances();
        int nodeRows = _nc == 0 ? _network.Nodes.Count : _network.Nodes.Count * _nc;
        double largest = 0;
        for (int i = 0; i < nodeRows; i++)
        {
            largest = Math.Max(largest, _scale[i]);
        }

        for (int k = 0; k < _nx; k++)
        {
            if (_varOfMeasurement[k] % _stride == 0)
            {
                largest = Math.Max(largest, Math.Abs(_y[k]));
            }
        }

        for (int h = 0; h < _nh; h++)
        {
            if (_varOfHeld[h] % _stride == 0)
            {
                largest = Math.Max(largest, Math.Abs(_heldValue[h]));
            }
        }

        double floor = largest > 0 ? 1e-2 * largest : 1;
        double worst = 0;
        for (int i = 0; i < _m; i++)
        {
            double scale = i < nodeRows ? Math.Max(_scale[i], floor) : _scale[i] > 0 ? _scale[i] : 1;
            worst = Math.Max(worst, Math.Abs(_f[i]) / scale);
        }

        return worst;
    }

    private double Step()
    {
        int m = _m;
        int r = _rank;
        if (!_balancesCurrent)
        {
            EvaluateBalances();
        }

        _f.CopyTo(_qtf, 0);
        ApplyQTranspose(_qtf);

        Span<double> rp = _rp.AsSpan(0, _q);
        for (int i = 0; i < _q; i++)
        {
            rp[i] = _qtf[r + _gsel[i]];
        }

        for (int k = 0; k < _nx; k++)
        {
            double d = _y[k] - _z[_varOfMeasurement[k]];
            if (d == 0)
            {
                continue;
            }

            DenseKernels.Axpy(d, _bsel.AsSpan(k * m, _q), rp);
        }

        Span<double> mu = _mu.AsSpan(0, _q);
        rp.CopyTo(mu);
        ForwardSolve(mu);
        BackSolve(mu);

        double flowScale = StepFlowScale();
        double step = 0;
        for (int k = 0; k < _nx; k++)
        {
            double sum = DenseKernels.Dot(_bsel.AsSpan(k * m, _q), mu);
            double xNew = _y[k] - (_sigma2[k] * sum);
            int variable = _varOfMeasurement[k];
            _dx[k] = xNew - _z[variable];
            _xNew[k] = xNew;
            step = Math.Max(step, Math.Abs(_dx[k]) / ScaleOf(variable, flowScale));
        }

        // Unmeasured: R11 du = -(Q'f)_top - (Q'Ax)_top dx; the free (unobservable) directions keep their values.
        Span<double> du = _du.AsSpan(0, r);
        for (int i = 0; i < r; i++)
        {
            du[i] = -_qtf[i];
        }

        for (int k = 0; k < _nx; k++)
        {
            double d = _dx[k];
            if (d == 0)
            {
                continue;
            }

            ReadOnlySpan<double> col = _ax.AsSpan(k * m, r);
            for (int i = 0; i < r; i++)
            {
                du[i] -= col[i] * d;
            }
        }

        SolveR(du);
        Span<double> full = _duFull.AsSpan(0, _nu);
        full.Clear();
        du.CopyTo(full);
        if (r < _nu && _nc > 0)
        {
            MinimumNormStep(full, flowScale);
        }

        for (int i = 0; i < _nu; i++)
        {
            int variable = _varOfUnmeasured[_perm[i]];
            _z[variable] += full[i];
            step = Math.Max(step, Math.Abs(full[i]) / ScaleOf(variable, flowScale));
        }

        for (int k = 0; k < _nx; k++)
        {
            _z[_varOfMeasurement[k]] = _xNew[k];
        }

        UpdateDependents();
        _balancesCurrent = false;
        return step;
    }

    // The step of the unmeasured quantities of least scaled norm (flows in units of the flow scale, fractions as they
    // are) among all steps that solve the linearised balances: the basic solution (free columns held) plus the null-space
    // component that makes it shortest. A basic solution moves unobservable quantities by whatever the pivoting of the
    // moment asks, so that they drift from one linearisation to the next (to fractions of 1e13 and flows below zero)
    // and the iteration never settles; the least-norm step leaves them where they are unless the balances need them.
    // Gauss-Newton for an underdetermined system, as in Ben-Israel, J. Math. Anal. Appl. 15 (1966) 243-252.
    private void MinimumNormStep(Span<double> du, double flowScale)
    {
        int m = _m;
        int r = _rank;
        int nf = _nu - r;

        // Null-space basis in scaled variables: column f is D^-1 [-R11^-1 R12 e_f; e_f] (pivoted order).
        Span<double> basis = _nullBasis.AsSpan(0, _nu * nf);
        for (int f = 0; f < nf; f++)
        {
            Span<double> n = basis.Slice(f * _nu, _nu);
            n.Clear();
            Span<double> top = n[..r];
            _au.AsSpan((r + f) * m, r).CopyTo(top);
            SolveR(top);
            for (int i = 0; i < r; i++)
            {
                top[i] = -top[i];
            }

            n[r + f] = 1;
            for (int i = 0; i < _nu; i++)
            {
                n[i] /= ScaleOf(_varOfUnmeasured[_perm[i]], flowScale);
            }
        }

        // w0 = D^-1 du; w = w0 - N (N'N)^-1 N' w0; du = D w.
        Span<double> w0 = _wScaled.AsSpan(0, _nu);
        for (int i = 0; i < _nu; i++)
        {
            w0[i] = du[i] / ScaleOf(_varOfUnmeasured[_perm[i]], flowScale);
        }

        Span<double> gram = _gram.AsSpan(0, nf * nf);
        Span<double> rhs = _gramRhs.AsSpan(0, nf);
        for (int f = 0; f < nf; f++)
        {
            ReadOnlySpan<double> nfCol = basis.Slice(f * _nu, _nu);
            rhs[f] = DenseKernels.Dot(nfCol, w0);
            for (int g = 0; g <= f; g++)
            {
                double value = DenseKernels.Dot(nfCol, basis.Slice(g * _nu, _nu));
                gram[(f * nf) + g] = value;
                gram[(g * nf) + f] = value;
            }
        }

        // N has full column rank (the identity block), so N'N is positive definite.
        if (!DenseCholesky.Factor(gram, nf))
        {
            return;
        }

        DenseCholesky.Solve(gram, nf, rhs);
        for (int f = 0; f < nf; f++)
        {
            DenseKernels.Axpy(-rhs[f], basis.Slice(f * _nu, _nu), w0);
        }

        for (int i = 0; i < _nu; i++)
        {
            du[i] = w0[i] * ScaleOf(_varOfUnmeasured[_perm[i]], flowScale);
        }
    }

    private double ScaleOf(int variable, double flowScale) => variable % _stride == 0 ? flowScale : 1.0;

    /// <summary>
    /// The flow scale a step is judged against: the larger of the current and the starting flow scale, since a network
    /// whose flows are free in scale (no flow measured) may drift towards zero flows, where a scale of the moment never
    /// settles.
    /// </summary>
    private double StepFlowScale()
    {
        double flowScale = 0;
        for (int s = 0; s < _network.Streams.Count; s++)
        {
            flowScale = Math.Max(flowScale, Math.Abs(_z[s * _stride]));
        }

        flowScale = Math.Max(flowScale, _startFlowScale);
        return flowScale > 0 ? flowScale : 1;
    }
}
