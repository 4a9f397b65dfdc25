using Tieflow.OpcUa.Encoding;

namespace Tieflow.OpcUa.Client;

/// <summary>
/// Who the client logs in as: anonymous, or a user name with a password. The password is held only to build the
/// identity token; <see cref="ToString"/> and every message of this library leave it out.
/// </summary>
public sealed class UaUserIdentity
{
    private readonly string? _password;

    private UaUserIdentity(UserTokenType tokenType, string? userName, string? password)
    {
        TokenType = tokenType;
        UserName = userName;
        _password = password;
    }

    /// <summary>The anonymous identity.</summary>
    public static UaUserIdentity Anonymous { get; } = new(UserTokenType.Anonymous, null, null);

    /// <summary>The kind of token.</summary>
    public UserTokenType TokenType { get; }

    /// <summary>The user name, or null when anonymous.</summary>
    public string? UserName { get; }

    internal string Password => _password ?? string.Empty;

    /// <summary>A user name and password identity.</summary>
    /// <param name="userName">The user name; not empty.</param>
    /// <param name="password">The password; not null.</param>
    /// <returns>The identity.</returns>
    /// <exception cref="ArgumentException">The user name is empty.</exception>
    public static UaUserIdentity FromUserName(string userName, string password)
    {
        ArgumentException.ThrowIfNullOrEmpty(userName);
        ArgumentNullException.ThrowIfNull(password);
        return new UaUserIdentity(UserTokenType.UserName, userName, password);
    }

    /// <summary><c>anonymous</c> or <c>user 'name'</c>; never the password.</summary>
    public override string ToString() => TokenType == UserTokenType.Anonymous ? "anonymous" : $"user '{UserName}'";
}
