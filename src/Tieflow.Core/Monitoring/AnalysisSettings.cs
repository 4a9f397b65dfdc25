namespace Tieflow.Core.Monitoring;

/// <summary>
/// Settings of the per-unit analysis and its alert rules. Every default is common practice, no source, chosen so that
/// clean operation of the demo scenarios with normal changes raises nothing; every one can be overridden in the plant
/// file's <c>alerts</c> object under the name given in its summary (durations there as duration text).
/// </summary>
public sealed record AnalysisSettings
{
    /// <summary><c>windowLength</c>: length of a balance window.</summary>
    public TimeSpan WindowLength { get; init; } = TimeSpan.FromMinutes(30);

    /// <summary><c>efficiencyDriftSigmas</c>: decision limit h of the one-sided CUSUM on (baseline - E) / sigma.</summary>
    public double EfficiencyDriftSigmas { get; init; } = 8;

    /// <summary><c>efficiencyDriftDeadband</c>: allowance k of that CUSUM, in sigmas (a drop smaller than this is ignored).</summary>
    public double EfficiencyDriftDeadband { get; init; } = 1.0;

    /// <summary>
    /// <c>efficiencyModelSigma</c>: uncertainty of a stage efficiency that its propagated sigma does not hold, added in
    /// quadrature before the drift test: the balances take the window as steady while a train with settlers holding an
    /// hour of flow still moves slowly for many hours after a feed change (window-to-window scatter of a few hundredths
    /// on the demo train; common practice, no source).
    /// </summary>
    public double EfficiencyModelSigma { get; init; } = 0.02;

    /// <summary><c>entrainmentFraction</c>: carried-over fraction that raises an entrainment alert.</summary>
    public double EntrainmentFraction { get; init; } = 0.005;

    /// <summary><c>entrainmentDeadband</c>: the alert clears below the set point minus this.</summary>
    public double EntrainmentDeadband { get; init; } = 0.002;

    /// <summary><c>solventLossKgPerHour</c>: unaccounted solvent flow (kg/h, kmol/h on a mole basis) that raises a solvent-loss alert, together with <see cref="SolventLossFraction"/> (the larger applies).</summary>
    public double SolventLossKgPerHour { get; init; } = 2;

    /// <summary><c>solventLossFraction</c>: unaccounted solvent as a fraction of the solvent flow that raises a solvent-loss alert.</summary>
    public double SolventLossFraction { get; init; } = 0.005;

    /// <summary><c>suspectWindows</c>: consecutive steady windows that must name the same tag before a suspect-instrument alert, and in which a tag left out must agree with the balances before it clears.</summary>
    public int SuspectWindows { get; init; } = 3;

    /// <summary><c>labMismatchSigmas</c>: a lab result further than this many combined sigmas from the soft sensor raises lab-mismatch.</summary>
    public double LabMismatchSigmas { get; init; } = 3;

    /// <summary><c>labSigma</c>: standard deviation of a lab result, a fraction.</summary>
    public double LabSigma { get; init; } = 0.001;

    /// <summary><c>offSpecMargin</c>: off-spec when the soft sensor exceeds the spec by this many sigmas.</summary>
    public double OffSpecMargin { get; init; } = 2;

    /// <summary><c>onDelay</c>: a condition must hold this long before its alert is raised.</summary>
    public TimeSpan OnDelay { get; init; } = TimeSpan.Zero;

    /// <summary><c>offDelay</c>: a condition must be gone this long before its alert clears.</summary>
    public TimeSpan OffDelay { get; init; } = TimeSpan.FromMinutes(60);

    /// <summary><c>floodLimit</c>: at most this many alerts per unit in a flood window; beyond it one flood notice.</summary>
    public int FloodLimit { get; init; } = 10;

    /// <summary><c>floodWindow</c>: the flood window.</summary>
    public TimeSpan FloodWindow { get; init; } = TimeSpan.FromMinutes(10);

    /// <summary><c>notDeterminableSigma</c>: a stage efficiency with a larger sigma is "not determinable".</summary>
    public double NotDeterminableSigma { get; init; } = 0.25;

    /// <summary><c>dynamicFitWindows</c>: windows the dynamic model of a mixer-settler train is fitted over between steady
    /// windows (<see cref="Efficiency.DynamicEfficiencyTracker"/>); 0 judges drift on steady windows only.</summary>
    public int DynamicFitWindows { get; init; } = 2;

    /// <summary><c>dynamicModelSigma</c>: model error of a window-mean solute fraction in that fit, added to each
    /// analyzer's sigma in quadrature.</summary>
    public double DynamicModelSigma { get; init; } = 3e-4;

    /// <summary>Steady windows that set the efficiency baselines before drift is judged.</summary>
    public int BaselineWindows { get; init; } = 4;

    /// <summary>Steady windows that set the solvent-balance baseline (meter offsets of a healthy unit) before losses are judged.</summary>
    public int SolventBaselineWindows { get; init; } = 4;

    /// <summary>Weight of a new lab-minus-model difference in the lab bias (EWMA).</summary>
    public double LabBiasWeight { get; init; } = 0.3;

    /// <summary>These settings with a plant file's overrides applied (keys as in each member's summary; durations in seconds).</summary>
    /// <param name="overrides">The overrides.</param>
    public AnalysisSettings WithOverrides(IReadOnlyDictionary<string, double> overrides)
    {
        ArgumentNullException.ThrowIfNull(overrides);
        AnalysisSettings s = this;
        foreach ((string key, double v) in overrides)
        {
            s = key switch
            {
                "windowLength" => s with { WindowLength = TimeSpan.FromSeconds(v) },
                "efficiencyDriftSigmas" => s with { EfficiencyDriftSigmas = v },
                "efficiencyDriftDeadband" => s with { EfficiencyDriftDeadband = v },
                "efficiencyModelSigma" => s with { EfficiencyModelSigma = v },
                "entrainmentFraction" => s with { EntrainmentFraction = v },
                "entrainmentDeadband" => s with { EntrainmentDeadband = v },
                "solventLossKgPerHour" => s with { SolventLossKgPerHour = v },
                "solventLossFraction" => s with { SolventLossFraction = v },
                "suspectWindows" => s with { SuspectWindows = (int)Math.Round(v) },
                "labMismatchSigmas" => s with { LabMismatchSigmas = v },
                "labSigma" => s with { LabSigma = v },
                "offSpecMargin" => s with { OffSpecMargin = v },
                "onDelay" => s with { OnDelay = TimeSpan.FromSeconds(v) },
                "offDelay" => s with { OffDelay = TimeSpan.FromSeconds(v) },
                "floodLimit" => s with { FloodLimit = (int)Math.Round(v) },
                "floodWindow" => s with { FloodWindow = TimeSpan.FromSeconds(v) },
                "notDeterminableSigma" => s with { NotDeterminableSigma = v },
                "dynamicFitWindows" => s with { DynamicFitWindows = (int)Math.Round(v) },
                "dynamicModelSigma" => s with { DynamicModelSigma = v },
                _ => throw new ArgumentException($"Unknown analysis setting '{key}'.", nameof(overrides)),
            };
        }

        return s;
    }
}
