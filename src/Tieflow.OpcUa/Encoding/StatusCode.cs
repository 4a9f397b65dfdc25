using System.Globalization;

namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// An OPC UA status code (OPC 10000-4 §7.39, OPC 10000-6 §5.2.2.11): a 32-bit value whose top two bits give the
/// severity (00 Good, 01 Uncertain, 10 Bad) and whose low 16 bits are flags.
/// </summary>
public readonly struct StatusCode : IEquatable<StatusCode>
{
    /// <summary>Creates a status code from its raw 32-bit value.</summary>
    /// <param name="code">The value as it appears on the wire.</param>
    public StatusCode(uint code) => Code = code;

    /// <summary>The raw 32-bit value.</summary>
    public uint Code { get; }

    /// <summary>The code without its flag bits (<c>Code &amp; 0xFFFF0000</c>); compare codes on this.</summary>
    public uint CodeWithoutFlags => Code & 0xFFFF0000u;

    /// <summary>True when the severity bits are 00.</summary>
    public bool IsGood => (Code & 0xC0000000u) == 0;

    /// <summary>True when the severity bits are 01.</summary>
    public bool IsUncertain => (Code & 0xC0000000u) == 0x40000000u;

    /// <summary>True when the severity bits are 10 or 11.</summary>
    public bool IsBad => (Code & 0x80000000u) != 0;

    /// <summary>The symbolic name (for example <c>BadNodeIdUnknown</c>) when the code is in the table, otherwise null.</summary>
    public string? Name => StatusCodes.TryGetName(CodeWithoutFlags, out var name) ? name : null;

    /// <summary>True when both codes are equal once their flag bits are ignored.</summary>
    /// <param name="other">The code to compare with.</param>
    public bool Is(StatusCode other) => CodeWithoutFlags == other.CodeWithoutFlags;

    /// <inheritdoc />
    public bool Equals(StatusCode other) => Code == other.Code;

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is StatusCode other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode() => (int)Code;

    /// <summary>The name when known (with the raw value in hex when flag bits are set), otherwise <c>0xXXXXXXXX</c>.</summary>
    public override string ToString()
    {
        var name = Name;
        if (name is null)
        {
            return "0x" + Code.ToString("X8", CultureInfo.InvariantCulture);
        }

        return (Code & 0xFFFFu) == 0 ? name : name + " (0x" + Code.ToString("X8", CultureInfo.InvariantCulture) + ")";
    }

    /// <summary>Compares two codes by their raw value.</summary>
    /// <param name="left">First code.</param>
    /// <param name="right">Second code.</param>
    public static bool operator ==(StatusCode left, StatusCode right) => left.Equals(right);

    /// <summary>Compares two codes by their raw value.</summary>
    /// <param name="left">First code.</param>
    /// <param name="right">Second code.</param>
    public static bool operator !=(StatusCode left, StatusCode right) => !left.Equals(right);

    /// <summary>Wraps a raw value.</summary>
    /// <param name="code">The raw value.</param>
    public static implicit operator StatusCode(uint code) => new(code);
}
