using System.Text.Json;
using Spectre.Console;
using Tieflow.Core.Cascade;
using Tieflow.Core.Chemistry;

namespace Tieflow.Service.Output;

/// <summary>Cascade results as JSON (docs/file-formats.md) and as a readable stage table.</summary>
internal static class CascadeOutput
{
    /// <summary>Writes the cascade object; <paramref name="notice"/> adds the advisory notice when it is the whole document.</summary>
    public static void WriteJson(Utf8JsonWriter w, CascadeResult result, TernarySystem system, bool notice = false)
    {
        w.WriteStartObject();
        w.WriteStartArray("stages");
        foreach (StageResult stage in result.Stages)
        {
            w.WriteStartObject();
            w.WriteNumber("stage", stage.Stage);
            JsonOutput.WriteStream(w, "raffinate", stage.Raffinate, system);
            JsonOutput.WriteStream(w, "extract", stage.Extract, system);
            JsonOutput.WriteNumber(w, "efficiency", stage.Efficiency);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        JsonOutput.WriteStream(w, "raffinate", result.Raffinate, system);
        JsonOutput.WriteStream(w, "extract", result.Extract, system);
        JsonOutput.WriteNumber(w, "recovery", result.Recovery);
        w.WriteString("arrangement", result.Arrangement == CascadeArrangement.Crosscurrent ? "crosscurrent" : "countercurrent");
        w.WriteNumber("iterations", result.Iterations);
        JsonOutput.WriteNumber(w, "balanceResidual", result.BalanceResidual);
        if (notice)
        {
            JsonOutput.WriteNotice(w);
        }

        w.WriteEndObject();
    }

    public static void WriteTable(IAnsiConsole console, CascadeResult result, TernarySystem system)
    {
        var rows = new List<(string, string?, MaterialStream)>();
        foreach (StageResult s in result.Stages)
        {
            string e = s.Efficiency.ToString("0.###", System.Globalization.CultureInfo.InvariantCulture);
            rows.Add(($"stage {s.Stage} raffinate", e, s.Raffinate));
            rows.Add(($"stage {s.Stage} extract", null, s.Extract));
        }

        rows.Add(("final raffinate", null, result.Raffinate));
        rows.Add((result.Arrangement == CascadeArrangement.Crosscurrent ? "combined extract" : "final extract", null, result.Extract));
        console.Write(TextOutput.StreamTable(system, rows));
        console.WriteLine($"recovery of {system.Solute.Id} into the extract: {result.Recovery:P2}; balance residual {result.BalanceResidual:E1}; {result.Iterations} iteration(s)");
    }
}
