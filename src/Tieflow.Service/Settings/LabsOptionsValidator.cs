namespace Tieflow.Service.Settings;

/// <summary>Validates <c>Tieflow:Labs</c>.</summary>
internal sealed class LabsOptionsValidator(SettingsContext context) : SettingsValidator<LabsOptions>(context)
{
    public override IReadOnlyList<SettingsProblem> Problems(LabsOptions options)
    {
        var problems = new List<SettingsProblem>();
        NotBlank(problems, $"{LabsOptions.Section}:Folder", options.Folder);
        if (!string.IsNullOrWhiteSpace(options.Folder))
        {
            Sources.LabFolderSourceFactory.ToSourceOptions(options, null, problems);
        }
        return problems;
    }
}
