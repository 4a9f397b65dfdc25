namespace Tieflow.Service.Report;

/// <summary>How much of a long history a report keeps.</summary>
/// <param name="PointsPerSeries">Most points per plotted time series.</param>
/// <param name="Alerts">Most alert episodes kept per unit (the latest); older ones are counted.</param>
/// <param name="LabRows">Most lab comparisons listed per unit (the latest); every one is plotted.</param>
internal sealed record ReportLimits(int PointsPerSeries = 720, int Alerts = 500, int LabRows = 60);
