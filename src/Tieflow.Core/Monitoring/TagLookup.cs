using System.Diagnostics.CodeAnalysis;
using System.Runtime.CompilerServices;

namespace Tieflow.Core.Monitoring;

/// <summary>
/// A lookup by tag in front of a dictionary that no longer changes. A reader hands the same string object for every
/// reading of a tag, so a small table keyed by that object's identity finds the value without hashing the text. A miss
/// (another string with the same text, a slot taken by another tag) asks the dictionary, so the answer is always the
/// dictionary's. Not safe for concurrent use.
/// </summary>
/// <typeparam name="TValue">The value kept per tag.</typeparam>
public sealed class TagLookup<TValue>
{
    private const int Slots = 256;
    private readonly Dictionary<string, TValue> _byTag;
    private readonly string?[] _tags = new string?[Slots];
    private readonly TValue[] _values = new TValue[Slots];

    /// <summary>Creates the lookup over a dictionary that the caller no longer changes.</summary>
    /// <param name="byTag">Values by tag.</param>
    public TagLookup(Dictionary<string, TValue> byTag) => _byTag = byTag ?? throw new ArgumentNullException(nameof(byTag));

    /// <summary>The dictionary's value for the tag, if it has one.</summary>
    /// <param name="tag">The tag.</param>
    /// <param name="value">The value, when found.</param>
    public bool TryGetValue(string tag, [MaybeNullWhen(false)] out TValue value)
    {
        int slot = RuntimeHelpers.GetHashCode(tag) & (Slots - 1);
        if (ReferenceEquals(_tags[slot], tag))
        {
            value = _values[slot];
            return true;
        }

        if (!_byTag.TryGetValue(tag, out value))
        {
            return false;
        }

        _tags[slot] = tag;
        _values[slot] = value;
        return true;
    }
}
