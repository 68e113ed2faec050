//! Points in time for builds and passes.
//!
//! Stored as whole seconds since the Unix epoch (UTC) and written to files as
//! an RFC 3339 string in UTC ("2025-03-14T09:30:00Z"), which a person can read
//! in the RON file and a spreadsheet can parse from the CSV. Only
//! `std::time::SystemTime` is used: the calendar conversion is the proleptic
//! Gregorian day count (H. Hinnant, "chrono-Compatible Low-Level Date
//! Algorithms", 2013). Reading accepts a `Z` or a numeric `±hh:mm` offset and
//! an optional fraction of a second, which is dropped.

use std::fmt;
use std::str::FromStr;
use std::time::{Duration, SystemTime, UNIX_EPOCH};

use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// A moment in time, to the second, in UTC.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Timestamp {
    unix_seconds: i64,
}

/// Why a text is not an RFC 3339 time.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("\"{text}\" is not a time of the form 2025-03-14T09:30:00Z")]
pub struct TimestampError {
    text: String,
}

impl Timestamp {
    /// The current time of the system clock (the epoch if the clock is set
    /// before 1970).
    pub fn now() -> Self {
        Self::from_system_time(SystemTime::now())
    }

    /// Whole seconds since 1970-01-01T00:00:00Z (negative before it).
    pub fn from_unix_seconds(unix_seconds: i64) -> Self {
        Self { unix_seconds }
    }

    /// Converts a `SystemTime`, dropping the fraction of a second.
    pub fn from_system_time(time: SystemTime) -> Self {
        let unix_seconds = match time.duration_since(UNIX_EPOCH) {
            Ok(after) => i64::try_from(after.as_secs()).unwrap_or(i64::MAX),
            Err(before) => -i64::try_from(before.duration().as_secs()).unwrap_or(i64::MAX),
        };
        Self { unix_seconds }
    }

    /// Whole seconds since 1970-01-01T00:00:00Z.
    pub fn unix_seconds(self) -> i64 {
        self.unix_seconds
    }

    /// The same moment as a `SystemTime`.
    pub fn to_system_time(self) -> SystemTime {
        let magnitude = Duration::from_secs(self.unix_seconds.unsigned_abs());
        if self.unix_seconds >= 0 {
            UNIX_EPOCH + magnitude
        } else {
            UNIX_EPOCH - magnitude
        }
    }

    /// Builds a time from a UTC calendar date and clock time; `None` when a
    /// field is out of range (month 13, hour 24, 31 April ...).
    pub fn from_utc(
        year: i64,
        month: u32,
        day: u32,
        hour: u32,
        minute: u32,
        second: u32,
    ) -> Option<Self> {
        let month_ok = (1..=12).contains(&month);
        if !month_ok || day == 0 || day > days_in_month(year, month) {
            return None;
        }
        if hour > 23 || minute > 59 || second > 59 {
            return None;
        }
        let days = days_from_civil(year, month, day);
        let seconds = i64::from(hour) * 3600 + i64::from(minute) * 60 + i64::from(second);
        days.checked_mul(86_400)?
            .checked_add(seconds)
            .map(Self::from_unix_seconds)
    }
}

impl fmt::Display for Timestamp {
    /// RFC 3339 in UTC: `2025-03-14T09:30:00Z`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let days = self.unix_seconds.div_euclid(86_400);
        let second_of_day = self.unix_seconds.rem_euclid(86_400);
        let (year, month, day) = civil_from_days(days);
        write!(
            f,
            "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
            second_of_day / 3600,
            (second_of_day / 60) % 60,
            second_of_day % 60
        )
    }
}

impl FromStr for Timestamp {
    type Err = TimestampError;

    fn from_str(text: &str) -> Result<Self, Self::Err> {
        parse_rfc3339(text).ok_or_else(|| TimestampError {
            text: text.to_string(),
        })
    }
}

impl Serialize for Timestamp {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

impl<'de> Deserialize<'de> for Timestamp {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let text = String::deserialize(deserializer)?;
        text.parse().map_err(serde::de::Error::custom)
    }
}

fn is_leap_year(year: i64) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

fn days_in_month(year: i64, month: u32) -> u32 {
    match month {
        2 if is_leap_year(year) => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

/// Days since 1970-01-01 of a proleptic Gregorian date (Hinnant's algorithm).
fn days_from_civil(year: i64, month: u32, day: u32) -> i64 {
    let year = if month <= 2 { year - 1 } else { year };
    let era = year.div_euclid(400);
    let year_of_era = year - era * 400;
    let month = i64::from(month);
    let shifted_month = if month > 2 { month - 3 } else { month + 9 };
    let day_of_year = (153 * shifted_month + 2) / 5 + i64::from(day) - 1;
    let day_of_era = year_of_era * 365 + year_of_era / 4 - year_of_era / 100 + day_of_year;
    era * 146_097 + day_of_era - 719_468
}

/// The date of a day count since 1970-01-01 (inverse of `days_from_civil`).
fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let day_of_era = z - era * 146_097;
    let year_of_era =
        (day_of_era - day_of_era / 1460 + day_of_era / 36_524 - day_of_era / 146_096) / 365;
    let day_of_year = day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);
    let shifted_month = (5 * day_of_year + 2) / 153;
    let day = day_of_year - (153 * shifted_month + 2) / 5 + 1;
    let month = if shifted_month < 10 {
        shifted_month + 3
    } else {
        shifted_month - 9
    };
    let year = year_of_era + era * 400 + i64::from(month <= 2);
    // Both are small and positive by construction.
    (year, month as u32, day as u32)
}

fn parse_rfc3339(text: &str) -> Option<Timestamp> {
    let bytes = text.as_bytes();
    if bytes.len() < 20 || bytes[4] != b'-' || bytes[7] != b'-' {
        return None;
    }
    if !matches!(bytes[10], b'T' | b't' | b' ') || bytes[13] != b':' || bytes[16] != b':' {
        return None;
    }
    let number = |range: std::ops::Range<usize>| -> Option<u32> {
        let part = text.get(range)?;
        if part.bytes().all(|b| b.is_ascii_digit()) {
            part.parse().ok()
        } else {
            None
        }
    };
    let year = i64::from(number(0..4)?);
    let base = Timestamp::from_utc(
        year,
        number(5..7)?,
        number(8..10)?,
        number(11..13)?,
        number(14..16)?,
        number(17..19)?,
    )?;
    let mut rest = text.get(19..)?;
    if let Some(fraction) = rest.strip_prefix('.') {
        let digits = fraction.bytes().take_while(u8::is_ascii_digit).count();
        if digits == 0 {
            return None;
        }
        rest = fraction.get(digits..)?;
    }
    let offset_seconds = parse_offset(rest)?;
    Some(Timestamp::from_unix_seconds(
        base.unix_seconds.checked_sub(offset_seconds)?,
    ))
}

/// `Z` or `±hh:mm`, as seconds east of UTC.
fn parse_offset(text: &str) -> Option<i64> {
    if text == "Z" || text == "z" {
        return Some(0);
    }
    let bytes = text.as_bytes();
    if bytes.len() != 6 || bytes[3] != b':' {
        return None;
    }
    let sign = match bytes[0] {
        b'+' => 1,
        b'-' => -1,
        _ => return None,
    };
    let hours: i64 = text.get(1..3)?.parse().ok()?;
    let minutes: i64 = text.get(4..6)?.parse().ok()?;
    if hours > 23 || minutes > 59 {
        return None;
    }
    Some(sign * (hours * 3600 + minutes * 60))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn epoch_and_known_dates_format_as_rfc3339() {
        assert_eq!(
            Timestamp::from_unix_seconds(0).to_string(),
            "1970-01-01T00:00:00Z"
        );
        // 2000-03-01 is day 11017 after the epoch (common practice: `date -d @951868800`).
        assert_eq!(
            Timestamp::from_unix_seconds(951_868_800).to_string(),
            "2000-03-01T00:00:00Z"
        );
        assert_eq!(
            Timestamp::from_unix_seconds(1_700_000_000).to_string(),
            "2023-11-14T22:13:20Z"
        );
        assert_eq!(
            Timestamp::from_unix_seconds(-1).to_string(),
            "1969-12-31T23:59:59Z"
        );
    }

    #[test]
    fn parsing_inverts_formatting_and_applies_offsets() {
        for seconds in [
            -86_401,
            -1,
            0,
            59,
            951_868_799,
            1_700_000_000,
            4_102_444_800,
        ] {
            let time = Timestamp::from_unix_seconds(seconds);
            assert_eq!(time.to_string().parse::<Timestamp>(), Ok(time));
        }
        let with_offset: Timestamp = "2023-11-15T00:13:20.25+02:00".parse().unwrap();
        assert_eq!(with_offset.unix_seconds(), 1_700_000_000);
    }

    #[test]
    fn impossible_dates_are_refused() {
        for text in [
            "2023-02-29T00:00:00Z",
            "2023-13-01T00:00:00Z",
            "2023-04-31T00:00:00Z",
            "2023-01-01T24:00:00Z",
            "2023-01-01T00:00:00",
            "yesterday",
            "",
        ] {
            assert!(text.parse::<Timestamp>().is_err(), "{text}");
        }
        assert!("2024-02-29T00:00:00Z".parse::<Timestamp>().is_ok());
    }

    #[test]
    fn system_time_round_trip_keeps_whole_seconds() {
        let time = Timestamp::from_unix_seconds(1_234_567_890);
        assert_eq!(Timestamp::from_system_time(time.to_system_time()), time);
    }
}
