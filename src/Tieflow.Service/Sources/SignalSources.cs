using Tieflow.Service.Settings;

namespace Tieflow.Service.Sources;

/// <summary>Selects the sources of a run from the registered <see cref="ISignalSourceFactory"/> instances and the settings.</summary>
internal sealed class SignalSources(IEnumerable<ISignalSourceFactory> factories)
{
    private readonly IReadOnlyList<ISignalSourceFactory> _factories = [.. factories];

    /// <summary>The kinds of <c>Tieflow:Source:Kind</c> some factory serves.</summary>
    public IEnumerable<string> Kinds => _factories.Select(f => f.Kind).OfType<string>();

    /// <summary>The sources of these settings: the one of the configured kind (primary: its gaps are source gaps of the plant), and those beside it.</summary>
    /// <exception cref="InvalidOperationException">No factory serves the configured kind (the build lacks it).</exception>
    public IReadOnlyList<(ISignalSource Source, bool Primary)> Create(SourceContext context)
    {
        string kind = context.Source.Kind ?? string.Empty;
        if (!_factories.Any(f => f.Kind == kind))
        {
            throw new Files.InputException("settings", SourceOptions.Section + ":Kind",
                $"this build of tieflow has no source of kind '{kind}'; it has {string.Join(", ", Kinds.Select(k => $"'{k}'"))}");
        }

        var sources = new List<(ISignalSource, bool)>();
        foreach (ISignalSourceFactory f in _factories.Where(f => f.Kind is null || f.Kind == kind))
        {
            sources.AddRange(f.Create(context).Select(s => (s, f.Kind is not null)));
        }

        return sources;
    }
}
