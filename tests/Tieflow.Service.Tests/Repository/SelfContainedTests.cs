using System.Text.RegularExpressions;

namespace Tieflow.Service.Tests.Repository;

/// <summary>
/// The repository stands on its own (issue 10 §1): no file refers to documents outside it, and every page of docs/
/// that code, tests and documents cite exists, with the sections cited.
/// </summary>
public sealed partial class SelfContainedTests
{
    private static readonly string[] SkippedFolders = ["bin", "obj", "node_modules", "TestResults", ".git", "BenchmarkDotNet.Artifacts", ".vs", ".idea"];

    private static readonly string[] TextExtensions = [".cs", ".md", ".json", ".sh", ".py", ".mjs", ".js", ".csproj", ".props", ".targets", ".yml", ".yaml", ".txt", ".sln", ".xml", ".editorconfig", ".http"];

    // Written in pieces so that this file does not match itself. File names match case-sensitively (docs/opcua.md is
    // ours), phrases in any case.
    private static readonly string[] ForbiddenNames =
    [
        ".." + "/shared", "shared" + "/design", "shared" + "/reference", "/work" + "/", "CONTRACTS" + ".md", "ANALYSIS" + ".md",
        "OPCUA" + ".md", "STACK" + ".md", "STYLE" + ".md", "ARCHITECTURE" + ".md",
    ];

    private static readonly string[] ForbiddenPhrases = ["design" + " notes", "design" + " folder", "OPC UA " + "digest", "the " + "digest", "design " + "documents"];

    private static IEnumerable<string> TextFiles()
    {
        var pending = new Stack<string>([RepositoryPaths.Root]);
        while (pending.Count > 0)
        {
            string dir = pending.Pop();
            foreach (string sub in Directory.EnumerateDirectories(dir))
            {
                if (Array.IndexOf(SkippedFolders, Path.GetFileName(sub)) < 0)
                {
                    pending.Push(sub);
                }
            }

            foreach (string file in Directory.EnumerateFiles(dir))
            {
                string name = Path.GetFileName(file);
                if (Array.IndexOf(TextExtensions, Path.GetExtension(file)) >= 0 || name is ".editorconfig" or ".gitignore")
                {
                    yield return file;
                }
            }
        }
    }

    [Fact]
    public void Repository_NoFileRefersToDocumentsOutsideIt()
    {
        var hits = new List<string>();
        int scanned = 0;
        foreach (string file in TextFiles())
        {
            scanned++;
            string[] lines = File.ReadAllLines(file);
            for (int i = 0; i < lines.Length; i++)
            {
                foreach (string f in ForbiddenNames.Concat(ForbiddenPhrases))
                {
                    if (lines[i].Contains(f, Array.IndexOf(ForbiddenNames, f) >= 0 ? StringComparison.Ordinal : StringComparison.OrdinalIgnoreCase))
                    {
                        hits.Add($"{Path.GetRelativePath(RepositoryPaths.Root, file)}:{i + 1}: '{f}'");
                    }
                }
            }
        }

        Assert.True(scanned > 100, $"only {scanned} files scanned; is the repository root right ({RepositoryPaths.Root})?");
        Assert.True(hits.Count == 0, "references to files outside the repository (cite a primary source or a page under docs/):\n" + string.Join("\n", hits));
    }

    [Fact]
    public void Repository_EveryCitedDocsPageAndSectionExists()
    {
        var missing = new List<string>();
        foreach (string file in TextFiles())
        {
            string text = File.ReadAllText(file);
            foreach (Match m in DocsCitation().Matches(text))
            {
                string page = Path.Combine(RepositoryPaths.Root, "docs", m.Groups[1].Value);
                if (!File.Exists(page))
                {
                    missing.Add($"{Path.GetRelativePath(RepositoryPaths.Root, file)}: docs/{m.Groups[1].Value} does not exist");
                    continue;
                }

                if (m.Groups[2].Success && !File.ReadAllText(page).Contains($"§{m.Groups[2].Value} ", StringComparison.Ordinal))
                {
                    missing.Add($"{Path.GetRelativePath(RepositoryPaths.Root, file)}: docs/{m.Groups[1].Value} has no section §{m.Groups[2].Value}");
                }
            }
        }

        Assert.True(missing.Count == 0, string.Join("\n", missing));
    }

    [Fact]
    public void Docs_RelativeLinksPointToFilesThatExist()
    {
        var broken = new List<string>();
        foreach (string file in Directory.EnumerateFiles(RepositoryPaths.Root, "*.md", SearchOption.TopDirectoryOnly)
            .Concat(Directory.EnumerateFiles(Path.Combine(RepositoryPaths.Root, "docs"), "*.md")))
        {
            foreach (Match m in MarkdownLink().Matches(File.ReadAllText(file)))
            {
                string target = m.Groups[1].Value.Split('#')[0];
                if (target.Length == 0 || target.Contains("://", StringComparison.Ordinal))
                {
                    continue;
                }

                if (!File.Exists(Path.Combine(Path.GetDirectoryName(file)!, target)))
                {
                    broken.Add($"{Path.GetRelativePath(RepositoryPaths.Root, file)}: ({m.Groups[1].Value})");
                }
            }
        }

        Assert.True(broken.Count == 0, string.Join("\n", broken));
    }

    [GeneratedRegex(@"docs/([a-z-]+\.md)(?: §(\d+(?:\.\d+)?))?")]
    private static partial Regex DocsCitation();

    [GeneratedRegex(@"\]\(([^)\s]+)\)")]
    private static partial Regex MarkdownLink();
}
