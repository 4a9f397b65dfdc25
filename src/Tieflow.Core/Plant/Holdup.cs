namespace Tieflow.Core.Plant;

/// <summary>Liquid hold-up of one stage, both phases together.</summary>
/// <param name="MixerKg">Hold-up of the mixer (or of the stage's share of a column's contactor), kg; positive.</param>
/// <param name="SettlerKg">Hold-up of the settler (or of the stage's share of a column's disengaging volume), kg; zero or positive.</param>
public sealed record Holdup(double MixerKg, double SettlerKg)
{
    /// <summary>Total hold-up of the stage, kg.</summary>
    public double TotalKg => MixerKg + SettlerKg;
}
