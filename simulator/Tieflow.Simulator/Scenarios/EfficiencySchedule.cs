using Tieflow.Core.Scenarios;

namespace Tieflow.Simulator.Scenarios;

/// <summary>
/// The true Murphree efficiency of each stage over time: the nominal value, changed by stage-efficiency faults
/// (a linear ramp from the value at the fault's start to the fault's value; back to the value before the fault when
/// it ends). A fault without a stage acts on every stage.
/// </summary>
internal sealed class EfficiencySchedule
{
    private readonly IReadOnlyList<double> _nominal;
    private readonly Fault[] _faults;

    public EfficiencySchedule(IReadOnlyList<double> nominal, IEnumerable<Fault> faults)
    {
        _nominal = nominal;
        _faults = faults.Where(f => f.Kind == FaultKind.StageEfficiency).OrderBy(f => f.Start).ToArray();
    }

    public void Fill(double seconds, double[] efficiencies)
    {
        var elapsed = TimeSpan.FromSeconds(seconds);
        for (int k = 0; k < efficiencies.Length; k++)
        {
            double value = _nominal[k];
            foreach (Fault f in _faults)
            {
                if ((f.Stage is int stage && stage != k + 1) || !f.IsActive(elapsed))
                {
                    continue;
                }

                double since = (elapsed - f.Start).TotalSeconds;
                double ramp = f.Ramp.TotalSeconds;
                value = ramp > 0 && since < ramp ? value + ((f.Value - value) * since / ramp) : f.Value;
            }

            efficiencies[k] = value;
        }
    }
}
