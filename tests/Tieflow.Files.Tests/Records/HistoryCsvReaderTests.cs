using System.Globalization;
using System.Text;
using Tieflow.Core.Monitoring;

namespace Tieflow.Files.Tests.Records;

/// <summary>
/// The history CSV readers: the tolerant one skips and reports bad lines and stops on too many; its fast paths for
/// times and numbers give exactly what the general parsers give.
/// </summary>
public sealed class HistoryCsvReaderTests
{
    private const string Header = "time,tag,value,quality\n";

    [Fact]
    public void Tolerant_SkipsBadLines_AndNamesThemWithTheirLineNumbers()
    {
        using var folder = new TempFolder();
        string path = folder.Write("h.csv", Header
            + "2026-03-02T08:00:00Z,FI-301,1000.5,good\n"
            + "2026-03-02 08:00:01,FI-301,1000.5,good\n"
            + "2026-03-02T08:00:01Z,FI-301,1;5,good\n"
            + "\n"
            + "2026-03-02T08:00:01Z,FI-301,7,fine\n"
            + "2026-03-02T08:00:01Z,FI-301\n"
            + "2026-03-02T08:00:02.25Z,AI-312,-0.125,uncertain\r\n"
            + "2026-03-02T08:00:03Z, FI-301,1,good\n"
            + "2026-03-02T08:00:03Z,FI-301,2,good\n"
            + "2026-03-02T08:00:03Z,FI-301,NaN,good\n"
            + "2026-03-02T08:00:04+01:00,FI-301,NaN,bad");

        HistoryCsvSource source = HistoryCsvReader.Open(path);
        SignalSample[] rows = [.. source];

        Assert.Equal(4, rows.Length);
        Assert.Equal(new SignalSample("FI-301", new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero), 1000.5, SignalQuality.Good), rows[0]);
        Assert.Equal(new SignalSample("AI-312", new DateTimeOffset(2026, 3, 2, 8, 0, 2, 250, TimeSpan.Zero), -0.125, SignalQuality.Uncertain), rows[1]);
        Assert.Equal(new DateTimeOffset(2026, 3, 2, 7, 0, 4, TimeSpan.Zero), rows[3].Time);
        Assert.True(double.IsNaN(rows[3].Value));
        Assert.Equal(4, source.Rows);
        Assert.Equal(6, source.BadLines);
        Assert.Equal([3L, 4, 6, 7, 9, 11], source.FirstBadLines.Select(b => b.Line).ToArray());
        Assert.Equal("line 3, column 1", source.FirstBadLines[0].Location);
        Assert.Contains("ISO 8601", source.FirstBadLines[0].Reason, StringComparison.Ordinal);
        Assert.Equal("line 4, column 29", source.FirstBadLines[1].Location);
        Assert.Contains("good, uncertain or bad", source.FirstBadLines[2].Reason, StringComparison.Ordinal);
        Assert.Contains("4 fields", source.FirstBadLines[3].Reason, StringComparison.Ordinal);
        Assert.Contains("tag", source.FirstBadLines[4].Reason, StringComparison.Ordinal);
        Assert.Contains("finite", source.FirstBadLines[5].Reason, StringComparison.Ordinal);

        // The same tag is one string however many rows name it.
        Assert.Same(rows[0].Tag, rows[2].Tag);
    }

    [Fact]
    public void Tolerant_ManyBadLines_InALongFile_AreBelowTheDefaultLimit()
    {
        using var folder = new TempFolder();
        var text = new StringBuilder(Header);
        DateTimeOffset t0 = new(2026, 3, 2, 0, 0, 0, TimeSpan.Zero);
        for (int i = 0; i < 20_000; i++)
        {
            text.Append(CultureInfo.InvariantCulture, $"{t0.AddSeconds(i):yyyy-MM-dd'T'HH:mm:ss'Z'},FI-301,{i},good\n");
            if (i % 100 == 50)
            {
                text.Append("not a record\n");
            }
        }

        string path = folder.Write("h.csv", text.ToString());
        HistoryCsvSource source = HistoryCsvReader.Open(path);

        Assert.Equal(20_000, source.Count());
        Assert.Equal(200, source.BadLines);
        Assert.Equal(20, source.FirstBadLines.Count);
    }

    [Fact]
    public void Tolerant_MostlyBadFile_FailsAtTheEnd_NamingTheFileAndTheFirstBadLines()
    {
        using var folder = new TempFolder();
        var text = new StringBuilder(Header);
        for (int i = 0; i < 150; i++)
        {
            text.Append("2026-03-02T00:00:00Z;FI-301;1;good\n");
            text.Append("2026-03-02T00:00:00Z,FI-301,1,good\n");
        }

        string path = folder.Write("h.csv", text.ToString());
        InputException e = Assert.Throws<InputException>(() => HistoryCsvReader.Open(path).Count());

        InputProblem p = Assert.Single(e.Problems);
        Assert.Equal(path, p.File);
        Assert.Equal("line 2", p.JsonPath);
        Assert.Contains("150 of 300 data lines are bad", p.Message, StringComparison.Ordinal);
        Assert.Contains("line 4: expected 4 fields", p.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Tolerant_MaxBadLines_StopsAtTheFirstLineOverTheLimit()
    {
        using var folder = new TempFolder();
        string path = folder.Write("h.csv", Header + "x\n2026-03-02T00:00:00Z,FI-301,1,good\ny\nz\n2026-03-02T00:00:01Z,FI-301,1,good\n");
        HistoryCsvSource source = HistoryCsvReader.Open(path, new HistoryReadOptions { MaxBadLines = 2 });
        var seen = new List<SignalSample>();

        InputException e = Assert.Throws<InputException>(() =>
        {
            foreach (SignalSample s in source)
            {
                seen.Add(s);
            }
        });

        Assert.Single(seen);
        Assert.Contains("more than 2 bad lines", e.Message, StringComparison.Ordinal);
        Assert.Contains("line 2", e.Message, StringComparison.Ordinal);
        Assert.Contains("line 5", e.Message, StringComparison.Ordinal);
        Assert.Equal(2, HistoryCsvReader.Open(path, new HistoryReadOptions { MaxBadLines = 3 }).Count());
    }

    [Theory]
    [InlineData("time,tag,value\n", "header")]
    [InlineData("", "empty")]
    public void Tolerant_WrongHeader_FailsAtOnce(string content, string expected)
    {
        using var folder = new TempFolder();
        string path = folder.Write("h.csv", content);
        InputException e = Assert.Throws<InputException>(() => HistoryCsvReader.Open(path));
        Assert.Equal("line 1", e.Problems[0].JsonPath);
        Assert.Contains(expected, e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Tolerant_AcceptsAByteOrderMark_AndReportsAnOverlongLine()
    {
        using var folder = new TempFolder();
        string path = folder.PathOf("h.csv");
        byte[] bom = [0xEF, 0xBB, 0xBF];
        string body = Header + "2026-03-02T00:00:00Z,FI-301," + new string('1', 300_000) + ",good\n2026-03-02T00:00:01Z,TI-3ü1,2,good\n";
        File.WriteAllBytes(path, [.. bom, .. Encoding.UTF8.GetBytes(body)]);

        HistoryCsvSource source = HistoryCsvReader.Open(path);
        SignalSample row = Assert.Single(source);

        Assert.Equal("TI-3ü1", row.Tag);
        Assert.Equal(1, source.BadLines);
        Assert.Equal(2, source.FirstBadLines[0].Line);
        Assert.Contains("longer than", source.FirstBadLines[0].Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Strict_BlankLineInside_IsAnError_ButBlankLinesAtTheEndAreNot()
    {
        using var folder = new TempFolder();
        string inside = folder.Write("a.csv", Header + "2026-03-02T00:00:00Z,FI-301,1,good\n\n2026-03-02T00:00:01Z,FI-301,1,good\n");
        string atEnd = folder.Write("b.csv", Header + "2026-03-02T00:00:00Z,FI-301,1,good\n\n\n");

        InputException e = Assert.Throws<InputException>(() => HistoryCsvReader.Read(inside).ToList());
        Assert.Equal("line 3", e.Problems[0].JsonPath);
        Assert.Single(HistoryCsvReader.Read(atEnd));
        Assert.Equal(2, HistoryCsvReader.Open(inside).Count());
    }

    [Fact]
    public void FastNumberPath_GivesTheGeneralParsersDouble()
    {
        var random = new Random(17);
        var texts = new List<string> { "0", "-0", "1.", ".5", "-.5", "9007199254740992", "9007199254740993", "0.1", "123456789012345.6", "1e5", "+3", " 4", "00012.50", "0.0000000000000000000001", "1234567890.1234567" };
        for (int i = 0; i < 20_000; i++)
        {
            double v = (random.NextDouble() - 0.5) * Math.Pow(10, random.Next(-8, 12));
            texts.Add(v.ToString(i % 3 == 0 ? "R" : "F" + random.Next(0, 9).ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture));
        }

        foreach (string text in texts)
        {
            bool general = double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double expected);
            bool fast = HistoryCsvParser.ParseNumber(Encoding.ASCII.GetBytes(text), out double value);
            Assert.True(general == fast, text);
            Assert.True(BitConverter.DoubleToInt64Bits(expected) == BitConverter.DoubleToInt64Bits(value), $"{text}: {value:R} against {expected:R}");
        }
    }

    [Fact]
    public void FastTimePath_GivesTheGeneralParsersTime()
    {
        var random = new Random(23);
        var texts = new List<string> { "2026-02-29T00:00:00Z", "2024-02-29T23:59:59.9999999Z", "2026-13-01T00:00:00Z", "2026-03-02T24:00:00Z", "2026-03-02T08:00:00.Z", "2026-03-02T08:00:00.12345678Z", "0001-01-01T00:00:00Z" };
        for (int i = 0; i < 5_000; i++)
        {
            var t = new DateTimeOffset(new DateTime(2000, 1, 1, 0, 0, 0, DateTimeKind.Utc).AddTicks((long)(random.NextDouble() * TimeSpan.FromDays(15_000).Ticks)));
            texts.Add(t.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss" + (i % 2 == 0 ? ".FFFFFFF" : "." + new string('f', 1 + (i % 7))) + "'Z'", CultureInfo.InvariantCulture));
        }

        foreach (string text in texts)
        {
            bool general = DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AdjustToUniversal, out DateTimeOffset expected);
            if (HistoryCsvParser.TryParseFixedTime(Encoding.ASCII.GetBytes(text), out DateTimeOffset value))
            {
                Assert.True(general, text);
                Assert.Equal(expected.UtcTicks, value.UtcTicks);
                Assert.Equal(TimeSpan.Zero, value.Offset);
            }
            else
            {
                // Left to the general parser: only forms outside the fixed one, or impossible dates.
                Assert.True(!general || text.Length > 28 || text.EndsWith(".Z", StringComparison.Ordinal), text);
            }
        }
    }

    [Fact]
    public void TagsFoundByTheirBytes_AreTheDecodedText_PastTheCacheAndWithCollisions()
    {
        // More distinct tags than the parser's byte-keyed table holds (so that later tags take the decoding path), in a
        // seeded shuffled order and each several times, with non-ASCII text, undecodable bytes and blanks among them.
        var random = new Random(29);
        var tags = new List<string>();
        for (int i = 0; i < 700; i++)
        {
            tags.Add(i % 97 == 0 ? $"FI-{i}-\u00e9\u6e29" : $"T{i.ToString(CultureInfo.InvariantCulture)}");
        }

        var rows = new List<string>();
        for (int pass = 0; pass < 4; pass++)
        {
            rows.AddRange(tags.OrderBy(_ => random.Next()));
        }

        using var folder = new TempFolder();
        string path = folder.PathOf("h.csv");
        using (var file = File.Create(path))
        {
            file.Write(Encoding.UTF8.GetBytes(Header));
            foreach (string tag in rows)
            {
                file.Write(Encoding.UTF8.GetBytes($"2026-03-02T08:00:00Z,{tag},1,good\n"));
            }

            byte[] undecodable = [.. "2026-03-02T08:00:00Z,AI-"u8, 0xFF, 0xFE, .. ",2,good\n2026-03-02T08:00:00Z, FI-301,2,good\n"u8];
            for (int i = 0; i < 3; i++)
            {
                file.Write(undecodable);
            }
        }

        HistoryCsvSource source = HistoryCsvReader.Open(path);
        SignalSample[] read = [.. source];
        Assert.Equal(rows.Count + 3, read.Length);
        Assert.Equal(rows, read.Take(rows.Count).Select(s => s.Tag));
        Assert.All(read.Skip(rows.Count), s => Assert.Equal("AI-\ufffd\ufffd", s.Tag));
        Assert.Equal(3, source.BadLines);
        Assert.All(source.FirstBadLines, b => Assert.Contains("tag", b.Reason, StringComparison.Ordinal));

        // Every row of one tag gets the one string.
        Assert.All(read.GroupBy(s => s.Tag), g => Assert.All(g, s => Assert.Same(g.First().Tag, s.Tag)));
    }
}
