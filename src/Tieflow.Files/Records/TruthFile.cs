using Tieflow.Core.Scenarios;

namespace Tieflow.Files;

/// <summary>
/// The ground truth of a simulated plant as a truth file holds it: one unit (the single-unit form, key
/// <see cref="SingleUnitKey"/>) or several under <c>units</c>.
/// </summary>
/// <param name="Units">The truth of each unit by unit id.</param>
/// <param name="IsSingleUnitForm">True when the file was written in the single-unit form (no unit ids).</param>
public sealed record TruthFile(IReadOnlyDictionary<string, UnitTruth> Units, bool IsSingleUnitForm)
{
    /// <summary>The key of the one unit of a file in the single-unit form.</summary>
    public const string SingleUnitKey = "";

    /// <summary>The truth of a unit: by id, or the one unit of a single-unit file whatever the id; null when absent.</summary>
    public UnitTruth? ForUnit(string unitId)
    {
        if (IsSingleUnitForm)
        {
            return Units[SingleUnitKey];
        }

        return Units.TryGetValue(unitId, out UnitTruth? truth) ? truth : null;
    }
}
