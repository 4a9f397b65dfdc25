namespace Tieflow.Core.Cascade;

/// <summary>A warning about a calculated result: the numbers stand, but an engineer should know this about them.</summary>
/// <param name="Code">Stable identifier: <c>temperature-outside-data</c>, <c>below-lowest-tie-line</c>,
/// <c>above-highest-tie-line</c>, <c>above-isotherm-data</c>, <c>solvent-strips-nothing</c>,
/// <c>solvent-loads-raffinate</c> or <c>near-minimum-solvent</c>.</param>
/// <param name="Stage">The stage the warning is about (1 at the feed end), or null for the whole result.</param>
/// <param name="Message">What is the matter, for a person.</param>
public sealed record CascadeWarning(string Code, int? Stage, string Message);
