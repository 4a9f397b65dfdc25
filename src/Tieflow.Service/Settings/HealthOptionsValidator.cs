namespace Tieflow.Service.Settings;

/// <summary>Validates <c>Tieflow:Health</c> (the port's range is part of the shape check).</summary>
internal sealed class HealthOptionsValidator(SettingsContext context) : SettingsValidator<HealthOptions>(context)
{
    public override IReadOnlyList<SettingsProblem> Problems(HealthOptions options)
    {
        var problems = new List<SettingsProblem>();
        if (options.Port is < 0 or > 65535)
        {
            problems.Add(new SettingsProblem($"{HealthOptions.Section}:Port", $"expected a port from 0 (a free port) to 65535, found {options.Port}"));
        }

        return problems;
    }
}
