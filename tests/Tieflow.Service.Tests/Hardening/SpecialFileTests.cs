using System.Diagnostics;
using Tieflow.Service.Tests.Input;

namespace Tieflow.Service.Tests.Hardening;

/// <summary>
/// Files that are not regular files, or too big (issue 12 §1): a FIFO once hung forever, /dev/zero grew to 4 GB, a
/// directory was "the file does not exist". Each ends with exit code 2 and says what the path is.
/// </summary>
public sealed class SpecialFileTests
{
    [Fact]
    public void Check_Directory_SaysItIsADirectory()
    {
        using var folder = new TempFolder();
        CliRun run = CliRun.Of("check", folder.Path);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("this is a directory, not a regular file", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Calc_DeviceAsCase_ExitsTwoQuickly()
    {
        if (!OperatingSystem.IsLinux())
        {
            return;
        }

        foreach (string device in new[] { "/dev/zero", "/dev/urandom" })
        {
            CliRun run = CliRun.Of("calc", "split", "--case", device);
            Assert.True(run.ExitCode == 2, $"{device}: exit {run.ExitCode}: {run.Error}");
            Assert.Contains("a character device, not a regular file", run.Error, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Calc_DeviceAsSystemOfACase_NamesTheSystemKey()
    {
        if (!OperatingSystem.IsLinux())
        {
            return;
        }

        using var folder = new TempFolder();
        string file = folder.Write("case.json", BadInputTests.SplitCase.Replace("\"system.json\"", "\"/dev/zero\"", StringComparison.Ordinal));
        CliRun run = CliRun.Of("calc", "split", "--case", file);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("$.system", run.Error, StringComparison.Ordinal);
        Assert.Contains("a character device", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Calc_FifoAsCaseOrSystem_ExitsTwoWithoutWaiting()
    {
        if (!OperatingSystem.IsLinux())
        {
            return;
        }

        using var folder = new TempFolder();
        string fifo = Path.Combine(folder.Path, "pipe.json");
        try
        {
            using var mkfifo = Process.Start(new ProcessStartInfo("mkfifo", fifo) { UseShellExecute = false });
            await mkfifo!.WaitForExitAsync();
            if (mkfifo.ExitCode != 0)
            {
                return;
            }
        }
        catch (System.ComponentModel.Win32Exception)
        {
            // No mkfifo on this machine: nothing to test.
            return;
        }

        string caseFile = folder.Write("case.json", BadInputTests.SplitCase.Replace("system.json", "pipe.json", StringComparison.Ordinal));

        // Run on a worker so that a regression shows as a failure instead of a test run that never ends.
        var direct = Task.Run(() => CliRun.Of("calc", "split", "--case", fifo));
        var viaCase = Task.Run(() => CliRun.Of("check", caseFile));
        await Task.WhenAll(direct, viaCase).WaitAsync(TimeSpan.FromSeconds(60));
        CliRun a = await direct, b = await viaCase;
        Assert.Equal(2, a.ExitCode);
        Assert.Contains("a named pipe (FIFO)", a.Error, StringComparison.Ordinal);
        Assert.Equal(2, b.ExitCode);
        Assert.Contains("$.system", b.Error, StringComparison.Ordinal);
        Assert.Contains("a named pipe (FIFO)", b.Error, StringComparison.Ordinal);
    }

    [Fact]
    public void Check_FileAboveTheSizeLimit_IsRefusedWithTheLimit()
    {
        using var folder = new TempFolder();
        string file = Path.Combine(folder.Path, "big.json");
        using (var stream = File.Create(file))
        {
            stream.SetLength(Files.InputFiles.MaxCaseFileBytes + 1);
        }

        CliRun run = CliRun.Of("check", file);
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("may be at most 4,194,304 bytes", run.Error, StringComparison.Ordinal);
    }
}
