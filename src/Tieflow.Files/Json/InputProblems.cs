namespace Tieflow.Files;

/// <summary>Collects the problems of one or more files while they are read, so that all of them are reported together.</summary>
public sealed class InputProblems
{
    private readonly List<InputProblem> _items = [];

    public IReadOnlyList<InputProblem> Items => _items;

    public bool Any => _items.Count > 0;

    public void Add(string file, string jsonPath, string message) => _items.Add(new InputProblem(file, jsonPath, message));

    /// <summary>Throws an <see cref="InputException"/> with every problem collected, if there is any.</summary>
    public void ThrowIfAny()
    {
        if (_items.Count > 0)
        {
            throw new InputException(_items.ToArray());
        }
    }
}
