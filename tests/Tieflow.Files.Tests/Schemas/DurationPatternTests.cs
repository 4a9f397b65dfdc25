using System.Text.Json;
using System.Text.RegularExpressions;

namespace Tieflow.Files.Tests.Schemas;

/// <summary>The duration pattern of the schemas accepts exactly the texts <see cref="JsonDuration"/> parses.</summary>
public sealed class DurationPatternTests
{
    private static readonly Regex Pattern = LoadPattern();

    [Theory]
    [InlineData("00:00:01", 1000.0)]
    [InlineData("02:30:00", 9_000_000.0)]
    [InlineData("23:59:59", 86_399_000.0)]
    [InlineData("2:30:00", 9_000_000.0)]
    [InlineData("1.06:00:00", 108_000_000.0)]
    [InlineData("0.23:00:00", 82_800_000.0)]
    [InlineData("00:00:00.5", 500.0)]
    [InlineData("00:00:00.1234567", 123.4567)]
    [InlineData("500ms", 500.0)]
    [InlineData("30s", 30_000.0)]
    [InlineData("15m", 900_000.0)]
    [InlineData("2h", 7_200_000.0)]
    [InlineData("1.5h", 5_400_000.0)]
    [InlineData("3d", 259_200_000.0)]
    public void Accepted_ByReaderAndPattern(string text, double milliseconds)
    {
        Assert.True(JsonDuration.TryParse(text, out TimeSpan d, out string why), why);
        Assert.Equal(milliseconds, d.TotalMilliseconds, 1e-6);
        Assert.Matches(Pattern, text);
    }

    [Theory]
    [InlineData("30:00:00")]
    [InlineData("24:00:00")]
    [InlineData("1.24:00:00")]
    [InlineData("00:60:00")]
    [InlineData("00:00:60")]
    [InlineData("00:00:00.12345678")]
    [InlineData("1:2:3")]
    [InlineData("-00:01:00")]
    [InlineData("2 h")]
    [InlineData("2H")]
    [InlineData("2w")]
    [InlineData(".5h")]
    [InlineData("PT2H")]
    [InlineData("")]
    public void Refused_ByReaderAndPattern(string text)
    {
        Assert.False(JsonDuration.TryParse(text, out _, out _));
        Assert.DoesNotMatch(Pattern, text);
    }

    [Fact]
    public void ThirtyHours_IsRefusedWithTheDaysHint()
    {
        Assert.False(JsonDuration.TryParse("30:00:00", out _, out string why));
        Assert.Equal("; hours above 23 must be written with days (for example \"1.06:00:00\")", why);
    }

    private static Regex LoadPattern()
    {
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(Path.Combine(RepositoryPaths.Schemas, "plant.schema.json")));
        string pattern = doc.RootElement.GetProperty("$defs").GetProperty("duration").GetProperty("pattern").GetString()!;
        return new Regex(pattern, RegexOptions.ECMAScript | RegexOptions.CultureInvariant);
    }
}
