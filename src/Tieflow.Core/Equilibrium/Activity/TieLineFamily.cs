using Tieflow.Core.Chemistry;

namespace Tieflow.Core.Equilibrium.Activity;

/// <summary>Tie lines of an activity model at one temperature, traced from the binary end toward the plait point.</summary>
internal sealed class TieLineFamily
{
    public TieLineFamily(double temperatureKelvin, Ternary[] raffinate, Ternary[] extract, Ternary[] raffinateMole, Ternary[] extractMole, bool reachesPlaitPoint)
    {
        TemperatureKelvin = temperatureKelvin;
        Raffinate = raffinate;
        Extract = extract;
        RaffinateMole = raffinateMole;
        ExtractMole = extractMole;
        ReachesPlaitPoint = reachesPlaitPoint;
        double maxExtract = 0;
        foreach (Ternary e in extract)
        {
            maxExtract = Math.Max(maxExtract, e.Solute);
        }

        Limits = new SoluteLimits(raffinate[^1].Solute, maxExtract);
    }

    public double TemperatureKelvin { get; }

    /// <summary>Raffinate ends on the system's basis, solute ascending.</summary>
    public Ternary[] Raffinate { get; }

    /// <summary>Extract ends on the system's basis.</summary>
    public Ternary[] Extract { get; }

    public Ternary[] RaffinateMole { get; }

    public Ternary[] ExtractMole { get; }

    /// <summary>True when tracing ended with the phases meeting (a plait point), false when it ended on a side of the triangle.</summary>
    public bool ReachesPlaitPoint { get; }

    public SoluteLimits Limits { get; }
}
