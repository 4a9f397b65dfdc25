namespace Tieflow.Tests.Shared;

/// <summary>Finds folders of the repository from the test's output folder (linked into every test project that needs it).</summary>
internal static class RepositoryPaths
{
    public static string Root { get; } = FindRoot();

    public static string ConfigSamples => Path.Combine(Root, "config-samples");

    public static string Schemas => Path.Combine(Root, "schemas");

    private static string FindRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "Monitor.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException($"Monitor.sln not found above {AppContext.BaseDirectory}");
    }
}
