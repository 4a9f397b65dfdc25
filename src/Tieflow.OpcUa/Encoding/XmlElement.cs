namespace Tieflow.OpcUa.Encoding;

/// <summary>An XML fragment carried as UTF-8 text (OPC 10000-6 §5.2.2.8); not parsed by this library.</summary>
public readonly struct XmlElement : IEquatable<XmlElement>
{
    /// <summary>Wraps the XML text.</summary>
    /// <param name="value">The XML text, or null.</param>
    public XmlElement(string? value) => Value = value;

    /// <summary>The XML text, or null.</summary>
    public string? Value { get; }

    /// <summary>The XML text (empty when null).</summary>
    public override string ToString() => Value ?? string.Empty;

    /// <inheritdoc />
    public bool Equals(XmlElement other) => string.Equals(Value, other.Value, StringComparison.Ordinal);

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is XmlElement other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode() => Value?.GetHashCode(StringComparison.Ordinal) ?? 0;

    /// <summary>Compares two fragments as text.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator ==(XmlElement left, XmlElement right) => left.Equals(right);

    /// <summary>Compares two fragments as text.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator !=(XmlElement left, XmlElement right) => !left.Equals(right);
}
