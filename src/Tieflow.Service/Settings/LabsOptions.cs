namespace Tieflow.Service.Settings;

/// <summary>Settings section <c>Tieflow:Labs</c>: lab results.</summary>
internal sealed class LabsOptions
{
    /// <summary>The section's key path.</summary>
    public const string Section = "Tieflow:Labs";

    /// <summary><c>Folder</c>: a drop folder of lab CSV files; no lab source when absent.</summary>
    public string? Folder { get; set; }

    /// <summary>How often the folder is looked at (duration text; default 10 s).</summary>
    public string? PollInterval { get; set; }

    /// <summary>How long a file must stay unchanged before it is read (duration text; default 5 s).</summary>
    public string? SettleTime { get; set; }
}
