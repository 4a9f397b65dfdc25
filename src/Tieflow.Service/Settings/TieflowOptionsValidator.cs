namespace Tieflow.Service.Settings;

/// <summary>
/// Validates the <c>Tieflow</c> section itself: the shape of the whole section (unknown keys, values of the wrong type,
/// see <see cref="SettingsShape"/>), the plant file, and the unit list. Whether the listed units are in the plant is
/// checked when the plant file is read at start.
/// </summary>
internal sealed class TieflowOptionsValidator(SettingsContext context) : SettingsValidator<TieflowOptions>(context)
{
    public override IReadOnlyList<SettingsProblem> Problems(TieflowOptions options)
    {
        var problems = new List<SettingsProblem>(SettingsShape.Check(Context.Configuration));
        string? kind = Context.Configuration[$"{SourceOptions.Section}:Kind"];
        bool simulated = string.Equals(kind, SourceOptions.Simulator, StringComparison.Ordinal);
        if (options.Plant is not null || !simulated)
        {
            if (Required(problems, "Tieflow:Plant", options.Plant, "the plant file (*.plant.json) that describes the units to watch"))
            {
                FileExists(problems, "Tieflow:Plant", options.Plant!);
            }
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < options.Units.Count; i++)
        {
            string? id = options.Units[i];
            if (string.IsNullOrWhiteSpace(id))
            {
                problems.Add(new SettingsProblem($"Tieflow:Units:{i}", "expected a unit id of the plant file"));
            }
            else if (!seen.Add(id))
            {
                problems.Add(new SettingsProblem($"Tieflow:Units:{i}", $"unit '{id}' is listed twice"));
            }
        }

        return problems;
    }
}
