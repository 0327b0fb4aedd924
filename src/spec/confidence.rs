//! The confidence of a claim, read from its text with exact decimal arithmetic.
//!
//! δ = 1 − confidence is what every later stage divides and carries (DESIGN.md §11), so it is
//! computed on the decimal digits as written and only then turned into an `f64`:
//! `0.999999999999` gives exactly the `f64` nearest 1e-12, which `1.0 - 0.999999999999` in
//! floating point does not.

use super::number::{parse_decimal, shift_left};
use super::yaml::{Style, shorten};

/// A confidence as read from the spec.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Confidence {
    /// The confidence as a fraction, parsed from its normalised decimal text.
    pub value: f64,
    /// 1 − confidence, computed exactly on the decimal digits, then rounded once to `f64`.
    pub delta: f64,
    /// The confidence in percent, as decimal text taken from the digits (`95`, `99.9`).
    pub percent: String,
}

/// A refusal: the message and, where the intent can be guessed, a hint.
pub(crate) type Refusal = (String, Option<String>);

const EXPECTED: &str = "expected a confidence such as 0.95 or \"95%\"";

/// Reads a confidence written `0.95` (plain) or `"95%"`. `text` is the scalar as written, empty
/// for a null value.
pub(crate) fn parse_confidence(text: &str, style: Style) -> Result<Confidence, Refusal> {
    let t = text.trim();
    if t.is_empty() {
        return Err((format!("{EXPECTED}, found nothing"), None));
    }
    if let Some(number) = t.strip_suffix('%') {
        let number = number.trim_end();
        let d = parse_decimal(number)
            .filter(|d| !d.has_exponent && !number.starts_with(['+', '-']))
            .ok_or_else(|| {
                (
                    format!(
                        "expected a percentage such as \"95%\", found `{}`",
                        shorten(t)
                    ),
                    None,
                )
            })?;
        let (int, frac) = shift_left(d.int_digits, d.frac_digits, 2);
        return check_fraction(t, &int, &frac, true);
    }
    let decimal = parse_decimal(t);
    if style != Style::Plain {
        let hint = decimal.filter(|d| !d.negative && !d.has_exponent).map(|d| {
            let int = d.int_digits.trim_start_matches('0');
            if int.is_empty() {
                format!(
                    "write {t} without quotes, or as a percentage \"{}%\"",
                    percent_text(d.int_digits, d.frac_digits)
                )
            } else {
                did_you_mean(d.int_digits, d.frac_digits)
            }
        });
        return Err((
            format!(
                "a quoted confidence must be a percentage ending in %, found \"{}\"",
                shorten(t)
            ),
            hint,
        ));
    }
    let Some(d) = decimal else {
        return Err((
            format!("{EXPECTED}, found {}", super::number::describe_plain(t)),
            None,
        ));
    };
    let is_zero = d
        .int_digits
        .bytes()
        .chain(d.frac_digits.bytes())
        .all(|b| b == b'0');
    if d.negative && !is_zero {
        return Err((
            format!("a confidence cannot be negative, found {t}"),
            Some("write it as 0.95 or \"95%\"".to_owned()),
        ));
    }
    if d.has_exponent {
        return Err((
            format!("write the confidence as a plain decimal, found {t}"),
            Some("for example 0.999 or \"99.9%\"".to_owned()),
        ));
    }
    let int = d.int_digits.trim_start_matches('0');
    let frac = d.frac_digits.trim_end_matches('0');
    check_fraction(t, if int.is_empty() { "0" } else { int }, frac, false)
}

/// `int.frac` written as a percentage by moving the decimal point on the digits, so nothing is
/// rounded: (`0`, `95`) → `95`, (`0`, `999`) → `99.9`.
pub(crate) fn percent_text(int_digits: &str, frac_digits: &str) -> String {
    let digits = format!("{int_digits}{frac_digits}");
    let point = int_digits.len() + 2;
    let padded = format!("{digits:0<point$}");
    let (i, f) = padded.split_at(point);
    let i = i.trim_start_matches('0');
    let i = if i.is_empty() { "0" } else { i };
    let f = f.trim_end_matches('0');
    if f.is_empty() {
        i.to_owned()
    } else {
        format!("{i}.{f}")
    }
}

/// For a confidence written as a percentage without the % sign (`95`, `99.9`).
fn did_you_mean(int_digits: &str, frac_digits: &str) -> String {
    let (i, f) = shift_left(int_digits, frac_digits, 2);
    let as_fraction = if f.is_empty() { i } else { format!("{i}.{f}") };
    let int = int_digits.trim_start_matches('0');
    let frac = frac_digits.trim_end_matches('0');
    let as_percent = if frac.is_empty() {
        int.to_owned()
    } else {
        format!("{int}.{frac}")
    };
    format!("did you mean {as_fraction} or \"{as_percent}%\"?")
}

/// 1 − 0.`frac` on the digits: nines' complement plus one unit in the last place.
/// `frac` has no trailing zeros and is not all zeros.
fn complement(frac: &str) -> String {
    let mut digits: Vec<u8> = frac.bytes().map(|b| b'9' - b + b'0').collect();
    for d in digits.iter_mut().rev() {
        if *d == b'9' {
            *d = b'0';
        } else {
            *d += 1;
            break;
        }
    }
    let s = String::from_utf8(digits).unwrap_or_default();
    s.trim_end_matches('0').to_owned()
}

/// Checks a confidence given as the normalised decimal `int.frac` (int without leading zeros or
/// `0`, frac without trailing zeros).
fn check_fraction(
    written: &str,
    int: &str,
    frac: &str,
    percent: bool,
) -> Result<Confidence, Refusal> {
    let frac = frac.trim_end_matches('0');
    let int = if int.trim_start_matches('0').is_empty() {
        "0"
    } else {
        int.trim_start_matches('0')
    };
    if int != "0" {
        if percent {
            return Err((
                format!("a confidence must be below 100%, found {written}"),
                Some("for example \"95%\" or \"99%\"".to_owned()),
            ));
        }
        if int == "1" && frac.is_empty() {
            return Err((
                "a confidence of 1 (100%) cannot be demonstrated by any finite test".to_owned(),
                Some("use a confidence below 1, such as 0.95 or 0.99".to_owned()),
            ));
        }
        if int.len() == 2 && int >= "50" {
            return Err((
                format!("a confidence is a fraction below 1, found {written}"),
                Some(did_you_mean(int, frac)),
            ));
        }
        return Err((
            format!("a confidence must lie between 0.5 and 1, found {written}"),
            Some("for example 0.95 or \"95%\"".to_owned()),
        ));
    }
    if frac.is_empty() {
        return Err((
            format!("a confidence of 0 claims nothing, found {written}"),
            Some("for example 0.95 or \"95%\"".to_owned()),
        ));
    }
    let delta_digits = complement(frac);
    if frac.as_bytes()[0] < b'5' {
        // 0 < c < 0.5: almost surely δ written where the confidence belongs.
        let meant = if percent {
            format!("\"{}%\"", percent_text("0", &delta_digits))
        } else {
            format!("0.{delta_digits}")
        };
        return Err((
            format!("a confidence of {written} is below 0.5 and is refused"),
            Some(format!(
                "looks like an error budget (alpha); confidence is 1 - alpha: did you mean {meant}?"
            )),
        ));
    }
    let value = format!("0.{frac}")
        .parse::<f64>()
        .map_err(|_| (format!("{EXPECTED}, found {written}"), None))?;
    let delta = format!("0.{delta_digits}")
        .parse::<f64>()
        .map_err(|_| (format!("{EXPECTED}, found {written}"), None))?;
    Ok(Confidence {
        value,
        delta,
        percent: percent_text("0", frac),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // The printed percentage comes from the digits as written, never from float arithmetic.
    #[test]
    fn percent_text_is_carried_for_both_styles() {
        assert_eq!(
            parse_confidence("0.999", Style::Plain).unwrap().percent,
            "99.9"
        );
        assert_eq!(
            parse_confidence("99.9%", Style::Plain).unwrap().percent,
            "99.9"
        );
        assert_eq!(
            parse_confidence("0.95", Style::Plain).unwrap().percent,
            "95"
        );
    }

    #[test]
    fn complement_on_digits() {
        assert_eq!(complement("95"), "05");
        assert_eq!(complement("999999999999"), "000000000001");
        assert_eq!(complement("5"), "5");
        assert_eq!(complement("9"), "1");
        assert_eq!(complement("905"), "095");
    }

    #[test]
    fn percent_rendering() {
        assert_eq!(percent_text("0", "95"), "95");
        assert_eq!(percent_text("0", "999"), "99.9");
        assert_eq!(percent_text("0", "05"), "5");
        assert_eq!(percent_text("0", "5"), "50");
        assert_eq!(percent_text("0", "01667"), "1.667");
    }
}
