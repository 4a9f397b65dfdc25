namespace Tieflow.Core.Plant;

/// <summary>The units that one Tieflow instance watches at one site.</summary>
/// <param name="Site">Name of the site (a tag of every record).</param>
/// <param name="Units">The units, in the order of the plant file.</param>
public sealed record PlantDescription(string Site, IReadOnlyList<UnitDescription> Units)
{
    /// <summary>The unit with an id, or null.</summary>
    /// <param name="id">The unit id.</param>
    public UnitDescription? FindUnit(string id) => Units.FirstOrDefault(u => u.Id == id);
}
