using System.Runtime.InteropServices;

namespace Tieflow.Bench.Replay;

/// <summary>
/// CPU time of the calling thread (Linux <c>clock_gettime(CLOCK_THREAD_CPUTIME_ID)</c>, nanoseconds): on a machine
/// shared with other work the wall clock of a short piece of work counts the time the thread waited for a core; this
/// does not.
/// </summary>
internal static partial class ThreadCpu
{
    private const int ClockThreadCpuTime = 3;

    /// <summary>True when the thread's CPU time can be read here.</summary>
    public static bool Available { get; } = OperatingSystem.IsLinux() && TryNow(out _);

    /// <summary>The thread's CPU time, in milliseconds.</summary>
    public static double Milliseconds() => TryNow(out double ms) ? ms : double.NaN;

    private static bool TryNow(out double milliseconds)
    {
        milliseconds = double.NaN;
        try
        {
            if (ClockGetTime(ClockThreadCpuTime, out TimeSpec t) != 0)
            {
                return false;
            }

            milliseconds = (t.Seconds * 1e3) + (t.Nanoseconds / 1e6);
            return true;
        }
        catch (Exception e) when (e is DllNotFoundException or EntryPointNotFoundException)
        {
            return false;
        }
    }

    [LibraryImport("libc", EntryPoint = "clock_gettime")]
    private static partial int ClockGetTime(int clock, out TimeSpec time);

    [StructLayout(LayoutKind.Sequential)]
    private struct TimeSpec
    {
        public long Seconds;
        public long Nanoseconds;
    }
}
