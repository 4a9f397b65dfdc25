using Spectre.Console;
using Tieflow.Core.Cascade;
using Tieflow.Files;
using Tieflow.Service.Output;

namespace Tieflow.Service.Cli;

/// <summary><c>tieflow calc cascade</c>: solves a cross-current or counter-current cascade.</summary>
internal static class CascadeHandler
{
    public static int Run(CliContext context, string casePath, bool json)
    {
        CascadeCase c = CaseReader.LoadCascade(casePath);
        CascadeResult result = CascadeRun.Solve(c);
        if (json)
        {
            JsonOutput.Print(context.Output, w =>
            {
                CascadeOutput.WriteJson(w, result, c.System.System, notice: true);
            });
            return ExitCodes.Success;
        }

        context.Console.WriteLine($"{(c.Arrangement == CascadeArrangement.Crosscurrent ? "Cross-current" : "Counter-current")} cascade of {c.Stages} stage(s) at {c.TemperatureKelvin:0.##} K, system '{c.System.Name}'");
        CascadeOutput.WriteTable(context.Console, result, c.System.System);
        TextOutput.WriteNotice(context.Console);
        return ExitCodes.Success;
    }
}
