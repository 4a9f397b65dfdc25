using System.Globalization;

namespace Tieflow.OpcUa.Encoding;

/// <summary>
/// A value of any built-in type, a one-dimensional array of one, or a matrix (OPC 10000-6 §5.2.2.16).
/// Scalars are held as their CLR type (<see cref="double"/>, <see cref="string"/>, <see cref="NodeId"/>...), arrays as
/// <c>T[]</c> and matrices as a flat <c>T[]</c> in row-major order plus <see cref="ArrayDimensions"/>.
/// </summary>
public readonly struct Variant : IEquatable<Variant>
{
    private readonly int[]? _dimensions;

    /// <summary>Creates a Variant of a given type; the value must match it.</summary>
    /// <param name="type">The built-in type of the value (of the elements for an array).</param>
    /// <param name="value">The scalar, the <c>T[]</c> array, or null for <see cref="BuiltInType.Null"/>.</param>
    /// <param name="arrayDimensions">For a matrix, the length of each dimension (their product must equal the array length); otherwise null.</param>
    /// <exception cref="ArgumentException">The value does not match the type or the dimensions do not match the array.</exception>
    public Variant(BuiltInType type, object? value, int[]? arrayDimensions = null)
    {
        if (type == BuiltInType.Null ? value is not null : value is null)
        {
            throw new ArgumentException($"A Variant of type {type} needs {(type == BuiltInType.Null ? "no value" : "a value")}.", nameof(value));
        }

        if (value is not null && ClrType(type) is { } clr && value.GetType() != clr && value.GetType() != clr.MakeArrayType())
        {
            throw new ArgumentException($"A Variant of type {type} holds {clr.Name} or {clr.Name}[], not {value.GetType().Name}.", nameof(value));
        }

        if (arrayDimensions is not null)
        {
            if (value is not Array array)
            {
                throw new ArgumentException("Array dimensions are given for a scalar value.", nameof(arrayDimensions));
            }

            long product = 1;
            foreach (var d in arrayDimensions)
            {
                if (d < 0)
                {
                    throw new ArgumentException("Array dimensions must not be negative.", nameof(arrayDimensions));
                }

                product *= d;
            }

            if (product != array.Length)
            {
                throw new ArgumentException($"The dimensions multiply to {product} but the array holds {array.Length} elements.", nameof(arrayDimensions));
            }
        }

        Type = type;
        Value = value;
        _dimensions = arrayDimensions?.ToArray();
    }

    private Variant(BuiltInType type, object? value, int[]? dims, bool trusted)
    {
        _ = trusted;
        Type = type;
        Value = value;
        _dimensions = dims;
    }

    /// <summary>The empty Variant.</summary>
    public static Variant Null => default;

    /// <summary>The built-in type of the value (of its elements for an array).</summary>
    public BuiltInType Type { get; }

    /// <summary>The scalar, the <c>T[]</c> array, or null.</summary>
    public object? Value { get; }

    /// <summary>True when the value is an array or a matrix.</summary>
    public bool IsArray => Value is Array;

    /// <summary>The dimensions of a matrix, or null for a scalar or a one-dimensional array.</summary>
    public IReadOnlyList<int>? ArrayDimensions => _dimensions;

    /// <summary>True when the Variant holds nothing.</summary>
    public bool IsNull => Type == BuiltInType.Null;

    internal int[]? DimensionsArray => _dimensions;

    internal static Variant Trusted(BuiltInType type, object? value, int[]? dims = null) => new(type, value, dims, true);

    /// <summary>Wraps a CLR value, inferring the built-in type (double → Double, string → String, byte[] → ByteString, NodeId → NodeId, T[] → array...).</summary>
    /// <param name="value">The value or array, or null for the empty Variant.</param>
    /// <returns>The Variant.</returns>
    /// <exception cref="ArgumentException">The CLR type has no built-in counterpart.</exception>
    public static Variant From(object? value)
    {
        if (value is null)
        {
            return default;
        }

        if (value is Variant v)
        {
            return v;
        }

        var clr = value.GetType();
        if (clr == typeof(byte[]))
        {
            // byte[] is a ByteString; an array of Byte needs the explicit constructor.
            return new Variant(BuiltInType.ByteString, value, null, true);
        }

        var element = clr.IsArray ? clr.GetElementType()! : clr;
        for (var t = BuiltInType.Boolean; t <= BuiltInType.DiagnosticInfo; t++)
        {
            if (ClrType(t) == element)
            {
                return new Variant(t, value, null, true);
            }
        }

        throw new ArgumentException($"No OPC UA built-in type holds a {clr.Name}.", nameof(value));
    }

    /// <summary>The CLR type of a scalar of a built-in type (ByteString is <c>byte[]</c>).</summary>
    /// <param name="type">The built-in type.</param>
    /// <returns>The CLR type, or null for <see cref="BuiltInType.Null"/>.</returns>
    public static Type? ClrType(BuiltInType type) => type switch
    {
        BuiltInType.Boolean => typeof(bool),
        BuiltInType.SByte => typeof(sbyte),
        BuiltInType.Byte => typeof(byte),
        BuiltInType.Int16 => typeof(short),
        BuiltInType.UInt16 => typeof(ushort),
        BuiltInType.Int32 => typeof(int),
        BuiltInType.UInt32 => typeof(uint),
        BuiltInType.Int64 => typeof(long),
        BuiltInType.UInt64 => typeof(ulong),
        BuiltInType.Float => typeof(float),
        BuiltInType.Double => typeof(double),
        BuiltInType.String => typeof(string),
        BuiltInType.DateTime => typeof(DateTime),
        BuiltInType.Guid => typeof(Guid),
        BuiltInType.ByteString => typeof(byte[]),
        BuiltInType.XmlElement => typeof(XmlElement),
        BuiltInType.NodeId => typeof(NodeId),
        BuiltInType.ExpandedNodeId => typeof(ExpandedNodeId),
        BuiltInType.StatusCode => typeof(StatusCode),
        BuiltInType.QualifiedName => typeof(QualifiedName),
        BuiltInType.LocalizedText => typeof(LocalizedText),
        BuiltInType.ExtensionObject => typeof(ExtensionObject),
        BuiltInType.DataValue => typeof(DataValue),
        BuiltInType.Variant => typeof(Variant),
        BuiltInType.DiagnosticInfo => typeof(DiagnosticInfo),
        _ => null,
    };

    /// <summary>Converts a numeric scalar (any integer, Float, Double or Boolean) to double.</summary>
    /// <param name="result">The value as a double.</param>
    /// <returns>False when the Variant is not a numeric scalar.</returns>
    public bool TryGetDouble(out double result)
    {
        switch (Value)
        {
            case double d: result = d; return true;
            case float f: result = f; return true;
            case int i: result = i; return true;
            case uint u: result = u; return true;
            case long l: result = l; return true;
            case ulong ul: result = ul; return true;
            case short s: result = s; return true;
            case ushort us: result = us; return true;
            case sbyte sb: result = sb; return true;
            case byte b: result = b; return true;
            case bool bo: result = bo ? 1 : 0; return true;
            default: result = double.NaN; return false;
        }
    }

    /// <summary>A readable form of the value (invariant culture; arrays as <c>[a, b]</c>).</summary>
    public override string ToString()
    {
        if (Value is null)
        {
            return "null";
        }

        if (Value is Array array && Value is not byte[])
        {
            var parts = new List<string>(Math.Min(array.Length, 20));
            foreach (var item in array)
            {
                if (parts.Count == 20)
                {
                    parts.Add("...");
                    break;
                }

                parts.Add(Format(item));
            }

            return "[" + string.Join(", ", parts) + "]";
        }

        return Format(Value);
    }

    private static string Format(object? value) => value switch
    {
        null => "null",
        double d => d.ToString("R", CultureInfo.InvariantCulture),
        float f => f.ToString("R", CultureInfo.InvariantCulture),
        DateTime t => t.ToString("O", CultureInfo.InvariantCulture),
        byte[] b => "0x" + Convert.ToHexString(b),
        IFormattable f => f.ToString(null, CultureInfo.InvariantCulture),
        _ => value.ToString() ?? string.Empty,
    };

    /// <inheritdoc />
    public bool Equals(Variant other)
    {
        if (Type != other.Type)
        {
            return false;
        }

        if (!DimensionsEqual(_dimensions, other._dimensions))
        {
            return false;
        }

        if (Value is Array a && other.Value is Array b)
        {
            if (a.Length != b.Length)
            {
                return false;
            }

            for (var i = 0; i < a.Length; i++)
            {
                if (!ElementEquals(a.GetValue(i), b.GetValue(i)))
                {
                    return false;
                }
            }

            return true;
        }

        return ElementEquals(Value, other.Value);
    }

    private static bool DimensionsEqual(int[]? a, int[]? b) =>
        a is null ? b is null : b is not null && a.AsSpan().SequenceEqual(b);

    private static bool ElementEquals(object? a, object? b)
    {
        if (a is byte[] x && b is byte[] y)
        {
            return x.AsSpan().SequenceEqual(y);
        }

        // Doubles compare bit for bit so that NaN round-trips equal (exact encoding identity, not numeric closeness).
        if (a is double d1 && b is double d2)
        {
            return BitConverter.DoubleToInt64Bits(d1) == BitConverter.DoubleToInt64Bits(d2);
        }

        if (a is float f1 && b is float f2)
        {
            return BitConverter.SingleToInt32Bits(f1) == BitConverter.SingleToInt32Bits(f2);
        }

        return Equals(a, b);
    }

    /// <inheritdoc />
    public override bool Equals(object? obj) => obj is Variant other && Equals(other);

    /// <inheritdoc />
    public override int GetHashCode() => HashCode.Combine(Type, Value is Array a ? a.Length : Value?.GetHashCode() ?? 0);

    /// <summary>Compares two Variants by type, dimensions and value.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator ==(Variant left, Variant right) => left.Equals(right);

    /// <summary>Compares two Variants by type, dimensions and value.</summary>
    /// <param name="left">First value.</param>
    /// <param name="right">Second value.</param>
    public static bool operator !=(Variant left, Variant right) => !left.Equals(right);
}
