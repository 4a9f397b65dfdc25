using Microsoft.Extensions.Time.Testing;
using Tieflow.OpcUa.Transport;

namespace Tieflow.OpcUa.Tests.Transport;

public sealed class SecurityTokenSetTests
{
    [Fact]
    public void IsAccepted_PreviousToken_UntilItsLifetimePlus25Percent()
    {
        // docs/opcua.md §1.12: keep accepting the previous token until it has expired plus 25 % of its lifetime.
        var time = new FakeTimeProvider(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
        var tokens = new SecurityTokenSet(time);
        tokens.Add(1, TimeSpan.FromSeconds(60));
        time.Advance(TimeSpan.FromSeconds(45));
        tokens.Add(2, TimeSpan.FromSeconds(60));
        time.Advance(TimeSpan.FromSeconds(25)); // 70 s after token 1 was issued
        Assert.True(tokens.IsAccepted(1));
        Assert.True(tokens.IsAccepted(2));
        time.Advance(TimeSpan.FromSeconds(6)); // 76 s > 75 s
        Assert.False(tokens.IsAccepted(1));
        Assert.True(tokens.IsAccepted(2));
        Assert.False(tokens.IsAccepted(3));
    }

    [Fact]
    public void IsAccepted_TwoRenewals_BothOlderTokensKeptWhileValid()
    {
        // docs/opcua.md §1.12 hazard: a parked Publish may be answered with a token two renewals old.
        var time = new FakeTimeProvider(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
        var tokens = new SecurityTokenSet(time);
        tokens.Add(1, TimeSpan.FromSeconds(100));
        time.Advance(TimeSpan.FromSeconds(40));
        tokens.Add(2, TimeSpan.FromSeconds(100));
        time.Advance(TimeSpan.FromSeconds(40));
        tokens.Add(3, TimeSpan.FromSeconds(100));
        Assert.True(tokens.IsAccepted(1));
        Assert.Equal(3u, tokens.CurrentTokenId);
    }

    [Fact]
    public void IsCurrentExpired_NotRenewed_TrueOnlyAfterLifetimePlus25Percent()
    {
        // docs/opcua.md §1.12: a token lives until 125 % of its lifetime; the server closes a channel not renewed by then.
        var time = new FakeTimeProvider(new DateTimeOffset(2026, 3, 2, 8, 0, 0, TimeSpan.Zero));
        var tokens = new SecurityTokenSet(time);
        Assert.False(tokens.IsCurrentExpired());
        tokens.Add(1, TimeSpan.FromSeconds(60));
        time.Advance(TimeSpan.FromSeconds(74.9));
        Assert.False(tokens.IsCurrentExpired());
        time.Advance(TimeSpan.FromSeconds(0.2));
        Assert.True(tokens.IsCurrentExpired());

        // A renewal starts a new lifetime.
        tokens.Add(2, TimeSpan.FromSeconds(60));
        Assert.False(tokens.IsCurrentExpired());
    }
}
