namespace Tieflow.Core.Equilibrium.TieLines;

/// <summary>
/// Tie-line correlations used to judge the consistency of experimental tie lines: data that scatter about the
/// straight line (R^2 well below 0.99) deserve a second look. Natural logarithms; fractions on the table's basis
/// (the correlations are normally applied to mass fractions).
/// </summary>
public static class TieLineCorrelations
{
    /// <summary>
    /// Othmer-Tobias (Othmer and Tobias, Ind. Eng. Chem. 34, 693, 1942):
    /// ln[(1 - w_SS) / w_SS] = a + b ln[(1 - w_DD) / w_DD], with w_SS the solvent fraction of the extract and
    /// w_DD the diluent fraction of the raffinate.
    /// </summary>
    /// <param name="tieLines">At least two tie lines whose fractions lie strictly between 0 and 1.</param>
    /// <exception cref="ArgumentException">When fewer than two lines are given or a fraction used is not strictly between 0 and 1.</exception>
    public static CorrelationFit OthmerTobias(IReadOnlyList<TieLine> tieLines)
    {
        ArgumentNullException.ThrowIfNull(tieLines);
        return Fit(tieLines, static (line, i) =>
        {
            double wDD = Open(line.Raffinate.Diluent, i, "raffinate diluent");
            double wSS = Open(line.Extract.Solvent, i, "extract solvent");
            return (Math.Log((1 - wDD) / wDD), Math.Log((1 - wSS) / wSS));
        });
    }

    /// <summary>
    /// Hand (J. Phys. Chem. 34, 1961, 1930): ln(w_AS / w_SS) = a + b ln(w_AD / w_DD), with w_AS and w_SS the solute
    /// and solvent fractions of the extract, w_AD and w_DD the solute and diluent fractions of the raffinate.
    /// </summary>
    /// <param name="tieLines">At least two tie lines whose fractions used are strictly between 0 and 1.</param>
    /// <exception cref="ArgumentException">When fewer than two lines are given or a fraction used is not strictly between 0 and 1.</exception>
    public static CorrelationFit Hand(IReadOnlyList<TieLine> tieLines)
    {
        ArgumentNullException.ThrowIfNull(tieLines);
        return Fit(tieLines, static (line, i) =>
        {
            double wAD = Open(line.Raffinate.Solute, i, "raffinate solute");
            double wDD = Open(line.Raffinate.Diluent, i, "raffinate diluent");
            double wAS = Open(line.Extract.Solute, i, "extract solute");
            double wSS = Open(line.Extract.Solvent, i, "extract solvent");
            return (Math.Log(wAD / wDD), Math.Log(wAS / wSS));
        });
    }

    private static CorrelationFit Fit(IReadOnlyList<TieLine> tieLines, Func<TieLine, int, (double X, double Y)> point)
    {
        int n = tieLines.Count;
        if (n < 2)
        {
            throw new ArgumentException($"Expected at least two tie lines for a correlation, got {n}.", nameof(tieLines));
        }

        var x = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            (x[i], y[i]) = point(tieLines[i], i);
        }

        double mx = x.Average();
        double my = y.Average();
        double sxx = 0;
        double sxy = 0;
        double syy = 0;
        for (int i = 0; i < n; i++)
        {
            double dx = x[i] - mx;
            double dy = y[i] - my;
            sxx += dx * dx;
            sxy += dx * dy;
            syy += dy * dy;
        }

        if (!(sxx > 0))
        {
            throw new ArgumentException("The tie lines give the same abscissa for every point: a straight line cannot be fitted.", nameof(tieLines));
        }

        double b = sxy / sxx;
        double a = my - (b * mx);
        double r2 = syy > 0 ? sxy * sxy / (sxx * syy) : 1;
        return new CorrelationFit(a, b, r2, n);
    }

    private static double Open(double value, int index, string what)
    {
        if (!(value > 0 && value < 1))
        {
            throw new ArgumentException($"Tie line {index + 1}: the {what} fraction is {value}; the correlation needs it strictly between 0 and 1.", "tieLines");
        }

        return value;
    }
}
