//! The calendar date printed in `report.html`.
//!
//! Reports must come out byte for byte the same whenever the same inputs are run again (an
//! interrupted and resumed batch included), so the date is never the clock's: it is the newest
//! modification time among the workflow file and every grid file it names (the day the inputs
//! were last touched), unless the caller gives one. Days since 1970-01-01 become a proleptic
//! Gregorian date by the era decomposition (400-year eras of 146 097 days; H. Hinnant,
//! "chrono-Compatible Low-Level Date Algorithms", `civil_from_days`).

use std::fmt;
use std::str::FromStr;
use std::time::SystemTime;

/// A calendar date (UTC, proleptic Gregorian).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct ReportDate {
    /// Year, e.g. 2025.
    pub year: i64,
    /// Month, 1–12.
    pub month: u8,
    /// Day of the month, 1–31.
    pub day: u8,
}

fn leap(year: i64) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

fn days_in_month(year: i64, month: u8) -> u8 {
    match month {
        2 if leap(year) => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    }
}

impl ReportDate {
    /// The UTC date of an instant given in seconds since 1970-01-01T00:00:00Z.
    pub fn from_unix_seconds(seconds: i64) -> Self {
        let z = seconds.div_euclid(86_400) + 719_468; // days since 0000-03-01
        let era = z.div_euclid(146_097);
        let doe = z - era * 146_097; // day of the era, 0..146096
        let yoe = (doe - doe / 1_460 + doe / 36_524 - doe / 146_096) / 365; // year of the era
        let doy = doe - (365 * yoe + yoe / 4 - yoe / 100); // day of the March-based year
        let mp = (5 * doy + 2) / 153; // March = 0
        let day = (doy - (153 * mp + 2) / 5 + 1) as u8;
        let month = if mp < 10 { mp + 3 } else { mp - 9 } as u8;
        let year = yoe + era * 400 + i64::from(month <= 2);
        ReportDate { year, month, day }
    }

    /// The UTC date of a file time.
    pub fn from_system_time(t: SystemTime) -> Self {
        let seconds = match t.duration_since(SystemTime::UNIX_EPOCH) {
            Ok(d) => i64::try_from(d.as_secs()).unwrap_or(i64::MAX / 2),
            Err(before) => -i64::try_from(before.duration().as_secs()).unwrap_or(i64::MAX / 2) - 1,
        };
        Self::from_unix_seconds(seconds)
    }

    /// The date of the newest modification time among `paths` (files that cannot be read are
    /// skipped; `None` when none can).
    pub fn newest_modification<'a>(paths: impl IntoIterator<Item = &'a std::path::Path>) -> Option<Self> {
        paths
            .into_iter()
            .filter_map(|p| std::fs::metadata(p).and_then(|m| m.modified()).ok())
            .max()
            .map(Self::from_system_time)
    }
}

impl fmt::Display for ReportDate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:04}-{:02}-{:02}", self.year, self.month, self.day)
    }
}

impl FromStr for ReportDate {
    type Err = String;

    /// `YYYY-MM-DD`, a real calendar day.
    fn from_str(s: &str) -> Result<Self, String> {
        let bad = || format!("invalid date `{s}`: expected YYYY-MM-DD, a calendar day such as 2025-03-14");
        let parts: Vec<&str> = s.trim().split('-').collect();
        let [y, m, d] = parts.as_slice() else { return Err(bad()) };
        if y.len() != 4 || m.len() != 2 || d.len() != 2 || ![y, m, d].iter().all(|p| p.bytes().all(|b| b.is_ascii_digit())) {
            return Err(bad());
        }
        let (year, month, day): (i64, u8, u8) = (y.parse().map_err(|_| bad())?, m.parse().map_err(|_| bad())?, d.parse().map_err(|_| bad())?);
        if !(1..=12).contains(&month) || day == 0 || day > days_in_month(year, month) {
            return Err(bad());
        }
        Ok(ReportDate { year, month, day })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unix_seconds_give_utc_dates() {
        // reference: GNU coreutils `date -u -d @SECONDS +%F`.
        for (seconds, date) in [
            (0, "1970-01-01"),
            (951_782_400, "2000-02-29"),
            (1_700_000_000, "2023-11-14"),
            (-86_400, "1969-12-31"),
            (4_107_542_400, "2100-03-01"),
            (1_709_251_199, "2024-02-29"),
        ] {
            assert_eq!(ReportDate::from_unix_seconds(seconds).to_string(), date, "{seconds}");
        }
    }

    #[test]
    fn every_day_follows_the_one_before() {
        // Consecutive days over four centuries step through the calendar one day at a time.
        let mut prev = ReportDate::from_unix_seconds(-80 * 365 * 86_400);
        for day in (-80 * 365 + 1)..(320 * 365) {
            let next = ReportDate::from_unix_seconds(day * 86_400 + 43_200);
            let expected = if prev.day < days_in_month(prev.year, prev.month) {
                ReportDate { day: prev.day + 1, ..prev }
            } else if prev.month < 12 {
                ReportDate { month: prev.month + 1, day: 1, ..prev }
            } else {
                ReportDate { year: prev.year + 1, month: 1, day: 1 }
            };
            assert_eq!(next, expected);
            prev = next;
        }
    }

    #[test]
    fn dates_parse_strictly() {
        assert_eq!("2024-02-29".parse::<ReportDate>(), Ok(ReportDate { year: 2024, month: 2, day: 29 }));
        for bad in ["2023-02-29", "2024-13-01", "2024-1-01", "24-01-01", "2024-01-00", "2024/01/01", "today", "2024-01-01-01"] {
            let e = bad.parse::<ReportDate>().unwrap_err();
            assert!(e.contains(bad) && e.contains("YYYY-MM-DD"), "{bad}: {e}");
        }
    }
}
