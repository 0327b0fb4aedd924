//! Reading numbers from the text of plain YAML scalars, exactly and strictly.
//!
//! Counts are parsed from their digits, never through `f64`, so `1e15` and
//! `18446744073709551615` come out exact. Forms that YAML 1.1 and YAML 1.2 read differently
//! (`0123`, `1_000`, `1:20`, `yes`) are refused rather than guessed, because a spec may be
//! read by other tools too and must mean the same to all of them.

use super::yaml::shorten;

/// A plain decimal number as written: `[-+]?(digits)(.digits)?([eE][-+]?digits)?`, with at
/// least one digit before or after the point (YAML 1.2 core schema float/int syntax).
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct Decimal<'a> {
    pub negative: bool,
    pub int_digits: &'a str,
    pub frac_digits: &'a str,
    /// Decimal exponent, clamped to ±1_000_000 (far beyond any representable value).
    pub exponent: i64,
    pub has_exponent: bool,
}

fn all_digits(s: &str) -> bool {
    s.bytes().all(|b| b.is_ascii_digit())
}

/// Splits a decimal number into its parts, or `None` if the text is not one.
pub(crate) fn parse_decimal(text: &str) -> Option<Decimal<'_>> {
    let (negative, rest) = match text.as_bytes().first() {
        Some(b'-') => (true, &text[1..]),
        Some(b'+') => (false, &text[1..]),
        _ => (false, text),
    };
    let (mantissa, exp_text) = match rest.find(['e', 'E']) {
        Some(i) => (&rest[..i], Some(&rest[i + 1..])),
        None => (rest, None),
    };
    let (int_digits, frac_digits) = match mantissa.find('.') {
        Some(i) => (&mantissa[..i], &mantissa[i + 1..]),
        None => (mantissa, ""),
    };
    if !all_digits(int_digits)
        || !all_digits(frac_digits)
        || (int_digits.is_empty() && frac_digits.is_empty())
    {
        return None;
    }
    let mut exponent = 0i64;
    if let Some(exp_text) = exp_text {
        let (exp_negative, exp_digits) = match exp_text.as_bytes().first() {
            Some(b'-') => (true, &exp_text[1..]),
            Some(b'+') => (false, &exp_text[1..]),
            _ => (false, exp_text),
        };
        if exp_digits.is_empty() || !all_digits(exp_digits) {
            return None;
        }
        for b in exp_digits.bytes() {
            exponent = (exponent * 10 + i64::from(b - b'0')).min(1_000_000);
        }
        if exp_negative {
            exponent = -exponent;
        }
    }
    Some(Decimal {
        negative,
        int_digits,
        frac_digits,
        exponent,
        has_exponent: exp_text.is_some(),
    })
}

/// `.inf`, `-.inf`, `.nan` and their YAML 1.2 spellings.
fn is_non_finite(text: &str) -> bool {
    let t = text.strip_prefix(['-', '+']).unwrap_or(text);
    matches!(t, ".inf" | ".Inf" | ".INF") || matches!(text, ".nan" | ".NaN" | ".NAN")
}

/// `0123`, `-007`: YAML 1.1 reads these as octal, YAML 1.2 as decimal.
pub(crate) fn is_octal_looking(text: &str) -> bool {
    let t = text.strip_prefix(['-', '+']).unwrap_or(text);
    t.len() > 1 && t.starts_with('0') && all_digits(t)
}

/// Other integer and float spellings some YAML reader would take as a number: hexadecimal,
/// `0o` octal, binary, digit-group underscores and base-60 (`1:20`) of YAML 1.1.
fn is_other_number_form(text: &str) -> bool {
    let t = text.strip_prefix(['-', '+']).unwrap_or(text);
    let radix = |prefix: &str, ok: fn(u8) -> bool| {
        t.strip_prefix(prefix)
            .is_some_and(|d| !d.is_empty() && d.bytes().all(|b| ok(b) || b == b'_'))
    };
    if radix("0x", |b| b.is_ascii_hexdigit())
        || radix("0o", |b| (b'0'..=b'7').contains(&b))
        || radix("0b", |b| b == b'0' || b == b'1')
    {
        return true;
    }
    if t.contains('_')
        && t.starts_with(|c: char| c.is_ascii_digit())
        && parse_decimal(&t.replace('_', "")).is_some()
    {
        return true;
    }
    // Base 60: 1:20, 190:20:30.15
    let mut parts = t.split(':');
    let first = parts.next().unwrap_or("");
    let rest: Vec<&str> = parts.collect();
    !rest.is_empty()
        && !first.is_empty()
        && all_digits(first)
        && rest.iter().enumerate().all(|(i, p)| {
            let digits = if i + 1 == rest.len() {
                p.split_once('.').map_or(*p, |(a, _)| a)
            } else {
                p
            };
            !digits.is_empty()
                && digits.len() <= 2
                && all_digits(digits)
                && p.split_once('.').is_none_or(|(_, f)| all_digits(f))
        })
}

/// YAML 1.1 booleans that YAML 1.2 reads as text: the classic trap of `country: no`.
pub(crate) fn is_yaml11_bool(text: &str) -> bool {
    matches!(
        text.to_ascii_lowercase().as_str(),
        "yes" | "no" | "on" | "off" | "y" | "n"
    )
}

/// YAML 1.2 core-schema booleans.
pub(crate) fn yaml12_bool(text: &str) -> Option<bool> {
    match text {
        "true" | "True" | "TRUE" => Some(true),
        "false" | "False" | "FALSE" => Some(false),
        _ => None,
    }
}

/// Whether some YAML reader would take this plain scalar as a number.
pub(crate) fn looks_numeric(text: &str) -> bool {
    parse_decimal(text).is_some()
        || is_non_finite(text)
        || is_octal_looking(text)
        || is_other_number_form(text)
}

/// Describes a non-null plain scalar for a message, naming what a YAML reader would take it for.
pub(crate) fn describe_plain(text: &str) -> String {
    if looks_numeric(text) {
        format!("the number `{}`", shorten(text))
    } else if yaml12_bool(text).is_some() {
        format!("the boolean `{text}`")
    } else if is_yaml11_bool(text) {
        format!("`{text}` (a boolean in YAML 1.1)")
    } else {
        format!("the string `{}`", shorten(text))
    }
}

/// Why a plain scalar is not the integer asked for.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) enum IntError {
    /// Not a number at all.
    NotNumber,
    /// `.inf`, `.nan`.
    NonFinite,
    /// `0123`.
    LeadingZero,
    /// Hex, octal, binary, underscores, base 60.
    NotDecimal,
    /// Has a non-zero fractional part.
    Fraction,
    /// Beyond ±u64::MAX.
    TooLarge,
}

/// Exact integer value of a plain scalar as (is negative, magnitude). Accepts decimal integers
/// and decimal or scientific forms whose value is an exact integer (`2.5e6`, `4600.0`).
pub(crate) fn parse_integer(text: &str) -> Result<(bool, u64), IntError> {
    if is_non_finite(text) {
        return Err(IntError::NonFinite);
    }
    if is_octal_looking(text) {
        return Err(IntError::LeadingZero);
    }
    let Some(d) = parse_decimal(text) else {
        return Err(if is_other_number_form(text) {
            IntError::NotDecimal
        } else {
            IntError::NotNumber
        });
    };
    let mut digits: String = format!("{}{}", d.int_digits, d.frac_digits)
        .trim_start_matches('0')
        .to_owned();
    let frac_len = i64::try_from(d.frac_digits.len()).unwrap_or(i64::MAX);
    let mut shift = d.exponent.saturating_sub(frac_len);
    while digits.ends_with('0') {
        digits.pop();
        shift = shift.saturating_add(1);
    }
    if digits.is_empty() {
        return Ok((d.negative, 0));
    }
    if shift < 0 {
        return Err(IntError::Fraction);
    }
    // u64::MAX has 20 digits.
    if i64::try_from(digits.len())
        .unwrap_or(i64::MAX)
        .saturating_add(shift)
        > 20
    {
        return Err(IntError::TooLarge);
    }
    let mut value: u128 = 0;
    for b in digits.bytes() {
        value = value * 10 + u128::from(b - b'0');
    }
    for _ in 0..shift {
        value *= 10;
    }
    u64::try_from(value)
        .map(|v| (d.negative, v))
        .map_err(|_| IntError::TooLarge)
}

/// Why a plain scalar is not the real number asked for.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) enum RealError {
    NotNumber,
    NonFinite,
    LeadingZero,
    NotDecimal,
    /// Too large in magnitude for a 64-bit float.
    TooLarge,
    /// Written as a percentage (`1%`): the number part, for the hint.
    Percent(String),
}

/// A finite `f64` from a plain scalar in YAML 1.2 decimal or scientific form.
pub(crate) fn parse_real(text: &str) -> Result<f64, RealError> {
    if is_non_finite(text) {
        return Err(RealError::NonFinite);
    }
    if is_octal_looking(text) {
        return Err(RealError::LeadingZero);
    }
    if parse_decimal(text).is_none() {
        if let Some(p) = text.strip_suffix('%').map(str::trim_end)
            && parse_decimal(p).is_some()
        {
            return Err(RealError::Percent(p.to_owned()));
        }
        return Err(if is_other_number_form(text) {
            RealError::NotDecimal
        } else {
            RealError::NotNumber
        });
    }
    // The grammar was checked above, and Rust's float syntax is a superset of it.
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(RealError::TooLarge),
    }
}

/// Moves the decimal point of a plain decimal `digits[.digits]` left by `places`, giving the
/// normalised text `int.frac` (no exponent, no sign); used for `95%` → `0.95`.
pub(crate) fn shift_left(int_digits: &str, frac_digits: &str, places: usize) -> (String, String) {
    let mut int = int_digits.trim_start_matches('0').to_owned();
    while int.len() < places {
        int.insert(0, '0');
    }
    let split = int.len() - places;
    let new_int = int[..split].trim_start_matches('0');
    let new_frac = format!("{}{}", &int[split..], frac_digits);
    let new_frac = new_frac.trim_end_matches('0');
    (
        if new_int.is_empty() {
            "0".to_owned()
        } else {
            new_int.to_owned()
        },
        new_frac.to_owned(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn integers_are_exact() {
        assert_eq!(parse_integer("18446744073709551615"), Ok((false, u64::MAX)));
        assert_eq!(
            parse_integer("18446744073709551616"),
            Err(IntError::TooLarge)
        );
        assert_eq!(parse_integer("1e15"), Ok((false, 1_000_000_000_000_000)));
        assert_eq!(parse_integer("2.5e6"), Ok((false, 2_500_000)));
        assert_eq!(parse_integer("4600.0"), Ok((false, 4600)));
        assert_eq!(parse_integer("4600.5"), Err(IntError::Fraction));
        assert_eq!(parse_integer("1e-3"), Err(IntError::Fraction));
        assert_eq!(parse_integer("0"), Ok((false, 0)));
        assert_eq!(parse_integer("0.0e99999999999999"), Ok((false, 0)));
        assert_eq!(parse_integer("1e99999999999999"), Err(IntError::TooLarge));
        assert_eq!(parse_integer("0123"), Err(IntError::LeadingZero));
        assert_eq!(parse_integer("1_000"), Err(IntError::NotDecimal));
        assert_eq!(parse_integer("0x1F"), Err(IntError::NotDecimal));
        assert_eq!(parse_integer("1:20"), Err(IntError::NotDecimal));
        assert_eq!(parse_integer("-3"), Ok((true, 3)));
        assert_eq!(parse_integer("abc"), Err(IntError::NotNumber));
        assert_eq!(parse_integer("2026-11-30"), Err(IntError::NotNumber));
        assert_eq!(parse_integer(".inf"), Err(IntError::NonFinite));
        // 1.8446744073709551615e19 is u64::MAX written in scientific form.
        assert_eq!(
            parse_integer("1.8446744073709551615e19"),
            Ok((false, u64::MAX))
        );
    }

    #[test]
    fn reals() {
        assert_eq!(parse_real("0.01"), Ok(0.01));
        assert_eq!(parse_real(".5"), Ok(0.5));
        assert_eq!(parse_real("-2.5e-3"), Ok(-0.0025));
        assert_eq!(parse_real("1e400"), Err(RealError::TooLarge));
        assert_eq!(parse_real(".nan"), Err(RealError::NonFinite));
        assert_eq!(parse_real("inf"), Err(RealError::NotNumber));
        assert_eq!(parse_real("1%"), Err(RealError::Percent("1".into())));
        assert_eq!(parse_real("007"), Err(RealError::LeadingZero));
    }

    #[test]
    fn percent_shift() {
        assert_eq!(shift_left("95", "", 2), ("0".into(), "95".into()));
        assert_eq!(shift_left("99", "9", 2), ("0".into(), "999".into()));
        assert_eq!(shift_left("5", "", 2), ("0".into(), "05".into()));
        assert_eq!(shift_left("100", "", 2), ("1".into(), "".into()));
        assert_eq!(shift_left("", "5", 2), ("0".into(), "005".into()));
    }

    #[test]
    fn classification() {
        assert!(looks_numeric("0117"));
        assert!(looks_numeric("1_000"));
        assert!(looks_numeric("1:20"));
        assert!(!looks_numeric("VER-0117"));
        assert!(!looks_numeric("2026-11-30"));
        assert!(!looks_numeric("12:3a"));
        assert!(is_yaml11_bool("Off"));
        assert!(!is_yaml11_bool("nope"));
    }
}
