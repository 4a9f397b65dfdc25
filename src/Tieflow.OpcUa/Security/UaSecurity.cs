using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Security;

/// <summary>
/// A security mode with an optional security policy, as the user names it: <c>None</c>, <c>Sign</c>,
/// <c>SignAndEncrypt</c>, or a mode with a policy such as <c>SignAndEncrypt:Basic256Sha256</c>. Without a policy the
/// most secure one the server offers in that mode is used.
/// </summary>
/// <param name="Mode">None, Sign or SignAndEncrypt.</param>
/// <param name="PolicyUri">The security policy URI, or null for "the most secure offered" (always the None URI under mode None).</param>
public sealed record UaSecurity(MessageSecurityMode Mode, string? PolicyUri)
{
    /// <summary>No security.</summary>
    public static UaSecurity None { get; } = new(MessageSecurityMode.None, SecurityPolicy.NoneUri);

    /// <summary>The policy names Tieflow supports, most secure first.</summary>
    public static IReadOnlyList<string> PolicyNames { get; } = [.. SecurityPolicy.All.Select(p => p.Name)];

    /// <summary>Every secured combination (both modes under every policy), most secure first.</summary>
    public static IReadOnlyList<UaSecurity> AllSecure { get; } =
    [
        .. SecurityPolicy.All.Select(p => new UaSecurity(MessageSecurityMode.SignAndEncrypt, p.Uri)),
        .. SecurityPolicy.All.Select(p => new UaSecurity(MessageSecurityMode.Sign, p.Uri)),
    ];

    /// <summary>The policy's short name (Basic256Sha256, ...), None, or null when not given.</summary>
    public string? PolicyName => PolicyUri is null ? null : SecurityPolicy.FromUri(PolicyUri)?.Name ?? (PolicyUri == SecurityPolicy.NoneUri ? "None" : PolicyUri);

    /// <summary>Reads <c>MODE[:POLICY]</c> (names compared without regard to case).</summary>
    /// <param name="text">For example <c>SignAndEncrypt:Aes256_Sha256_RsaPss</c>.</param>
    /// <returns>The choice.</returns>
    /// <exception cref="FormatException">The mode or policy is not one of the standard names (the message lists them).</exception>
    public static UaSecurity Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var parts = text.Split(':', 2);
        var expected = $"expected None, Sign or SignAndEncrypt, optionally followed by :{string.Join("|", PolicyNames)}";
        if (!Enum.TryParse<MessageSecurityMode>(parts[0], ignoreCase: true, out var mode) || mode == MessageSecurityMode.Invalid || !Enum.IsDefined(mode) ||
            parts[0].Trim().Length == 0 || char.IsDigit(parts[0].Trim()[0]))
        {
            throw new FormatException($"Security '{text}': unknown mode '{parts[0]}'; {expected}");
        }

        if (mode == MessageSecurityMode.None)
        {
            if (parts.Length == 2 && !string.Equals(parts[1], "None", StringComparison.OrdinalIgnoreCase))
            {
                throw new FormatException($"Security '{text}': mode None takes no policy; {expected}");
            }

            return None;
        }

        if (parts.Length == 1)
        {
            return new UaSecurity(mode, null);
        }

        var policy = SecurityPolicy.FromName(parts[1]) ?? SecurityPolicy.FromUri(parts[1])
            ?? throw new FormatException($"Security '{text}': unknown policy '{parts[1]}'; {expected}");
        return new UaSecurity(mode, policy.Uri);
    }

    /// <summary><c>MODE</c> or <c>MODE:POLICY</c>.</summary>
    public override string ToString() => Mode == MessageSecurityMode.None || PolicyUri is null ? Mode.ToString() : $"{Mode}:{PolicyName}";
}
