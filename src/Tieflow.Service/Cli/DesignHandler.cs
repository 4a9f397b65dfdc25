using Spectre.Console;
using Tieflow.Core.Cascade;
using Tieflow.Files;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow calc design</c>: stages for a target, solvent flow for a target, or minimum solvent flow.</summary>
internal static class DesignHandler
{
    public static int Run(CliContext context, string casePath, bool json)
    {
        DesignCase d = CaseReader.LoadDesign(casePath);
        CascadeCase c = d.Cascade;
        if (c.Arrangement != CascadeArrangement.Countercurrent)
        {
            throw new InputException(casePath, "$.arrangement", "design calculations are for counter-current cascades; use \"countercurrent\" (solve a cross-current cascade with 'tieflow calc cascade')");
        }

        var design = new CascadeDesign(c.System.Model, c.TemperatureKelvin);
        DesignTarget target = d.Target;
        string unit = c.System.System.FlowUnit;

        if (d.Find == DesignGoal.MinimumSolvent)
        {
            MinimumSolventResult minimum = design.FindMinimumSolvent(c.Feed, c.Solvent.Composition, target);
            if (json)
            {
                JsonOutput.Print(context.Output, w =>
                {
                    w.WriteStartObject();
                    w.WriteNull("stages");
                    w.WriteNull("fractionalStages");
                    w.WriteNumber("solventFlow", JsonOutput.Round(minimum.MinimumSolventFlow));
                    w.WriteNumber("minimumSolventFlow", JsonOutput.Round(minimum.MinimumSolventFlow));
                    if (double.IsFinite(minimum.PinchRaffinateSoluteFraction))
                    {
                        w.WriteNumber("pinchRaffinateSoluteFraction", JsonOutput.Round(minimum.PinchRaffinateSoluteFraction));
                    }
                    else
                    {
                        // No pinch: the limit is the overall balance (all the solute the solvent can take at the target).
                        w.WriteNull("pinchRaffinateSoluteFraction");
                    }
                    w.WriteNull("cascade");
                    JsonOutput.WriteContext(w, c.System.Name, c.System.System, c.TemperatureKelvin);
                    JsonOutput.WriteNotice(w);
                    w.WriteEndObject();
                });
                return ExitCodes.Success;
            }

            context.Console.WriteLine($"Minimum solvent flow for {target} at {c.TemperatureKelvin:0.##} K, system '{c.System.Name}': {minimum.MinimumSolventFlow:G6} {unit}");
            context.Console.WriteLine(double.IsFinite(minimum.PinchRaffinateSoluteFraction)
                ? $"At that flow a pinch (infinitely many stages) forms where the raffinate holds {minimum.PinchRaffinateSoluteFraction:G5} {c.System.System.Solute.Id}. Real cascades need more solvent than this."
                : "At that flow the overall balance, not a pinch, sets the limit: the extract leaving stage 1 is in equilibrium with the feed. Real cascades need more solvent than this.");
            TextOutput.WriteNotice(context.Console);
            return ExitCodes.Success;
        }

        DesignResult result = d.Find == DesignGoal.Stages
            ? design.FindStages(c.Feed, c.Solvent, target, c.Efficiencies)
            : design.FindSolvent(c.Feed, c.Solvent.Composition, c.Stages, target, c.Efficiencies);

        var solvent = new Core.Chemistry.MaterialStream(result.SolventFlow, c.Solvent.Composition);
        IReadOnlyList<CascadeWarning> warnings = ResultWarnings.ForDesign(c.System.Model, c.TemperatureKelvin, c.Feed, c.Solvent.Composition, result);
        CascadeOutput.Figures figures = CascadeOutput.FiguresOf(c.System.Model, c.Feed, solvent, result.Cascade);
        if (json)
        {
            JsonOutput.Print(context.Output, w =>
            {
                w.WriteStartObject();
                w.WriteNumber("stages", result.Stages);
                w.WriteNumber("fractionalStages", JsonOutput.Round(result.FractionalStages));
                w.WriteNumber("solventFlow", JsonOutput.Round(result.SolventFlow));
                w.WriteNumber("minimumSolventFlow", JsonOutput.Round(result.MinimumSolventFlow));
                w.WritePropertyName("cascade");
                CascadeOutput.WriteJson(w, result.Cascade, c.System.System, figures, warnings: null);
                JsonOutput.WriteWarnings(w, warnings);
                JsonOutput.WriteContext(w, c.System.Name, c.System.System, c.TemperatureKelvin);
                JsonOutput.WriteNotice(w);
                w.WriteEndObject();
            });
            return ExitCodes.Success;
        }

        context.Console.WriteLine(d.Find == DesignGoal.Stages
            ? $"Stages for {target} with {result.SolventFlow:G6} {unit} of solvent: {result.FractionalStages:0.00} ({result.Stages} whole stages); minimum solvent {result.MinimumSolventFlow:G6} {unit}"
            : $"Solvent flow for {target} with {result.Stages} stages: {result.SolventFlow:G6} {unit} (minimum solvent {result.MinimumSolventFlow:G6} {unit})");
        context.Console.WriteLine($"Cascade at the answer ({result.Stages} stages):");
        CascadeOutput.WriteTable(context.Console, result.Cascade, c.System.System, figures, warnings);
        TextOutput.WriteNotice(context.Console);
        return ExitCodes.Success;
    }
}
