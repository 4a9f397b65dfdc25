using Microsoft.Playwright;
using Tieflow.Service.Tests.Report;
using Xunit.Abstractions;

namespace Tieflow.Report.Tests;

/// <summary>
/// The report of a short simulated replay opened in a real headless browser (Debian's chromium-headless-shell, never a
/// download): it loads without script errors, console errors or failed requests, and every plot and table is there and
/// drawn.
/// </summary>
public sealed class ReportInBrowserTests : IClassFixture<ReportInBrowserTests.Fixture>
{
    /// <summary>Where the Debian package chromium-headless-shell puts the browser.</summary>
    public const string Browser = "/usr/lib/chromium/chromium-headless-shell";

    private readonly Fixture _fixture;
    private readonly ITestOutputHelper _output;

    public ReportInBrowserTests(Fixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    [Fact]
    public async Task Report_LoadsWithoutErrors_AndShowsEveryPlotAndTable()
    {
        SimulatedReport report = _fixture.Report;
        Assert.True(report.Run.ExitCode == 0, report.Run.Error);
        IBrowser browser = await _fixture.BrowserAsync();
        _output.WriteLine($"browser {browser.Version}");
        IPage page = await browser.NewPageAsync(new BrowserNewPageOptions { ViewportSize = new ViewportSize { Width = 1100, Height = 900 } });
        var problems = new List<string>();
        page.Console += (_, m) =>
        {
            if (m.Type is "error" or "warning")
            {
                problems.Add($"console {m.Type}: {m.Text}");
            }
        };
        page.PageError += (_, e) => problems.Add($"page error: {e}");
        page.RequestFailed += (_, r) => problems.Add($"request failed: {r.Url} ({r.Failure})");
        var requests = new List<string>();
        page.Request += (_, r) => requests.Add(r.Url);

        IResponse? response = await page.GotoAsync(new Uri(report.Page).AbsoluteUri, new PageGotoOptions { WaitUntil = WaitUntilState.Load });

        Assert.NotNull(response);
        Assert.True(response.Ok, $"status {response.Status}");
        Assert.Empty(problems);

        // Self-contained: the page itself is the only request.
        Assert.Equal([new Uri(report.Page).AbsoluteUri], requests);
        Assert.Contains("not a safety system", await page.InnerTextAsync("#notice"), StringComparison.Ordinal);
        foreach (string id in report.PlotIds)
        {
            ILocator svg = page.Locator($"figure#{id} > svg");
            Assert.Equal(1, await svg.CountAsync());
            LocatorBoundingBoxResult? box = await svg.BoundingBoxAsync();
            Assert.True(box is { Width: > 300, Height: > 100 }, $"{id}: {box?.Width} x {box?.Height}");

            // Drawn, not empty: lines and text inside.
            Assert.True(await page.Locator($"figure#{id} > svg path").CountAsync() > 5, id);
            Assert.True(await page.Locator($"figure#{id} > svg text").CountAsync() > 2, id);
            Assert.False(string.IsNullOrWhiteSpace(await page.Locator($"figure#{id} > figcaption").InnerTextAsync()), id);
        }

        foreach (string id in report.TableIds)
        {
            ILocator table = page.Locator($"table#{id}");
            Assert.Equal(1, await table.CountAsync());
            Assert.True(await table.Locator("tbody tr").CountAsync() > 0, id);
            Assert.True(await table.IsVisibleAsync(), id);
        }

        // Printed, every figure still shows (the print style hides only the contents list).
        await page.EmulateMediaAsync(new PageEmulateMediaOptions { Media = Media.Print });
        foreach (string id in report.PlotIds)
        {
            Assert.True(await page.Locator($"figure#{id} > svg").IsVisibleAsync(), id);
        }

        Assert.Empty(problems);
        await page.CloseAsync();
    }

    /// <summary>One simulated replay with its report, and one browser, for the class.</summary>
    public sealed class Fixture : IAsyncLifetime
    {
        private IPlaywright? _playwright;
        private IBrowser? _browser;

        internal SimulatedReport Report { get; } = new();

        public async Task<IBrowser> BrowserAsync()
        {
            if (_browser is not null)
            {
                return _browser;
            }

            Assert.True(File.Exists(Browser), $"{Browser} is missing: install the Debian package chromium-headless-shell (test.sh does when it can)");
            _playwright = await Playwright.CreateAsync();
            _browser = await _playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
            {
                ExecutablePath = Browser,
                Headless = true,
                Args = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
            });
            return _browser;
        }

        public Task InitializeAsync() => Task.CompletedTask;

        public async Task DisposeAsync()
        {
            if (_browser is not null)
            {
                await _browser.CloseAsync();
            }

            _playwright?.Dispose();
            Report.Dispose();
        }
    }
}
