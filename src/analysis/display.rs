//! Printed forms of numbers. A number and its unit are joined by a no-break space so that a
//! line never breaks between them. Rates are shown in percent with three significant digits, rounded
//! outwards: an upper bound up and a lower bound down, so that a printed figure is never less
//! conservative than the computed one (comparisons with the limit always use unrounded values).

/// Direction in which a printed figure may deviate from the exact value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rounding {
    /// Printed value ≥ exact value (upper bounds).
    Up,
    /// Printed value ≤ exact value (lower bounds).
    Down,
    /// Nearest (observed rates, which guarantee nothing).
    Nearest,
}

const SIGNIFICANT: i32 = 3;

/// A rate in [0, 1] as a percentage string, e.g. `0.423 %`, rounded as asked.
pub fn percent(rate: f64, rounding: Rounding) -> String {
    let value = rate * 100.0;
    if value == 0.0 {
        return "0\u{a0}%".to_string();
    }
    if value >= 100.0 {
        return "100\u{a0}%".to_string();
    }
    let exponent = value.abs().log10().floor() as i32;
    let scale_exp = SIGNIFICANT - 1 - exponent;
    let scaled = value * 10f64.powi(scale_exp);
    let mut digits = match rounding {
        Rounding::Up => scaled.ceil(),
        Rounding::Down => scaled.floor(),
        Rounding::Nearest => scaled.round(),
    };
    // The product above is itself rounded; step once more when it landed on the wrong side.
    loop {
        let candidate = digits / 10f64.powi(scale_exp);
        let ok = match rounding {
            Rounding::Up => candidate >= value,
            Rounding::Down => candidate <= value,
            Rounding::Nearest => true,
        };
        if ok {
            break;
        }
        digits += if rounding == Rounding::Up { 1.0 } else { -1.0 };
    }
    let mut scale_exp = scale_exp;
    if digits >= 10f64.powi(SIGNIFICANT) {
        // 999.6 rounded up to 1000: drop the extra digit, which is a zero.
        digits /= 10.0;
        scale_exp -= 1;
    }
    if digits / 10f64.powi(scale_exp) >= 100.0 {
        return "100\u{a0}%".to_string();
    }
    let text = render(digits, scale_exp);
    format!("{text}\u{a0}%")
}

/// `digits · 10^(−scale_exp)` as decimal text, switching to a power-of-ten form for very small
/// values so that tables stay narrow.
fn render(digits: f64, scale_exp: i32) -> String {
    let value = digits / 10f64.powi(scale_exp);
    if value >= 1e-3 {
        let decimals = scale_exp.max(0) as usize;
        let text = format!("{value:.decimals$}");
        return text;
    }
    // digits has SIGNIFICANT digits (it may have rolled over to one more, e.g. 1000).
    let mut mantissa = digits;
    let mut exp10 = -scale_exp;
    while mantissa >= 10f64.powi(SIGNIFICANT) {
        mantissa /= 10.0;
        exp10 += 1;
    }
    let lead = mantissa / 10f64.powi(SIGNIFICANT - 1);
    exp10 += SIGNIFICANT - 1;
    format!(
        "{lead:.prec$}\u{a0}×\u{a0}10{}",
        superscript(exp10),
        prec = (SIGNIFICANT - 1) as usize
    )
}

/// An integer in Unicode superscript digits, for powers of ten: −7 → `⁻⁷`.
pub fn superscript(n: i32) -> String {
    let mut out = String::new();
    if n < 0 {
        out.push('⁻');
    }
    for c in n.unsigned_abs().to_string().chars() {
        out.push(match c {
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            _ => '⁹',
        });
    }
    out
}

/// A limit as written (shortest exact decimal of the f64), in percent: 0.01 → `1 %`.
pub fn limit_percent(limit: f64) -> String {
    if limit > 0.0 && limit * 100.0 < 1e-3 {
        // Shortest round-trip digits of the limit as written, shifted two decades for percent.
        let text = format!("{limit:e}");
        let (mantissa, exp) = text.split_once('e').unwrap_or((&text, "0"));
        let exp: i32 = exp.parse().unwrap_or(0) + 2;
        return format!("{mantissa}\u{a0}×\u{a0}10{}\u{a0}%", superscript(exp));
    }
    let text = format!("{:.10}", limit * 100.0);
    let trimmed = text.trim_end_matches('0').trim_end_matches('.');
    format!("{trimmed}\u{a0}%")
}

/// A probability such as δ with four significant digits, rounded up (a printed risk is never
/// smaller than the true one), in plain decimals down to 0.0001 and in exponent form below:
/// 0.05 → `0.05`, 0.05/3 → `0.01667`, 1e-12 → `1e-12`.
pub fn probability(p: f64) -> String {
    if p <= 0.0 || !p.is_finite() {
        return format!("{p}");
    }
    let exponent = p.log10().floor() as i32;
    let scale_exp = 3 - exponent;
    let mut digits = (p * 10f64.powi(scale_exp) * (1.0 - 1e-15)).ceil();
    while digits / 10f64.powi(scale_exp) < p {
        digits += 1.0;
    }
    let value = digits / 10f64.powi(scale_exp);
    if p >= 1e-4 {
        let decimals = scale_exp.max(0) as usize;
        let text = format!("{value:.decimals$}");
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        let text = format!("{value:.3e}");
        let (mantissa, exp) = text.split_once('e').unwrap_or((&text, "0"));
        let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
        format!("{mantissa}e{exp}")
    }
}

/// A risk in percent with four significant digits, rounded up: 0.05 → `5 %`.
pub fn risk_percent(p: f64) -> String {
    let text = probability(p);
    let shifted = match text.split_once('e') {
        Some((mantissa, exp)) => {
            let exp: i32 = exp.parse().unwrap_or(0) + 2;
            format!("{mantissa}e{exp}")
        }
        None => {
            let (int, frac) = text.split_once('.').unwrap_or((&text, ""));
            crate::spec::confidence::percent_text(int, frac)
        }
    };
    format!("{shifted}\u{a0}%")
}

/// A value in data units with four significant digits, rounded as asked, and its unit if any:
/// 1.23456 m rounded up → `1.235 m`. Works for negative values (ranges may start below zero).
pub fn quantity(value: f64, unit: Option<&str>, rounding: Rounding) -> String {
    let text = decimal_significant(value, 4, rounding);
    match unit {
        Some(u) if !u.is_empty() => format!("{text}\u{a0}{u}"),
        _ => text,
    }
}

/// A value as written in the spec (shortest round-trip decimal) with its unit, if any.
pub fn quantity_exact(value: f64, unit: Option<&str>) -> String {
    match unit {
        Some(u) if !u.is_empty() => format!("{value}\u{a0}{u}"),
        _ => format!("{value}"),
    }
}

/// `value` in plain decimals with `sig` significant digits, never on the wrong side of `value`
/// for directed rounding.
fn decimal_significant(value: f64, sig: i32, rounding: Rounding) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{}", if value == 0.0 { 0.0 } else { value });
    }
    let exponent = value.abs().log10().floor() as i32;
    // Cap the decimals so that tiny values print as 0.000000000001 rather than overflowing.
    let scale_exp = (sig - 1 - exponent).min(15);
    let scale = 10f64.powi(scale_exp);
    let mut digits = match rounding {
        Rounding::Up => (value * scale).ceil(),
        Rounding::Down => (value * scale).floor(),
        Rounding::Nearest => (value * scale).round(),
    };
    loop {
        let candidate = digits / scale;
        let ok = match rounding {
            Rounding::Up => candidate >= value,
            Rounding::Down => candidate <= value,
            Rounding::Nearest => true,
        };
        if ok {
            break;
        }
        digits += if rounding == Rounding::Up { 1.0 } else { -1.0 };
    }
    let shown = digits / scale;
    let decimals = scale_exp.max(0) as usize;
    let text = format!("{shown:.decimals$}");
    if text.starts_with('-') && text.trim_start_matches(['-', '0', '.']).is_empty() {
        return text.trim_start_matches('-').to_string();
    }
    text
}

/// A whole number with thousands separators: 4600 → `4,600`.
pub fn count(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plain(s: String) -> String {
        s.replace('\u{a0}', " ")
    }

    // Outward rounding rule of DESIGN.md §6 (printed upper bounds round up, lower bounds down).
    #[test]
    fn upper_bounds_round_up_lower_round_down() {
        assert_eq!(
            plain(percent(0.004223226068808206, Rounding::Up)),
            "0.423 %"
        );
        assert_eq!(
            plain(percent(0.004223226068808206, Rounding::Down)),
            "0.422 %"
        );
        assert_eq!(
            plain(percent(0.0015059311140814427, Rounding::Down)),
            "0.150 %"
        );
        assert_eq!(plain(percent(0.2, Rounding::Up)), "20.0 %");
        assert_eq!(plain(percent(0.99999, Rounding::Up)), "100 %");
        assert_eq!(plain(percent(0.0, Rounding::Up)), "0 %");
    }

    // Same outward rule below 0.001 %: 2.9957e-9 is 2.9957 × 10⁻⁷ %, up to 3.00, down to 2.99.
    #[test]
    fn tiny_rates_use_powers_of_ten() {
        assert_eq!(plain(percent(2.9957e-9, Rounding::Up)), "3.00 × 10⁻⁷ %");
        assert_eq!(plain(percent(2.9957e-9, Rounding::Down)), "2.99 × 10⁻⁷ %");
    }

    // Expected strings follow from the inputs by decimal arithmetic alone (thousands grouped in
    // threes, δ rounded up at four significant digits).
    #[test]
    fn counts_and_confidences() {
        assert_eq!(count(4600), "4,600");
        assert_eq!(count(1_000_000_000_000_000), "1,000,000,000,000,000");
        assert_eq!(count(999), "999");
        assert_eq!(plain(limit_percent(0.01)), "1 %");
        assert_eq!(plain(limit_percent(0.003)), "0.3 %");
        assert_eq!(plain(limit_percent(1e-9)), "1 × 10⁻⁷ %");
        assert_eq!(plain(limit_percent(2.5e-8)), "2.5 × 10⁻⁶ %");
        assert_eq!(probability(0.05), "0.05");
        assert_eq!(probability(0.05 / 3.0), "0.01667");
        assert_eq!(probability(0.025), "0.025");
        assert_eq!(probability(1e-12), "1e-12");
        assert_eq!(probability(2.5e-7), "2.5e-7");
        assert_eq!(probability(0.123456), "0.1235");
        assert_eq!(plain(risk_percent(0.05)), "5 %");
        assert_eq!(plain(risk_percent(0.05 / 3.0)), "1.667 %");
        assert_eq!(plain(risk_percent(0.0005)), "0.05 %");
        assert_eq!(plain(risk_percent(1e-12)), "1e-10 %");
    }

    // Four significant digits by decimal arithmetic, outward for directed rounding.
    #[test]
    fn quantities_in_data_units() {
        assert_eq!(plain(quantity(1.23456, Some("m"), Rounding::Up)), "1.235 m");
        assert_eq!(
            plain(quantity(1.23456, Some("m"), Rounding::Down)),
            "1.234 m"
        );
        assert_eq!(quantity(-0.012341, None, Rounding::Up), "-0.01234");
        assert_eq!(quantity(-0.012341, None, Rounding::Down), "-0.01235");
        assert_eq!(quantity(1234.5, None, Rounding::Up), "1235");
        assert_eq!(quantity(2.5, None, Rounding::Up), "2.500");
        assert_eq!(plain(quantity_exact(0.35, Some("m"))), "0.35 m");
    }
}
