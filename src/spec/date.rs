//! Calendar dates written `YYYY-MM-DD`.

use std::fmt;

use serde::{Serialize, Serializer};

/// A valid date of the proleptic Gregorian calendar, years 1 to 9999.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Date {
    /// 1..=9999.
    pub year: i32,
    /// 1..=12.
    pub month: u8,
    /// 1..=the length of the month.
    pub day: u8,
}

impl Date {
    /// Parses `YYYY-MM-DD` exactly (four, two and two digits) and checks that the day exists.
    /// The error says why the text is not a date: [`DateError::Shape`] when it is not written
    /// `YYYY-MM-DD` at all, [`DateError::NoSuchDay`] when it is but names no calendar day.
    pub fn parse(text: &str) -> Result<Date, DateError> {
        let b = text.as_bytes();
        let shape_ok = b.len() == 10
            && b[4] == b'-'
            && b[7] == b'-'
            && b.iter()
                .enumerate()
                .all(|(i, c)| i == 4 || i == 7 || c.is_ascii_digit());
        if !shape_ok {
            return Err(DateError::Shape);
        }
        let num = |r: std::ops::Range<usize>| {
            text[r]
                .bytes()
                .fold(0u32, |acc, c| acc * 10 + u32::from(c - b'0'))
        };
        let (year, month, day) = (num(0..4), num(5..7), num(8..10));
        if year == 0 {
            return Err(DateError::NoSuchDay("there is no year 0000".to_owned()));
        }
        if !(1..=12).contains(&month) {
            return Err(DateError::NoSuchDay(format!(
                "there is no month {month:02}"
            )));
        }
        let length = days_in_month(year, month);
        if day == 0 || day > length {
            return Err(DateError::NoSuchDay(format!(
                "month {month:02} of {year:04} has {length} days"
            )));
        }
        // All three fit: year ≤ 9999, month ≤ 12, day ≤ 31.
        Ok(Date {
            year: year as i32,
            month: month as u8,
            day: day as u8,
        })
    }
}

/// Why a text is not a [`Date`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum DateError {
    /// Not written as `YYYY-MM-DD`.
    Shape,
    /// Written as a date, but no such day exists; the reason, e.g. "month 02 of 2026 has 28 days".
    NoSuchDay(String),
}

impl fmt::Display for DateError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DateError::Shape => f.write_str("expected a date written YYYY-MM-DD"),
            DateError::NoSuchDay(why) => f.write_str(why),
        }
    }
}

fn days_in_month(year: u32, month: u32) -> u32 {
    let leap = (year.is_multiple_of(4) && !year.is_multiple_of(100)) || year.is_multiple_of(400);
    match month {
        2 if leap => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

impl fmt::Display for Date {
    /// ISO 8601: `2026-11-30`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:04}-{:02}-{:02}", self.year, self.month, self.day)
    }
}

impl Serialize for Date {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

#[cfg(test)]
mod tests {
    use super::Date;

    // Gregorian leap-year rule (common practice): 2024 and 2000 are leap years, 1900 and 2026 not.
    #[test]
    fn calendar() {
        assert_eq!(
            Date::parse("2026-11-30").map(|d| d.to_string()),
            Ok("2026-11-30".to_owned())
        );
        assert!(Date::parse("2026-02-29").is_err());
        assert!(Date::parse("2024-02-29").is_ok());
        assert!(Date::parse("2000-02-29").is_ok());
        assert!(Date::parse("1900-02-29").is_err());
        assert!(Date::parse("2026-04-31").is_err());
        assert!(Date::parse("2026-13-01").is_err());
        assert!(Date::parse("2026-1-01").is_err());
        assert!(Date::parse("0000-01-01").is_err());
    }
}
