using Spectre.Console;
using Tieflow.Core.Chemistry;
using Tieflow.Core.Equilibrium;
using Tieflow.Files;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow calc split</c>: mixes the inlets and splits the mixture at equilibrium.</summary>
internal static class SplitHandler
{
    public static int Run(CliContext context, string casePath, bool json)
    {
        SplitCase c = CaseReader.LoadSplit(casePath);
        TernarySystem system = c.System.System;
        MaterialStream mixture = MaterialStream.Mix(c.Inlets.ToArray());
        PhaseSplit split = c.System.Model.Split(mixture.Composition, c.TemperatureKelvin);
        double extractFlow = mixture.Flow * split.ExtractFraction;
        var raffinate = new MaterialStream(mixture.Flow - extractFlow, split.Raffinate);
        var extract = new MaterialStream(extractFlow, split.Extract);

        if (json)
        {
            JsonOutput.Print(context.Output, w =>
            {
                w.WriteStartObject();
                w.WriteNumber("phases", split.IsTwoPhase ? 2 : 1);
                JsonOutput.WriteStream(w, "mixture", mixture, system);
                if (split.IsTwoPhase)
                {
                    JsonOutput.WriteStream(w, "raffinate", raffinate, system);
                    JsonOutput.WriteStream(w, "extract", extract, system);
                    // 0/0 when the inlets hold no solute: "not defined", null in JSON.
                    JsonOutput.WriteNumber(w, "distributionCoefficient", split.TieLine.DistributionCoefficient);
                    JsonOutput.WriteNumber(w, "selectivity", split.TieLine.Selectivity);
                }

                JsonOutput.WriteNotice(w);
                w.WriteEndObject();
            });
            return ExitCodes.Success;
        }

        IAnsiConsole console = context.Console;
        console.WriteLine($"Equilibrium split of {c.Inlets.Count} inlet(s) at {c.TemperatureKelvin:0.##} K, system '{c.System.Name}' ({system.Basis.ToString().ToLowerInvariant()} basis)");
        if (!split.IsTwoPhase)
        {
            console.Write(TextOutput.StreamTable(system, [("mixture", mixture)]));
            console.WriteLine("The mixture is one liquid phase: it does not split.");
        }
        else
        {
            console.Write(TextOutput.StreamTable(system, [("mixture", mixture), ("raffinate", raffinate), ("extract", extract)]));
            console.WriteLine($"distribution coefficient K = {TextOutput.Num(split.TieLine.DistributionCoefficient, "G5")}, selectivity = {TextOutput.Num(split.TieLine.Selectivity, "G5")}");
        }

        TextOutput.WriteNotice(console);
        return ExitCodes.Success;
    }
}
