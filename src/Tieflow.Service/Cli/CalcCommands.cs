using System.CommandLine;

namespace Tieflow.Service.Cli;

/// <summary>The <c>calc</c> command group: single-shot calculations on case files.</summary>
internal static class CalcCommands
{
    public static Command Create(CliContext context)
    {
        var calc = new Command("calc", "Calculations on case files: equilibrium split, cascades, design, reconciliation.");
        calc.Subcommands.Add(CaseCommand(context, "split", "Mixes the inlets and splits the mixture at equilibrium.", SplitHandler.Run));
        calc.Subcommands.Add(CaseCommand(context, "cascade", "Solves a cross-current or counter-current cascade with a stage efficiency per stage.", CascadeHandler.Run));
        calc.Subcommands.Add(CaseCommand(context, "design", "Finds the stages, the solvent flow or the minimum solvent flow for a target.", DesignHandler.Run));
        calc.Subcommands.Add(CaseCommand(context, "reconcile", "Reconciles measurements of a process network and tests for gross errors.", ReconcileCommand.Run));
        return calc;
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
