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
        (IPage page, IResponse? response, List<string> problems, List<string> requests) = await OpenAsync(browser, report.Page);

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

    [Fact]
    public async Task Harness_CatchesScriptErrors_ConsoleErrors_AndFailedRequests()
    {
        // The checks above are only as good as the listeners: a page with each kind of fault must be caught.
        using var folder = new TempFolder();
        string broken = folder.Write("broken.html", """
            <!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><title>broken</title></head>
            <body><img src="missing.png" alt=""><script>console.error("logged"); throw new Error("thrown");</script></body></html>
            """);
        IBrowser browser = await _fixture.BrowserAsync();

        (IPage page, _, List<string> problems, _) = await OpenAsync(browser, broken);

        Assert.Contains(problems, p => p.StartsWith("page error:", StringComparison.Ordinal) && p.Contains("thrown", StringComparison.Ordinal));
        Assert.Contains(problems, p => p.StartsWith("console error:", StringComparison.Ordinal) && p.Contains("logged", StringComparison.Ordinal));
        Assert.Contains(problems, p => p.StartsWith("request failed:", StringComparison.Ordinal) && p.Contains("missing.png", StringComparison.Ordinal));
        await page.CloseAsync();
    }

    /// <summary>Opens a file with every listener subscribed before the navigation.</summary>
    private static async Task<(IPage Page, IResponse? Response, List<string> Problems, List<string> Requests)> OpenAsync(IBrowser browser, string file)
    {
        IPage page = await browser.NewPageAsync(new BrowserNewPageOptions { ViewportSize = new ViewportSize { Width = 1100, Height = 900 } });
        var problems = new List<string>();
        var requests = new List<string>();
        page.Console += (_, m) =>
        {
            if (m.Type is "error" or "warning")
            {
                lock (problems)
                {
                    problems.Add($"console {m.Type}: {m.Text}");
                }
            }
        };
        page.PageError += (_, e) =>
        {
            lock (problems)
            {
                problems.Add($"page error: {e}");
            }
        };
        page.RequestFailed += (_, r) =>
        {
            lock (problems)
            {
                problems.Add($"request failed: {r.Url} ({r.Failure})");
            }
        };
        page.Request += (_, r) =>
        {
            lock (requests)
            {
                requests.Add(r.Url);
            }
        };

        IResponse? response = await page.GotoAsync(new Uri(file).AbsoluteUri, new PageGotoOptions { WaitUntil = WaitUntilState.Load });
        return (page, response, problems, requests);
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
