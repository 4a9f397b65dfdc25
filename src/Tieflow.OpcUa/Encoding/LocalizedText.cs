namespace Tieflow.OpcUa.Encoding;

/// <summary>Human-readable text with an optional locale (OPC 10000-6 §5.2.2.14).</summary>
public readonly struct LocalizedText : IEquatable<LocalizedText>
{
    /// <summary>Creates a localized text.</summary>
    /// <param name="text">The text, or null.</param>
    /// <param name="locale">The locale (for example <c>en</c>), or null.</param>
    public LocalizedText(string? text, string? locale = null)
    {
        Text = text;
        Locale = locale;
    }

    /// <summary>The locale, or null.</summary>
    public string? Locale { get; }

    /// <summary>The text, or null.</summary>
    public string? Text { get; }

    /// <summary>The text (empty when null).</summary>
    public override string ToString() => Text ?? string.Empty;

    /// <inheritdoc />
    public bool Equals(LocalizedText other) =>
        string.Equals(Locale, other.Locale, StringComparison.Ordinal) && string.Equals(Text, other.Text, StringComparison.Ordinal);

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is LocalizedText other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode() => HashCode.Combine(Locale, Text);

    /// <summary>Compares two texts.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator ==(LocalizedText left, LocalizedText right) => left.Equals(right);

    /// <summary>Compares two texts.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator !=(LocalizedText left, LocalizedText right) => !left.Equals(right);
}
