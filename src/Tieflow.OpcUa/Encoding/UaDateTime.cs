namespace Tieflow.OpcUa.Encoding;

/// <summary>Conversions between <see cref="DateTime"/> and the UA DateTime (100 ns ticks since 1601-01-01 UTC).</summary>
internal static class UaDateTime
{
    /// <summary>Ticks of 1601-01-01 in .NET's epoch.</summary>
    public const long EpochTicks = 504911232000000000L;

    private const long MaxUaTicks = 3155378975999999999L - EpochTicks;

    /// <summary>Encodes: before 1601 (including MinValue) is 0, MaxValue is Int64.MaxValue.</summary>
    public static long ToUaTicks(DateTime value)
    {
        if (value.Kind == DateTimeKind.Local)
        {
            value = value.ToUniversalTime();
        }

        if (value.Ticks <= EpochTicks)
        {
            return 0;
        }

        return value == DateTime.MaxValue ? long.MaxValue : value.Ticks - EpochTicks;
    }

    /// <summary>Decodes: 0 or negative is MinValue, beyond the .NET range is MaxValue; the result is UTC.</summary>
    public static DateTime FromUaTicks(long ticks)
    {
        if (ticks <= 0)
        {
            return DateTime.MinValue;
        }

        return ticks >= MaxUaTicks ? DateTime.MaxValue : new DateTime(ticks + EpochTicks, DateTimeKind.Utc);
    }
}
