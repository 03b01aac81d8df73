using System.Text.RegularExpressions;

namespace Forecast.Cli;

/// <summary>Plain wording for System.CommandLine's "cannot parse" errors, which name the CLR type expected.</summary>
public static partial class ParseMessages
{
    [GeneratedRegex(@"as expected type '(?:System\.Nullable`1\[)?System\.(?<type>\w+)\]?'")]
    private static partial Regex ExpectedType();

    public static bool IsTypeError(string message) => ExpectedType().IsMatch(message);

    /// <summary>"Cannot parse argument 'abc' for option '--mc' as a number (for example 2.5)."</summary>
    public static string Plain(string message) => ExpectedType().Replace(message, m => m.Groups["type"].Value switch
    {
        "Double" or "Single" or "Decimal" => "as a number (for example 2.5)",
        "Int32" or "Int64" or "Int16" => "as a whole number (for example 3)",
        "DateTime" or "DateTimeOffset" => "as a UTC time (for example 2026-01-15T04:20:00Z)",
        "Boolean" => "as true or false",
        var other => $"as a value of type {other}",
    }).TrimEnd('.') + ".";
}
