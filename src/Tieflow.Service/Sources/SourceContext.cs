using Microsoft.Extensions.Logging;
using Tieflow.Core.Plant;
using Tieflow.Service.Settings;

namespace Tieflow.Service.Sources;

/// <summary>
/// What a <see cref="ISignalSourceFactory"/> gets to build its source from: the validated settings, the plant being
/// watched (only the units of <c>Tieflow:Units</c>), the clock, logging, and the settings context (relative paths,
/// secrets from the environment: <see cref="SettingsContext.Secret"/> with <see cref="SourceOptionsValidator.PasswordVariable"/>).
/// </summary>
internal sealed record SourceContext(
    SourceOptions Source,
    LabsOptions Labs,
    PlantDescription Plant,
    SettingsContext Settings,
    TimeProvider Time,
    ILoggerFactory LoggerFactory);
