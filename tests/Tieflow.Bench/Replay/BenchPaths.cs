namespace Tieflow.Bench.Replay;

/// <summary>The repository root, found from the bench's own folder.</summary>
internal static class BenchPaths
{
    public static string Root()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "Monitor.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException("Monitor.sln not found");
    }
}
