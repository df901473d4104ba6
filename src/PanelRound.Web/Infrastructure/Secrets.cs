using System.Security.Cryptography;
using System.Text;

namespace PanelRound.Web.Infrastructure;

/// <summary>Random tokens and their stored hashes (personal links, API keys, panel codes).</summary>
public static class Secrets
{
    /// <summary>A URL-safe token with 256 bits of randomness, with an optional recognisable prefix.</summary>
    public static string NewToken(string prefix = "") =>
        prefix + Convert.ToBase64String(RandomNumberGenerator.GetBytes(32)).TrimEnd('=').Replace('+', '-').Replace('/', '_');

    /// <summary>SHA-256 of the text, lower-case hex: what is stored instead of a token.</summary>
    public static string Hash(string token) =>
        Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(token)));

    private const string CodeAlphabet = "ABCDEFGHJKLMNPQRSTUVWXYZ23456789";

    /// <summary>A panel code such as <c>KX7-Q2M</c>: random, unambiguous letters and digits.</summary>
    public static string NewPanelCode()
    {
        Span<char> c = stackalloc char[7];
        for (var i = 0; i < 7; i++)
        {
            c[i] = i == 3 ? '-' : CodeAlphabet[RandomNumberGenerator.GetInt32(CodeAlphabet.Length)];
        }
        return new string(c);
    }

    /// <summary>A generated password that satisfies the Identity password rules.</summary>
    public static string NewPassword() => "Pr-" + NewToken()[..20] + "9a";
}
