using System.CommandLine;

namespace Tieflow.Service.Cli;

/// <summary>Options shared by several commands.</summary>
internal static class CommonOptions
{
    public static Option<string> Case() => new("--case") { Description = "Case file (JSON, see CONTRACTS.md)", Required = true, HelpName = "FILE" };

    public static Option<bool> Json() => new("--json") { Description = "Print only JSON on standard output" };
}
