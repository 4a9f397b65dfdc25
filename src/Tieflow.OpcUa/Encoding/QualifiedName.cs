using System.Globalization;

namespace Tieflow.OpcUa.Encoding;

/// <summary>A name qualified by a namespace index, as used for browse names (text form <c>2:Plant</c>).</summary>
public readonly struct QualifiedName : IEquatable<QualifiedName>
{
    /// <summary>Creates a qualified name.</summary>
    /// <param name="name">The name, or null.</param>
    /// <param name="namespaceIndex">The namespace index.</param>
    public QualifiedName(string? name, ushort namespaceIndex = 0)
    {
        Name = name;
        NamespaceIndex = namespaceIndex;
    }

    /// <summary>The namespace index.</summary>
    public ushort NamespaceIndex { get; }

    /// <summary>The name, or null.</summary>
    public string? Name { get; }

    /// <summary>Parses <c>index:name</c> or a bare name (namespace 0).</summary>
    /// <param name="text">The text.</param>
    /// <returns>The qualified name.</returns>
    /// <exception cref="FormatException">The index before ':' is not a number 0-65535.</exception>
    public static QualifiedName Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var colon = text.IndexOf(':', StringComparison.Ordinal);
        if (colon <= 0 || text.AsSpan(0, colon).ContainsAnyExceptInRange('0', '9'))
        {
            return new QualifiedName(text);
        }

        if (!ushort.TryParse(text.AsSpan(0, colon), NumberStyles.None, CultureInfo.InvariantCulture, out var ns))
        {
            throw new FormatException($"QualifiedName '{text}': the namespace index before ':' must be 0-65535");
        }

        return new QualifiedName(text[(colon + 1)..], ns);
    }

    /// <summary><c>index:name</c>, or the bare name for namespace 0.</summary>
    public override string ToString() =>
        NamespaceIndex == 0 ? Name ?? string.Empty : NamespaceIndex.ToString(CultureInfo.InvariantCulture) + ":" + Name;

    /// <inheritdoc />
    public bool Equals(QualifiedName other) => NamespaceIndex == other.NamespaceIndex && string.Equals(Name, other.Name, StringComparison.Ordinal);

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is QualifiedName other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode() => HashCode.Combine(NamespaceIndex, Name);

    /// <summary>Compares two qualified names.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator ==(QualifiedName left, QualifiedName right) => left.Equals(right);

    /// <summary>Compares two qualified names.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator !=(QualifiedName left, QualifiedName right) => !left.Equals(right);
}
