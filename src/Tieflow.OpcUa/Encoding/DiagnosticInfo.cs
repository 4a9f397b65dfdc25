namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// Diagnostic information returned with a result (OPC 10000-6 §5.2.2.12). The integer fields index the response's
/// string table; absent fields are null.
/// </summary>
public sealed class DiagnosticInfo
{
    /// <summary>Index of the symbolic id in the string table, or null.</summary>
    public int? SymbolicId { get; init; }

    /// <summary>Index of the namespace URI in the string table, or null.</summary>
    public int? NamespaceUri { get; init; }

    /// <summary>Index of the locale in the string table, or null.</summary>
    public int? Locale { get; init; }

    /// <summary>Index of the localized text in the string table, or null.</summary>
    public int? LocalizedText { get; init; }

    /// <summary>Vendor-specific additional text, or null.</summary>
    public string? AdditionalInfo { get; init; }

    /// <summary>The status code of an inner operation, or null.</summary>
    public StatusCode? InnerStatusCode { get; init; }

    /// <summary>Diagnostics of an inner operation, or null.</summary>
    public DiagnosticInfo? InnerDiagnosticInfo { get; init; }
}
