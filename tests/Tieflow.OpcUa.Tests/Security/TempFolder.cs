namespace Tieflow.OpcUa.Tests.Security;

/// <summary>A fresh folder under the system temp folder, deleted on dispose.</summary>
public sealed class TempFolder : IDisposable
{
    public TempFolder() => Directory.CreateDirectory(Path);

    public string Path { get; } = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "tieflow-test-" + Guid.NewGuid().ToString("N"));

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
            // Best effort: a temp folder left behind does no harm.
        }
    }
}
