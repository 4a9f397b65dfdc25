namespace Tieflow.Service.Report;

/// <summary>A plot of the report: its element id, its SVG (clip ids made unique on the page) and what it shows.</summary>
/// <param name="Id">The id of its figure on the page, also the name of its .svg file beside the page.</param>
/// <param name="Title">Heading of the figure.</param>
/// <param name="Svg">The SVG document, without the XML declaration.</param>
/// <param name="Caption">What it shows and how to read it.</param>
internal sealed record ReportPlot(string Id, string Title, string Svg, string Caption);
