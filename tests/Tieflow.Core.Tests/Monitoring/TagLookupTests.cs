using Tieflow.Core.Monitoring;

namespace Tieflow.Core.Tests.Monitoring;

public sealed class TagLookupTests
{
    [Fact]
    public void EveryAnswer_IsTheDictionarys_WhateverStringObjectAsks()
    {
        // 2,000 tags over 256 slots, so slots are shared; each asked first by one string object, then by a new one with
        // the same text, then by the first again; and tags the dictionary does not have.
        var byTag = Enumerable.Range(0, 2000).ToDictionary(i => $"TI-{i}", i => i, StringComparer.Ordinal);
        var lookup = new TagLookup<int>(byTag);
        string[] first = [.. byTag.Keys];
        for (int pass = 0; pass < 3; pass++)
        {
            for (int i = 0; i < first.Length; i++)
            {
                string tag = pass == 1 ? new string(first[i].AsSpan()) : first[i];
                Assert.True(lookup.TryGetValue(tag, out int value));
                Assert.Equal(byTag[tag], value);
            }
        }

        Assert.False(lookup.TryGetValue("FI-999", out _));
        Assert.False(lookup.TryGetValue(new string("TI-1".AsSpan()) + "x", out _));
    }
}
