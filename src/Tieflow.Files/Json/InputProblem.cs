namespace Tieflow.Files;

/// <summary>One thing wrong with an input file: which file, where in it (a JSON path such as <c>$.inlets[1].flow</c>), and what was expected.</summary>
public sealed record InputProblem(string File, string JsonPath, string Message)
{
    public override string ToString() => $"{File}: {JsonPath}: {Message}";
}
