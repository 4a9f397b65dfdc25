namespace Tieflow.Tests.Shared;

/// <summary>A temporary folder for test files, deleted on dispose (linked into every test project that needs it).</summary>
internal sealed class TempFolder : IDisposable
{
    public TempFolder()
    {
        Path = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "tieflow-tests-" + Guid.NewGuid().ToString("N")[..12]);
        Directory.CreateDirectory(Path);
    }

    public string Path { get; }

    /// <summary>The full path of a file in the folder (not created).</summary>
    public string PathOf(string name) => System.IO.Path.Combine(Path, name);

    /// <summary>Writes a file into the folder and returns its full path.</summary>
    public string Write(string name, string content)
    {
        string full = PathOf(name);
        File.WriteAllText(full, content);
        return full;
    }

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temporary folder is harmless; the test result matters more.
        }
    }
}
