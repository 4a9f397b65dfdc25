namespace Tieflow.Service.Settings;

/// <summary>One problem of the settings: the key path (<c>Tieflow:Store:Path</c>) and what was expected.</summary>
internal sealed record SettingsProblem(string KeyPath, string Message)
{
    public override string ToString() => $"{KeyPath}: {Message}";
}
