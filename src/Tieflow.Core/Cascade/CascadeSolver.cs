using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.Activity;

namespace Tieflow.Core.Cascade;

/// <summary>
/// Stages and cascades of stages with a Murphree raffinate efficiency per stage, on any equilibrium model.
/// Flows and fractions are on the model's system basis (kg/h with mass fractions, or kmol/h with mole fractions);
/// temperatures are kelvin. The efficiency of a stage is E = (x_in - x_out) / (x_in - x*), x_in the solute
/// fraction of the raffinate-side stream entering, x_out that of the raffinate leaving, x* that of the raffinate in
/// equilibrium with the extract leaving; both leaving phases lie on the phase envelope and every balance closes.
/// </summary>
public sealed class CascadeSolver
{
    private readonly Envelope _envelope;

    /// <summary>Creates a solver for one model at one temperature.</summary>
    /// <param name="model">The equilibrium model.</param>
    /// <param name="temperatureKelvin">Temperature of every stage, kelvin.</param>
    /// <param name="options">Tolerance and iteration limits; <see cref="CascadeSolverOptions.Default"/> when null.</param>
    public CascadeSolver(IPhaseEquilibrium model, double temperatureKelvin, CascadeSolverOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(model);
        Preconditions.Positive(temperatureKelvin);
        Options = options ?? CascadeSolverOptions.Default;
        Options.Validate();
        Model = model;
        TemperatureKelvin = temperatureKelvin;
        _envelope = new Envelope(model, temperatureKelvin);
    }

    /// <summary>The equilibrium model.</summary>
    public IPhaseEquilibrium Model { get; }

    /// <summary>Temperature of the stages, kelvin.</summary>
    public double TemperatureKelvin { get; }

    /// <summary>Tolerance and iteration limits.</summary>
    public CascadeSolverOptions Options { get; }

    internal Envelope Envelope => _envelope;

    private bool UseTable => Options.UseEnvelopeTable ?? Model is ActivityCoefficientModel;

    /// <summary>Solves one stage fed with a raffinate-side and an extract-side stream.</summary>
    /// <param name="raffinateIn">Stream entering on the raffinate side (the feed of a single stage); flow above zero.</param>
    /// <param name="extractIn">Stream entering on the extract side (the solvent); flow zero or more.</param>
    /// <param name="efficiency">Murphree raffinate efficiency in [0, 1]; 1 gives the equilibrium split of the mixture.</param>
    /// <exception cref="CascadeException">When the mixture is one liquid phase or lies outside the model's data.</exception>
    public StageResult SolveStage(MaterialStream raffinateIn, MaterialStream extractIn, double efficiency)
    {
        CheckStream(raffinateIn, nameof(raffinateIn), positive: true);
        CheckStream(extractIn, nameof(extractIn), positive: false);
        Preconditions.Fraction(efficiency);
        return StageSolver.Solve(_envelope, 1, raffinateIn, extractIn, efficiency, Options, out _);
    }

    /// <summary>Cross-current cascade: the raffinate passes from stage 1 to stage N, the solvent stream as given enters every stage, the extracts are combined.</summary>
    /// <param name="feed">Feed to stage 1; flow above zero.</param>
    /// <param name="solvent">Solvent fed to each stage; flow above zero.</param>
    /// <param name="efficiencies">Murphree raffinate efficiency of each stage in [0, 1], stage 1 first; the count is the number of stages.</param>
    /// <exception cref="CascadeException">When a stage mixture is one liquid phase or lies outside the model's data.</exception>
    public CascadeResult SolveCrosscurrent(MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies)
    {
        CheckInputs(feed, solvent, efficiencies);
        var stages = new StageResult[efficiencies.Count];
        MaterialStream raffinate = feed;
        Ternary extract = default;
        int iterations = 0;
        for (int k = 0; k < stages.Length; k++)
        {
            stages[k] = StageSolver.Solve(_envelope, k + 1, raffinate, solvent, efficiencies[k], Options, out int stageIterations);
            iterations += Math.Max(stageIterations, 1);
            raffinate = stages[k].Raffinate;
            extract += stages[k].Extract.ComponentFlows;
        }

        double balance = 0;
        MaterialStream inflow = feed;
        for (int k = 0; k < stages.Length; k++)
        {
            Ternary residual = inflow.ComponentFlows + solvent.ComponentFlows - stages[k].Raffinate.ComponentFlows - stages[k].Extract.ComponentFlows;
            balance = Math.Max(balance, Ternary.MaxDifference(residual, default) / (inflow.Flow + solvent.Flow));
            inflow = stages[k].Raffinate;
        }

        return new CascadeResult(CascadeArrangement.Crosscurrent, CascadeStatus.Converged, stages, raffinate, MaterialStream.FromComponentFlows(extract, solvent.Composition), Recovery(feed, raffinate), iterations, balance);
    }

    /// <summary>Cross-current cascade with the same efficiency on every stage.</summary>
    /// <inheritdoc cref="SolveCrosscurrent(MaterialStream, MaterialStream, IReadOnlyList{double})"/>
    public CascadeResult SolveCrosscurrent(MaterialStream feed, MaterialStream solvent, int stages, double efficiency) =>
        SolveCrosscurrent(feed, solvent, Uniform(stages, efficiency));

    /// <summary>
    /// Counter-current cascade: feed enters stage 1 and the final raffinate leaves stage N; solvent enters stage N and
    /// the extract leaves stage 1. Newton's method on the whole profile (banded, so cost grows linearly with the stage
    /// count) from the equilibrium split of feed plus solvent, with projected, halved steps, falling back on
    /// stage-by-stage sweeps when Newton stalls. On activity models (see <see cref="CascadeSolverOptions.UseEnvelopeTable"/>)
    /// the first solve builds a spline table of the envelope (about 160 tie lines); later solves start from the answer
    /// on that table and take its Jacobian, the residuals always from the model.
    /// </summary>
    /// <param name="feed">Feed to stage 1; flow above zero.</param>
    /// <param name="solvent">Solvent to stage N; flow above zero.</param>
    /// <param name="efficiencies">Murphree raffinate efficiency of each stage in [0, 1], stage 1 first; the count is the number of stages.</param>
    /// <exception cref="CascadeException">When feed and solvent together are one phase, a stage lies outside the model's data, or the solver does not converge within <see cref="CascadeSolverOptions.MaxIterations"/>.</exception>
    public CascadeResult SolveCountercurrent(MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies)
    {
        CheckInputs(feed, solvent, efficiencies);
        return new CountercurrentSolver(_envelope, feed, solvent, efficiencies, Options).Solve(throwOnFailure: true, useTable: UseTable);
    }

    /// <summary>Counter-current solve from a starting profile (x, y, raffinate flow, extract flow per stage), or from the equilibrium split when null.</summary>
    internal CascadeResult SolveCountercurrent(MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies, double[]? start)
    {
        CheckInputs(feed, solvent, efficiencies);
        return new CountercurrentSolver(_envelope, feed, solvent, efficiencies, Options).Solve(throwOnFailure: true, start);
    }

    /// <summary>Counter-current cascade with the same efficiency on every stage.</summary>
    /// <inheritdoc cref="SolveCountercurrent(MaterialStream, MaterialStream, IReadOnlyList{double})"/>
    public CascadeResult SolveCountercurrent(MaterialStream feed, MaterialStream solvent, int stages, double efficiency) =>
        SolveCountercurrent(feed, solvent, Uniform(stages, efficiency));

    /// <summary>
    /// As <see cref="SolveCountercurrent(MaterialStream, MaterialStream, IReadOnlyList{double})"/>, but returns false with the last
    /// iterate (status <see cref="CascadeStatus.IterationLimit"/>) instead of throwing when the iteration limit is reached.
    /// One-phase mixtures and stages outside the model's data still throw <see cref="CascadeException"/>.
    /// </summary>
    public bool TrySolveCountercurrent(MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies, out CascadeResult result)
    {
        CheckInputs(feed, solvent, efficiencies);
        result = new CountercurrentSolver(_envelope, feed, solvent, efficiencies, Options).Solve(throwOnFailure: false, useTable: UseTable);
        return result.Status == CascadeStatus.Converged;
    }

    /// <summary>Solves the arrangement given.</summary>
    /// <inheritdoc cref="SolveCountercurrent(MaterialStream, MaterialStream, IReadOnlyList{double})"/>
    /// <param name="arrangement">Counter-current or cross-current.</param>
    /// <param name="feed">Feed to stage 1; flow above zero.</param>
    /// <param name="solvent">Solvent stream; flow above zero.</param>
    /// <param name="efficiencies">Efficiency of each stage, stage 1 first.</param>
    public CascadeResult Solve(CascadeArrangement arrangement, MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies) => arrangement switch
    {
        CascadeArrangement.Countercurrent => SolveCountercurrent(feed, solvent, efficiencies),
        CascadeArrangement.Crosscurrent => SolveCrosscurrent(feed, solvent, efficiencies),
        _ => throw new ArgumentOutOfRangeException(nameof(arrangement), arrangement, "Expected countercurrent or crosscurrent."),
    };

    /// <summary>
    /// Solves the arrangement given; a counter-current cascade from the profile of <paramref name="near"/> (a solution of
    /// the same cascade for nearby inputs) when given: a few Newton steps instead of a start from the split of feed
    /// plus solvent, and the same answer within <see cref="CascadeSolverOptions.Tolerance"/>.
    /// </summary>
    internal CascadeResult Solve(CascadeArrangement arrangement, MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies, CascadeResult? near) =>
        arrangement == CascadeArrangement.Countercurrent && near is { Arrangement: CascadeArrangement.Countercurrent } && near.Stages.Count == efficiencies.Count
            ? SolveCountercurrent(feed, solvent, efficiencies, StartProfile(near))
            : Solve(arrangement, feed, solvent, efficiencies);

    /// <summary>A counter-current cascade's profile as a start (x, y, raffinate flow, extract flow per stage).</summary>
    internal static double[] StartProfile(CascadeResult result)
    {
        var start = new double[4 * result.Stages.Count];
        for (int k = 0; k < result.Stages.Count; k++)
        {
            StageResult s = result.Stages[k];
            start[4 * k] = s.Raffinate.Composition.Solute;
            start[(4 * k) + 1] = s.Extract.Composition.Solute;
            start[(4 * k) + 2] = s.Raffinate.Flow;
            start[(4 * k) + 3] = s.Extract.Flow;
        }

        return start;
    }

    internal static double Recovery(MaterialStream feed, MaterialStream raffinate)
    {
        double feedSolute = feed.ComponentFlows.Solute;
        return feedSolute > 0 ? 1 - (raffinate.ComponentFlows.Solute / feedSolute) : 0;
    }

    internal static double[] Uniform(int stages, double efficiency)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(stages, 1);
        var list = new double[stages];
        Array.Fill(list, efficiency);
        return list;
    }

    internal static void CheckStream(MaterialStream stream, string name, bool positive)
    {
        if (!double.IsFinite(stream.Flow) || stream.Flow < 0 || (positive && stream.Flow == 0))
        {
            throw new ArgumentOutOfRangeException(name, stream.Flow, positive ? $"Expected the flow of {name} to be a finite number above zero." : $"Expected the flow of {name} to be a finite number, zero or more.");
        }

        Ternary c = stream.Composition;
        if (!(c.Solute >= 0 && c.Diluent >= 0 && c.Solvent >= 0) || !double.IsFinite(c.Sum) || Math.Abs(c.Sum - 1) > 1e-6)
        {
            throw new ArgumentException($"Expected the fractions of {name} to be zero or more and to sum to 1, got {c.Solute}, {c.Diluent}, {c.Solvent} (sum {c.Sum}).", name);
        }
    }

    private static void CheckInputs(MaterialStream feed, MaterialStream solvent, IReadOnlyList<double> efficiencies)
    {
        CheckStream(feed, nameof(feed), positive: true);
        CheckStream(solvent, nameof(solvent), positive: true);
        ArgumentNullException.ThrowIfNull(efficiencies);
        if (efficiencies.Count < 1)
        {
            throw new ArgumentException("Expected at least one stage efficiency (one per stage).", nameof(efficiencies));
        }

        for (int i = 0; i < efficiencies.Count; i++)
        {
            Preconditions.Fraction(efficiencies[i], $"efficiencies[{i}] (stage {i + 1})");
        }
    }
}
