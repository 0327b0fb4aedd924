//! Hashes and dates that bind a result to its inputs: SHA-256 digests and the report date from
//! the spec or SOURCE_DATE_EPOCH, so the same inputs always give the same bytes.

use sha2::{Digest, Sha256};
use std::fmt;

/// Lowercase hexadecimal SHA-256 of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

/// Lowercase hexadecimal form of a byte string.
pub fn hex(bytes: &[u8]) -> String {
    const DIGITS: &[u8; 16] = b"0123456789abcdef";
    let mut out = String::with_capacity(bytes.len() * 2);
    for b in bytes {
        out.push(DIGITS[(b >> 4) as usize] as char);
        out.push(DIGITS[(b & 0xf) as usize] as char);
    }
    out
}

/// Where the report date came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DateSource {
    /// `study.date` in the spec.
    Spec,
    /// The SOURCE_DATE_EPOCH environment variable.
    SourceDateEpoch,
    /// The system clock (neither of the above was given).
    Clock,
}

impl DateSource {
    /// The name written in results.
    pub fn id(self) -> &'static str {
        match self {
            DateSource::Spec => "spec",
            DateSource::SourceDateEpoch => "SOURCE_DATE_EPOCH",
            DateSource::Clock => "clock",
        }
    }
}

/// A calendar date (proleptic Gregorian, UTC) used as the report date.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ReportDate {
    pub year: i32,
    pub month: u8,
    pub day: u8,
    pub source: DateSource,
}

impl ReportDate {
    /// ISO 8601 form, `YYYY-MM-DD`.
    pub fn iso(&self) -> String {
        format!("{:04}-{:02}-{:02}", self.year, self.month, self.day)
    }
}

/// SOURCE_DATE_EPOCH was set but is not a non-negative whole number of seconds.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BadSourceDateEpoch(pub String);

impl fmt::Display for BadSourceDateEpoch {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "SOURCE_DATE_EPOCH is `{}`, not a non-negative whole number of seconds since \
             1970-01-01 UTC",
            self.0
        )
    }
}

impl std::error::Error for BadSourceDateEpoch {}

/// Pick the report date: the spec's date, else SOURCE_DATE_EPOCH, else the clock reading
/// `now_unix_seconds` supplied by the caller (the library never reads the clock itself).
pub fn resolve_date(
    spec_date: Option<(i32, u8, u8)>,
    source_date_epoch: Option<&str>,
    now_unix_seconds: i64,
) -> Result<ReportDate, BadSourceDateEpoch> {
    // A malformed SOURCE_DATE_EPOCH is refused even when the spec's date wins, so that a broken
    // build environment is noticed rather than silently ignored.
    let epoch = match source_date_epoch {
        None => None,
        Some(text) => {
            let trimmed = text.trim();
            if trimmed.is_empty() || !trimmed.bytes().all(|b| b.is_ascii_digit()) {
                return Err(BadSourceDateEpoch(text.to_string()));
            }
            let seconds: i64 = trimmed
                .parse()
                .map_err(|_| BadSourceDateEpoch(text.to_string()))?;
            Some(seconds)
        }
    };
    if let Some((year, month, day)) = spec_date {
        return Ok(ReportDate {
            year,
            month,
            day,
            source: DateSource::Spec,
        });
    }
    if let Some(seconds) = epoch {
        let (year, month, day) = civil_from_unix(seconds);
        return Ok(ReportDate {
            year,
            month,
            day,
            source: DateSource::SourceDateEpoch,
        });
    }
    let (year, month, day) = civil_from_unix(now_unix_seconds);
    Ok(ReportDate {
        year,
        month,
        day,
        source: DateSource::Clock,
    })
}

/// A Unix time as RFC 3339 in UTC, to the second: `2026-12-02T09:30:00Z`.
pub fn utc_timestamp(seconds: i64) -> String {
    let (y, m, d) = civil_from_unix(seconds);
    let s = seconds.rem_euclid(86_400);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        s / 3600,
        s / 60 % 60,
        s % 60
    )
}

/// UTC calendar date of a Unix time, by counting 400-year eras of 146 097 days.
pub fn civil_from_unix(seconds: i64) -> (i32, u8, u8) {
    let days = seconds.div_euclid(86_400);
    // Shift the epoch to 0000-03-01 so that the leap day falls at the end of each year.
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let day_of_era = z.rem_euclid(146_097);
    let year_of_era =
        (day_of_era - day_of_era / 1460 + day_of_era / 36_524 - day_of_era / 146_096) / 365;
    let day_of_year = day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);
    let month_index = (5 * day_of_year + 2) / 153;
    let day = (day_of_year - (153 * month_index + 2) / 5 + 1) as u8;
    let month = if month_index < 10 {
        month_index + 3
    } else {
        month_index - 9
    } as u8;
    let year = year_of_era + era * 400 + i64::from(month <= 2);
    (year as i32, month, day)
}

/// SHA-256 of a spec's acceptance criteria: the `claim` section, the `plan` section (without
/// `plan.registered`, which records this very digest) and, unless it is the default single
/// planned look, the look plan (`looks.mode`, `planned`, `spending`).
///
/// The digest is taken over a fixed JSON form of the parsed values (confidence as written), so
/// comments, key order and layout of the YAML do not change it, while any change to what is
/// claimed or planned does.
pub fn criteria_sha256(spec: &crate::spec::Spec) -> String {
    let c = &spec.claim;
    let plan = spec.plan.as_ref().map(|p| {
        serde_json::json!({
            "assumed_rate": p.assumed_rate,
            "assumed_sd": p.assumed_sd,
            "pass_probability": p.pass_probability,
            "allowed_events": p.allowed_events,
        })
    });
    let side = match c.side {
        crate::spec::Side::Upper => "upper",
        crate::spec::Side::Lower => "lower",
        crate::spec::Side::TwoSided => "two-sided",
    };
    let scope = match c.scope {
        crate::spec::Scope::Each => "each",
        crate::spec::Scope::All => "all",
        crate::spec::Scope::Best => "best",
    };
    // serde_json's default map keeps keys sorted, so this text is canonical.
    let mut value = serde_json::json!({
        "format": "surety-criteria/1",
        "claim": {
            "quantity": c.quantity,
            "side": side,
            "limit": c.limit,
            "confidence": c.confidence_text,
            "scope": scope,
        },
        "plan": plan,
    });
    // How often the data will be looked at is a criterion too; the single planned look is the
    // default and leaves the digest as it was before looks could be planned.
    let l = &spec.looks;
    if l.mode != crate::spec::LookMode::Planned || l.planned != 1 {
        value["looks"] = serde_json::json!({
            "mode": serde_json::to_value(l.mode).unwrap_or_default(),
            "planned": l.planned,
            "spending": serde_json::to_value(&l.spending).unwrap_or_default(),
        });
    }
    sha256_hex(value.to_string().as_bytes())
}

/// SHA-256 identifying a look: the claim's numbers, the outcome, the dependence model, the
/// look plan, the primary method and the data (inline counts or summaries as written, or the
/// digest of every data file and the columns read). Two runs with the same key analyse the
/// same data the same way, so the second is a re-issue of the first; a change of wording
/// (title, quantity, notes) leaves the key alone.
pub fn look_key(
    spec: &crate::spec::Spec,
    primary: &str,
    inputs: &[crate::data::FileInput],
) -> String {
    let c = &spec.claim;
    let data = match &spec.data.source {
        crate::spec::DataSource::File(_) => serde_json::json!({
            "files": inputs.iter().map(|f| f.sha256.clone()).collect::<Vec<_>>(),
            "column": spec.data.column,
            "arm_column": spec.data.arm_column,
            "cluster_column": spec.data.cluster_column,
            "order_column": spec.data.order_column,
        }),
        other => serde_json::to_value(other).unwrap_or(serde_json::Value::Null),
    };
    let value = serde_json::json!({
        "format": "surety-look-key/1",
        "claim": {
            "side": serde_json::to_value(c.side).unwrap_or_default(),
            "limit": c.limit,
            "confidence": c.confidence_text,
            "scope": serde_json::to_value(c.scope).unwrap_or_default(),
        },
        "outcome": {
            "type": serde_json::to_value(spec.outcome.kind).unwrap_or_default(),
            "range": spec.outcome.range,
        },
        "dependence": {
            "model": serde_json::to_value(spec.dependence.model).unwrap_or_default(),
            "m": spec.dependence.m,
        },
        "looks": serde_json::to_value(&spec.looks).unwrap_or_default(),
        "method": primary,
        "data": data,
    });
    sha256_hex(value.to_string().as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    // 1e9 s after the Unix epoch is 2001-09-09 01:46:40 UTC (common practice: the "billennium").
    #[test]
    fn timestamps_are_rfc3339_utc() {
        assert_eq!(utc_timestamp(1_000_000_000), "2001-09-09T01:46:40Z");
        assert_eq!(utc_timestamp(0), "1970-01-01T00:00:00Z");
    }

    // FIPS 180-4 / NIST example vector: SHA-256("abc").
    #[test]
    fn sha256_of_abc() {
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    // Unix times of known dates (common practice: `date -u -d @N`).
    #[test]
    fn unix_times_to_dates() {
        assert_eq!(civil_from_unix(0), (1970, 1, 1));
        assert_eq!(civil_from_unix(951_782_400), (2000, 2, 29));
        assert_eq!(civil_from_unix(1_764_460_800), (2025, 11, 30));
        assert_eq!(civil_from_unix(-86_400), (1969, 12, 31));
    }

    #[test]
    fn malformed_source_date_epoch_is_refused() {
        for bad in ["", "-5", "12.5", "1e9", "yesterday", "99999999999999999999"] {
            assert!(resolve_date(None, Some(bad), 0).is_err(), "{bad}");
            assert!(
                resolve_date(Some((2026, 1, 1)), Some(bad), 0).is_err(),
                "{bad}"
            );
        }
        let d = resolve_date(None, Some("1764460800"), 0).unwrap();
        assert_eq!(d.iso(), "2025-11-30");
        assert_eq!(d.source, DateSource::SourceDateEpoch);
    }
}
