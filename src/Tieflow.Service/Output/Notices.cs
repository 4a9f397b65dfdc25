namespace Tieflow.Service.Output;

/// <summary>Texts that every output carries.</summary>
internal static class Notices
{
    public const string Advisory =
        "Advisory only: Tieflow is read-only towards the plant and is not a safety system. " +
        "Local codes, site procedures and licensed engineering practice govern.";
}
