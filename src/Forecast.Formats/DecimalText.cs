using System.Globalization;
using System.Text;

namespace Forecast.Formats;

/// <summary>Decimal numbers scaled by powers of ten in the text, not in binary floating point.</summary>
/// <remarks>QuakeML gives depths in metres while the service keeps kilometres. <c>x * 1000 / 1000</c> is not
/// always <c>x</c> in binary floating point, so a depth exported and re-imported could change in its last bit.
/// Shifting the decimal point of the shortest round-trip text instead makes the pair exact: the text written is
/// exactly 1000 times the decimal the km value prints as, and reading it back yields that decimal again.</remarks>
public static class DecimalText
{
    /// <summary>Reads an xs:double-like decimal (<c>-12.5</c>, <c>1.25E3</c>; no NaN or INF) times
    /// 10^<paramref name="powerOfTen"/>, correctly rounded.</summary>
    public static bool TryParse(ReadOnlySpan<char> text, int powerOfTen, out double value)
    {
        value = 0;
        if (!TrySplit(text, out var negative, out var digits, out var exponent)) return false;
        var normalised = (negative ? "-" : "") + digits + "E" +
            (exponent + (long)powerOfTen).ToString(CultureInfo.InvariantCulture);
        return double.TryParse(normalised, NumberStyles.Float, CultureInfo.InvariantCulture, out value)
            && double.IsFinite(value);
    }

    /// <summary>Writes <paramref name="value"/> times 10^<paramref name="powerOfTen"/> in plain decimal notation
    /// (exponent notation only beyond 30 places), from the shortest text that round-trips the value.</summary>
    public static string Format(double value, int powerOfTen = 0)
    {
        if (!double.IsFinite(value)) throw new ArgumentException("The value must be finite.", nameof(value));
        var r = value.ToString("R", CultureInfo.InvariantCulture);
        if (!TrySplit(r, out var negative, out var digits, out var exponent))
            throw new InvalidOperationException($"Unexpected round-trip text '{r}'.");
        exponent += powerOfTen;
        digits = digits.TrimStart('0');
        if (digits.Length == 0) return "0";
        // Trailing zeros of the integer digits move into the exponent: 8500E-1 is 850.
        var trimmed = digits.TrimEnd('0');
        exponent += digits.Length - trimmed.Length;
        digits = trimmed;
        var sb = new StringBuilder(digits.Length + 8);
        if (negative) sb.Append('-');
        if (exponent > 30 || exponent < -30 - digits.Length)
        {
            sb.Append(digits).Append('E').Append(exponent.ToString(CultureInfo.InvariantCulture));
        }
        else if (exponent >= 0)
        {
            sb.Append(digits).Append('0', (int)exponent);
        }
        else if (digits.Length > -exponent)
        {
            var point = digits.Length + (int)exponent;
            sb.Append(digits, 0, point).Append('.').Append(digits, point, digits.Length - point);
        }
        else
        {
            sb.Append("0.").Append('0', (int)(-exponent - digits.Length)).Append(digits);
        }
        return sb.ToString();
    }

    /// <summary>Splits <c>[+-]? (d+ (. d*)? | . d+) ([eE] [+-]? d+)?</c> into sign, all digits, and the power of
    /// ten of the last digit.</summary>
    static bool TrySplit(ReadOnlySpan<char> text, out bool negative, out string digits, out long exponent)
    {
        negative = false;
        digits = "";
        exponent = 0;
        var i = 0;
        if (i < text.Length && text[i] is '+' or '-') negative = text[i++] == '-';
        var sb = new StringBuilder(text.Length);
        int before = 0, after = 0;
        while (i < text.Length && char.IsAsciiDigit(text[i])) { sb.Append(text[i++]); before++; }
        if (i < text.Length && text[i] == '.')
        {
            i++;
            while (i < text.Length && char.IsAsciiDigit(text[i])) { sb.Append(text[i++]); after++; }
        }
        if (before + after == 0) return false;
        long e = 0;
        if (i < text.Length && text[i] is 'e' or 'E')
        {
            i++;
            var expNegative = false;
            if (i < text.Length && text[i] is '+' or '-') expNegative = text[i++] == '-';
            var start = i;
            while (i < text.Length && char.IsAsciiDigit(text[i]) && i - start < 6) e = e * 10 + (text[i++] - '0');
            if (i == start) return false;
            if (expNegative) e = -e;
        }
        if (i != text.Length) return false;
        digits = sb.ToString();
        exponent = e - after;
        return true;
    }
}
