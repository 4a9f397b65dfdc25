namespace Tieflow.Files;

/// <summary>Input that cannot be used; carries every problem found, so that a user can mend them all at once. Exit code 2.</summary>
public sealed class InputException : Exception
{
    public InputException(IReadOnlyList<InputProblem> problems)
        : base(Describe(problems))
    {
        Problems = problems;
    }

    public InputException(string file, string jsonPath, string message)
        : this([new InputProblem(file, jsonPath, message)])
    {
    }

    public IReadOnlyList<InputProblem> Problems { get; }

    private static string Describe(IReadOnlyList<InputProblem> problems) =>
        problems.Count == 1 ? problems[0].ToString() : $"{problems.Count} problems:{Environment.NewLine}" + string.Join(Environment.NewLine, problems.Select(p => "  " + p));
}
