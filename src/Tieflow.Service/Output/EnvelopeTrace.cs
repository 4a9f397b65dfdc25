using Tieflow.Core.Equilibrium;

namespace Tieflow.Service.Output;

/// <summary>Tie lines of an equilibrium model traced at evenly spaced raffinate solute fractions, for descriptions and diagrams.</summary>
internal static class EnvelopeTrace
{
    /// <summary>
    /// Tie lines at <paramref name="count"/> evenly spaced raffinate solute fractions up to <paramref name="reach"/> of the
    /// model's limit (the first above zero); points the model cannot split are left out.
    /// </summary>
    public static List<TieLine> TieLines(IPhaseEquilibrium model, double temperatureKelvin, int count, double reach, bool includeZero = false)
    {
        ArgumentNullException.ThrowIfNull(model);
        var lines = new List<TieLine>(count + 1);
        double top = Math.Min(model.SoluteLimits(temperatureKelvin).Raffinate, 1) * reach;
        for (int i = includeZero ? 0 : 1; i <= count; i++)
        {
            try
            {
                lines.Add(model.TieLineFromRaffinate(top * i / count, temperatureKelvin));
            }
            catch (Exception e) when (e is EquilibriumException or ArgumentException or ArithmeticException)
            {
                // A point the model cannot split is left out.
            }
        }

        return lines;
    }
}
