using System.CommandLine;

namespace Tieflow.Service.Cli;

/// <summary>The <c>calc</c> command group: single-shot calculations on case files.</summary>
internal static class CalcCommands
{
    public static Command Create(CliContext context)
    {
        var calc = new Command("calc", "Calculations on case files: equilibrium split, cascades, design, reconciliation.");
        calc.Subcommands.Add(CaseCommand(context, "split", "Mixes the inlets and splits the mixture at equilibrium.", SplitHandler.Run));
        calc.Subcommands.Add(SweepableCommand(context, "cascade", "Solves a cross-current or counter-current cascade with a stage efficiency per stage.", CascadeHandler.Run, SweepHandler.RunCascade));
        calc.Subcommands.Add(SweepableCommand(context, "design", "Finds the stages, the solvent flow or the minimum solvent flow for a target.", DesignHandler.Run, SweepHandler.RunDesign));
        calc.Subcommands.Add(CaseCommand(context, "reconcile", "Reconciles measurements of a process network and tests for gross errors.", ReconcileCommand.Run));
        return calc;
    }

    /// <summary>A case command with <c>--sweep NAME=FROM:TO:POINTS</c>, which runs the case once per value and prints CSV.</summary>
    public static Command SweepableCommand(CliContext context, string name, string description, Func<CliContext, string, bool, int> handler, Func<CliContext, string, string, bool, int> sweepHandler)
    {
        Option<string> caseOption = CommonOptions.Case();
        Option<bool> json = CommonOptions.Json();
        Option<string?> sweep = new("--sweep")
        {
            Description = "Run once per value of one input and print CSV (JSON with --json): " + SweepSpec.Form,
            HelpName = "NAME=FROM:TO:POINTS",
        };
        var command = new Command(name, description) { caseOption, json, sweep };
        command.SetAction(parsed => CommandRunner.Run(context, () => parsed.GetValue(sweep) is { } s
            ? sweepHandler(context, parsed.GetValue(caseOption)!, s, parsed.GetValue(json))
            : handler(context, parsed.GetValue(caseOption)!, parsed.GetValue(json))));
        return command;
    }

    /// <summary>A command of the form <c>NAME --case FILE [--json]</c> handing off to one handler.</summary>
    public static Command CaseCommand(CliContext context, string name, string description, Func<CliContext, string, bool, int> handler)
    {
        Option<string> caseOption = CommonOptions.Case();
        Option<bool> json = CommonOptions.Json();
        var command = new Command(name, description) { caseOption, json };
        command.SetAction(parsed => CommandRunner.Run(context, () => handler(context, parsed.GetValue(caseOption)!, parsed.GetValue(json))));
        return command;
    }
}
