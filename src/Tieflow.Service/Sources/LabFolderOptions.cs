using Tieflow.Service.Hosting;

namespace Tieflow.Service.Sources;

/// <summary>Settings of the lab drop folder (section <c>Tieflow:Labs</c>); the host binds them.</summary>
internal sealed class LabFolderOptions
{
    /// <summary>The drop folder (required); <c>processed/</c> and <c>rejected/</c> are made inside it.</summary>
    public string? Folder { get; set; }

    /// <summary>How often the folder is looked at (default 10 s).</summary>
    public TimeSpan PollInterval { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>
    /// How long a file's size and last write time must stay unchanged before it is read (default 5 s): a file that is
    /// still being written is left for a later look.
    /// </summary>
    public TimeSpan SettleTime { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>Every problem of the settings, each naming its key path; empty when they can be used.</summary>
    public IReadOnlyList<string> Problems()
    {
        var problems = new List<string>();
        if (string.IsNullOrWhiteSpace(Folder))
        {
            problems.Add($"{SettingsKeys.LabsFolder}: missing; expected the folder lab CSV files are dropped into");
        }

        if (PollInterval < TimeSpan.FromMilliseconds(10) || PollInterval > TimeSpan.FromHours(1))
        {
            problems.Add($"{SettingsKeys.LabsPollInterval}: {PollInterval} is out of range; expected 00:00:00.010 to 01:00:00");
        }

        if (SettleTime < TimeSpan.Zero || SettleTime > TimeSpan.FromHours(1))
        {
            problems.Add($"{SettingsKeys.LabsSettleTime}: {SettleTime} is out of range; expected 00:00:00 to 01:00:00");
        }

        return problems;
    }
}
