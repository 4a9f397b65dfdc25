namespace Tieflow.Service.Sources;

/// <summary>
/// Builds the sources a kind of settings asks for. Every registered factory is asked at start (see
/// <see cref="SignalSources"/>); a factory returns its sources when the settings select it (<c>Tieflow:Source:Kind</c>
/// equal to its <see cref="Kind"/>, or for a source that does not depend on the kind, such as the lab drop folder,
/// whenever its own settings are present) and nothing otherwise. Register one with
/// <c>services.AddSingleton&lt;ISignalSourceFactory, MyFactory&gt;()</c> in <c>AddTieflowSource</c>.
/// </summary>
internal interface ISignalSourceFactory
{
    /// <summary>The <c>Tieflow:Source:Kind</c> this factory serves, or null for a source beside the kind (lab results).</summary>
    string? Kind { get; }

    /// <summary>The sources for these settings (none when they do not select this factory).</summary>
    /// <remarks>Throws <see cref="Tieflow.Files.InputException"/> for a file named by the settings that cannot be read (exit 2).</remarks>
    IReadOnlyList<ISignalSource> Create(SourceContext context);
}
