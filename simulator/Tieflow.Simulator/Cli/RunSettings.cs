namespace Tieflow.Simulator.Cli;

/// <summary>The options of <c>tieflow-sim run</c>.</summary>
/// <param name="ScenarioPath">The scenario file.</param>
/// <param name="HistoryPath">History CSV to write, or null.</param>
/// <param name="LabsPath">Lab CSV to write, or null.</param>
/// <param name="TruthPath">Truth file to write, or null.</param>
/// <param name="Serve">OPC UA endpoint to serve on, or null.</param>
/// <param name="Speed">Simulated seconds per wall-clock second, or null for as fast as possible.</param>
internal sealed record RunSettings(string ScenarioPath, string? HistoryPath, string? LabsPath, string? TruthPath, Uri? Serve, double? Speed)
{
    /// <summary>Certificate store folder that secures the server, or null for SecurityPolicy None only.</summary>
    public string? Pki { get; init; }

    /// <summary>
    /// The wall-clock instant at which plant time was the scenario's start, or null: then plant time starts at the
    /// scenario's start when the run starts. With an anchor, plant time is start + speed × (now − anchor), so that a
    /// restarted run with the same anchor and speed resumes where its clock says, never back at the start.
    /// </summary>
    public DateTimeOffset? Anchor { get; init; }
}
