namespace Tieflow.Service.Report;

/// <summary>What the report's header says about the run.</summary>
/// <param name="Site">The plant's site.</param>
/// <param name="Sources">The input files by name (no folders), for the header.</param>
/// <param name="Rows">History rows read.</param>
/// <param name="Records">Records produced.</param>
internal sealed record ReportHeader(string Site, IReadOnlyList<string> Sources, long Rows, long Records);
