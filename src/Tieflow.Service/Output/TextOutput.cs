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
        string unit = FlowUnit(system);
        string fraction = system.Basis == CompositionBasis.Mass ? "mass fr." : "mole fr.";
        var table = new Table().Border(TableBorder.Simple);
        table.AddColumn(Column("stream", right: false));
        if (withEfficiency)
        {
            table.AddColumn(Column("E Murphree", right: true));
        }

        table.AddColumn(Column($"flow {unit}", right: true));
        foreach (Component c in system.Components)
        {
            table.AddColumn(Column($"{fraction} {c.Id}", right: true));
        }

        foreach (var (name, efficiency, s) in rows)
        {
            string[] numbers = [Num(s.Flow, "F3"), Num(s.Composition.Solute, "F5"), Num(s.Composition.Diluent, "F5"), Num(s.Composition.Solvent, "F5")];
            table.AddRow(withEfficiency ? [Markup.Escape(name), efficiency ?? string.Empty, .. numbers] : [Markup.Escape(name), .. numbers]);
        }

        return table;
    }

    /// <summary>The flow unit of a system's basis.</summary>
    public static string FlowUnit(TernarySystem system) => system.FlowUnit;

    /// <summary>A column whose header is plain text (ids are never read as console markup).</summary>
    public static TableColumn Column(string header, bool right) =>
        right ? new TableColumn(new Text(header)).RightAligned() : new TableColumn(new Text(header));

    /// <summary>A number in a fixed format, or "not defined" when it is not finite.</summary>
    public static string Num(double v, string format) => double.IsFinite(v) ? v.ToString(format, CultureInfo.InvariantCulture) : "not defined";

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
