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
}
