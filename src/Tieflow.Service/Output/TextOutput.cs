using System.Globalization;
using Spectre.Console;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;

namespace Tieflow.Service.Output;

/// <summary>Readable tables of streams for the console.</summary>
internal static class TextOutput
{
    public static Table StreamTable(TernarySystem system, IEnumerable<(string Name, MaterialStream Stream)> rows) =>
        StreamTable(system, rows.Select(r => (r.Name, (string?)null, r.Stream)), withEfficiency: false);

    /// <summary>A stream table with a stage-efficiency column (blank where a row has none).</summary>
    public static Table StreamTable(TernarySystem system, IEnumerable<(string Name, string? Efficiency, MaterialStream Stream)> rows, bool withEfficiency = true)
    {
        string unit = system.Basis == CompositionBasis.Mass ? "kg/h" : "kmol/h";
        string fraction = system.Basis == CompositionBasis.Mass ? "w" : "x";
        var table = new Table().Border(TableBorder.Simple);
        table.AddColumn("stream");
        if (withEfficiency)
        {
            table.AddColumn(new TableColumn("E").RightAligned());
        }

        table.AddColumn(new TableColumn($"flow {unit}").RightAligned());
        foreach (Component c in system.Components)
        {
            table.AddColumn(new TableColumn($"{fraction} {c.Id}").RightAligned());
        }

        foreach (var (name, efficiency, s) in rows)
        {
            string[] numbers = [Num(s.Flow, "F3"), Num(s.Composition.Solute, "F5"), Num(s.Composition.Diluent, "F5"), Num(s.Composition.Solvent, "F5")];
            table.AddRow(withEfficiency ? [Markup.Escape(name), efficiency ?? string.Empty, .. numbers] : [Markup.Escape(name), .. numbers]);
        }

        return table;
    }

    public static string Num(double v, string format) => v.ToString(format, CultureInfo.InvariantCulture);

    /// <summary>One line per warning; stage warnings start with the mark of their rows in the table.</summary>
    public static void WriteWarnings(IAnsiConsole console, IReadOnlyList<CascadeWarning> warnings)
    {
        foreach (CascadeWarning w in warnings)
        {
            console.WriteLine($"{(w.Stage is null ? "warning" : "* warning")}: {w.Message}");
        }
    }

    public static void WriteNotice(IAnsiConsole console) => console.WriteLine(Notices.Advisory);
}
