using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Spectre.Console;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Core.Equilibrium.TieLines;
using Tieflow.Files;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary>
/// <c>tieflow describe system FILE [--temperature K] [--json]</c>: what a system file's equilibrium data say, for a
/// person: the binodal as tie lines with their distribution coefficient and selectivity, the plait point estimate,
/// the Othmer-Tobias and Hand fits with R^2, and the ranges the data are valid for. Tie lines of an activity model are
/// traced at the temperature given (default: 298.15 K when the model covers it, else the middle of its range).
/// </summary>
internal static class DescribeCommand
{
    private const int TracedLines = 8;

    private sealed record Description(
        SystemFile File,
        double TemperatureKelvin,
        TemperatureRange Valid,
        IReadOnlyList<TieLine> Lines,
        bool Measured,
        PlaitPointEstimate? Plait,
        CorrelationFit? OthmerTobias,
        CorrelationFit? Hand,
        string? FitProblem,
        SoluteLimits? Limits);

    public static Command Create(CliContext context)
    {
        var describe = new Command("describe", "Describes input data for a person.");
        var file = new Argument<string>("FILE") { Description = "System file (JSON)" };
        Option<double?> temperature = new("--temperature") { Description = "Temperature for an activity model's tie lines, kelvin", HelpName = "K" };
        Option<bool> json = CommonOptions.Json();
        var system = new Command("system", "Tie lines with K and selectivity, plait point, Othmer-Tobias and Hand fits with R^2, valid ranges.") { file, temperature, json };
        system.SetAction(parsed => CommandRunner.Run(context, () => Run(context, parsed.GetValue(file)!, parsed.GetValue(temperature), parsed.GetValue(json))));
        describe.Subcommands.Add(system);
        return describe;
    }

    public static int Run(CliContext context, string path, double? temperature, bool json)
    {
        using (JsonDocument doc = JsonInputFile.Load(path))
        {
            CaseKinds.Expect(doc.RootElement, path, CaseKinds.System);
        }

        SystemFile file = SystemFileReader.Load(path);
        Description d = Describe(file, temperature, path);
        if (json)
        {
            JsonOutput.Print(context.Output, w => WriteJson(w, d));
        }
        else
        {
            WriteText(context.Console, d);
        }

        return ExitCodes.Success;
    }

    private static Description Describe(SystemFile file, double? requested, string path)
    {
        TemperatureRange valid = CaseReader.ValidTemperatures(file.Spec);
        double t = requested ?? file.Spec switch
        {
            TieLineSpec tl => tl.TemperatureKelvin,
            DistributionSpec { TemperatureKelvin: double dt } => dt,
            _ => valid.Contains(298.15) ? 298.15 : (valid.MinKelvin + valid.MaxKelvin) / 2,
        };
        if (!valid.Contains(t))
        {
            throw new CliUsageException($"--temperature {t.ToString("0.##", CultureInfo.InvariantCulture)} K is outside the temperatures of the data in {path} ({valid.MinKelvin:0.##} K to {valid.MaxKelvin:0.##} K)");
        }

        SystemFile atT = EquilibriumModelFactory.AtTemperature(file, t);
        IPhaseEquilibrium model = atT.Model;
        IReadOnlyList<TieLine> lines;
        bool measured = false;
        PlaitPointEstimate? plait = null;
        SoluteLimits? limits = null;
        if (file.Spec is TieLineSpec spec)
        {
            lines = spec.TieLines;
            measured = true;
            plait = model is TieLineTableModel table ? table.PlaitPoint : null;
            limits = model.SoluteLimits(t);
        }
        else
        {
            limits = model.SoluteLimits(t);
            lines = EnvelopeTrace.TieLines(model, t, TracedLines, 0.9);
        }

        CorrelationFit? ot = null, hand = null;
        string? problem = null;
        if (file.Spec is DistributionSpec)
        {
            problem = "the liquids are immiscible; the correlations are for partially miscible systems";
        }
        else
        {
            try
            {
                ot = TieLineCorrelations.OthmerTobias(lines);
                hand = TieLineCorrelations.Hand(lines);
            }
            catch (ArgumentException e)
            {
                problem = e.Message.Split(" (Parameter", 2)[0];
            }
        }

        return new Description(atT, t, valid, lines, measured, plait, ot, hand, problem, limits);
    }

    private static void WriteText(IAnsiConsole console, Description d)
    {
        TernarySystem s = d.File.System;
        string basis = s.Basis == CompositionBasis.Mass ? "mass" : "mole";
        string fr = basis + " fr.";
        console.WriteLine($"System '{d.File.Name}' ({d.File.Spec.Model}, {basis} basis): solute {s.Solute.Id}, diluent {s.Diluent.Id}, solvent {s.Solvent.Id}");
        console.WriteLine(d.File.Spec is DistributionSpec { TemperatureKelvin: null }
            ? "Valid at any temperature (the data name none)."
            : $"Valid from {Num(d.Valid.MinKelvin, "0.##")} K to {Num(d.Valid.MaxKelvin, "0.##")} K; described at {Num(d.TemperatureKelvin, "0.##")} K.");
        if (d.File.Spec is DistributionSpec ds)
        {
            console.WriteLine(ds.Isotherm.ConstantCoefficient is double k
                ? $"Distribution isotherm Y = k X with k = {Num(k, "G6")} (solute-free ratios: Y kg solute per kg solvent, X per kg diluent)."
                : $"Distribution isotherm of {ds.Isotherm.Points!.Count} points (X, Y), interpolated monotonically; X up to {Num(ds.Isotherm.Points[^1].X, "G6")}.");
        }

        console.WriteLine(d.Measured ? $"Tie lines as measured ({d.Lines.Count}), the binodal points at their ends:" : $"Tie lines traced from the model ({d.Lines.Count}), the binodal points at their ends:");
        var table = new Table().Border(TableBorder.Simple);
        table.AddColumn(TextOutput.Column("line", right: true));
        foreach (string phase in new[] { "raffinate", "extract" })
        {
            foreach (Component c in s.Components)
            {
                table.AddColumn(TextOutput.Column($"{phase} {fr} {c.Id}", right: true));
            }
        }

        table.AddColumn(TextOutput.Column("K", right: true));
        table.AddColumn(TextOutput.Column("selectivity", right: true));
        for (int i = 0; i < d.Lines.Count; i++)
        {
            TieLine l = d.Lines[i];
            table.AddRow(
                (i + 1).ToString(CultureInfo.InvariantCulture),
                Num(l.Raffinate.Solute, "F4"), Num(l.Raffinate.Diluent, "F4"), Num(l.Raffinate.Solvent, "F4"),
                Num(l.Extract.Solute, "F4"), Num(l.Extract.Diluent, "F4"), Num(l.Extract.Solvent, "F4"),
                Num(l.DistributionCoefficient, "G4"), Num(l.Selectivity, "G4"));
        }

        console.Write(table);
        if (d.Plait is { } p)
        {
            console.WriteLine(p.Found
                ? $"Plait point (estimated by the conjugate curve): {fr} {s.Solute.Id} {Num(p.Composition.Solute, "F4")}, {s.Diluent.Id} {Num(p.Composition.Diluent, "F4")}, {s.Solvent.Id} {Num(p.Composition.Solvent, "F4")}."
                : "Plait point: not found by extrapolating the conjugate curve; the data end at the last tie line.");
        }

        if (d.OthmerTobias is { } ot && d.Hand is { } h)
        {
            console.WriteLine($"Othmer-Tobias: ln((1 - w_SS)/w_SS) = {Num(ot.A, "F4")} + {Num(ot.B, "F4")} ln((1 - w_DD)/w_DD), R^2 = {Num(ot.RSquared, "F5")} over {ot.PointCount} lines.");
            console.WriteLine($"Hand: ln(w_AS/w_SS) = {Num(h.A, "F4")} + {Num(h.B, "F4")} ln(w_AD/w_DD), R^2 = {Num(h.RSquared, "F5")} over {h.PointCount} lines.");
            if (ot.RSquared < 0.99 || h.RSquared < 0.99)
            {
                console.WriteLine("An R^2 below 0.99 suggests a tie line that does not fit the others: check the data.");
            }
        }
        else if (d.FitProblem is { } problem)
        {
            console.WriteLine($"Othmer-Tobias and Hand fits: not applicable ({problem}).");
        }

        if (d.Measured && d.Lines.Count > 0)
        {
            console.WriteLine($"The measured tie lines span a raffinate solute {fr} of {Num(d.Lines.Min(l => l.Raffinate.Solute), "F4")} to {Num(d.Lines.Max(l => l.Raffinate.Solute), "F4")}; " +
                "below the first the binary ends are extrapolated, above the last the plait point estimate closes the envelope.");
        }

        if (d.Limits is { } lim && d.File.Spec is not DistributionSpec)
        {
            console.WriteLine($"Two liquid phases up to a solute {fr} of {Num(lim.Raffinate, "F4")} in the raffinate and {Num(lim.Extract, "F4")} in the extract.");
        }

        TextOutput.WriteNotice(console);
    }

    private static void WriteJson(Utf8JsonWriter w, Description d)
    {
        TernarySystem s = d.File.System;
        w.WriteStartObject();
        w.WriteString("name", d.File.Name);
        w.WriteString("model", d.File.Spec.Model);
        w.WriteString("basis", s.Basis == CompositionBasis.Mass ? "mass" : "mole");
        w.WriteStartObject("components");
        w.WriteString("solute", s.Solute.Id);
        w.WriteString("diluent", s.Diluent.Id);
        w.WriteString("solvent", s.Solvent.Id);
        w.WriteEndObject();
        JsonOutput.WriteNumber(w, "temperature", d.TemperatureKelvin);
        if (d.File.Spec is DistributionSpec { TemperatureKelvin: null })
        {
            w.WriteNull("validTemperatures");
        }
        else
        {
            w.WriteStartArray("validTemperatures");
            w.WriteNumberValue(d.Valid.MinKelvin);
            w.WriteNumberValue(d.Valid.MaxKelvin);
            w.WriteEndArray();
        }

        w.WriteBoolean("measured", d.Measured);
        w.WriteStartArray("tieLines");
        foreach (TieLine l in d.Lines)
        {
            w.WriteStartObject();
            JsonOutput.WriteComposition(w, "raffinate", l.Raffinate, s);
            JsonOutput.WriteComposition(w, "extract", l.Extract, s);
            JsonOutput.WriteNumber(w, "distributionCoefficient", l.DistributionCoefficient);
            JsonOutput.WriteNumber(w, "selectivity", l.Selectivity);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        if (d.Plait is { Found: true } p)
        {
            JsonOutput.WriteComposition(w, "plaitPoint", p.Composition, s);
        }
        else
        {
            w.WriteNull("plaitPoint");
        }

        WriteFit(w, "othmerTobias", d.OthmerTobias);
        WriteFit(w, "hand", d.Hand);
        if (d.Limits is { } lim && d.File.Spec is not DistributionSpec)
        {
            w.WriteStartObject("soluteLimits");
            JsonOutput.WriteNumber(w, "raffinate", lim.Raffinate);
            JsonOutput.WriteNumber(w, "extract", lim.Extract);
            w.WriteEndObject();
        }
        else
        {
            w.WriteNull("soluteLimits");
        }

        JsonOutput.WriteNotice(w);
        w.WriteEndObject();
    }

    private static void WriteFit(Utf8JsonWriter w, string name, CorrelationFit? fit)
    {
        if (fit is not { } f)
        {
            w.WriteNull(name);
            return;
        }

        w.WriteStartObject(name);
        JsonOutput.WriteNumber(w, "a", f.A);
        JsonOutput.WriteNumber(w, "b", f.B);
        JsonOutput.WriteNumber(w, "rSquared", f.RSquared);
        w.WriteNumber("points", f.PointCount);
        w.WriteEndObject();
    }

    private static string Num(double v, string format) => TextOutput.Num(v, format);
}
