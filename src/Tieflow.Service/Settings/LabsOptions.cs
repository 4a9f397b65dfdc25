namespace Tieflow.Service.Settings;

/// <summary>Settings section <c>Tieflow:Labs</c>: lab results.</summary>
internal sealed class LabsOptions
{
    /// <summary>The section's key path.</summary>
    public const string Section = "Tieflow:Labs";

    /// <summary><c>Folder</c>: a drop folder of lab CSV files; no lab source when absent.</summary>
    public string? Folder { get; set; }
}
