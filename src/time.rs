//! Time: typed instants in local standard time and in UTC, and the one civil calendar.
//!
//! Weather files stamp their rows in local standard time with a fixed UTC offset and no
//! daylight saving (notebooks-free-docs/conventions.md). The sun needs UTC. The two are
//! different numbers of seconds for the same instant, so each gets its own type:
//! [`LocalTime`] (seconds since 1970-01-01T00:00 on the site's clock, a naive calendar
//! time) and [`UtcTime`] (seconds since the Unix epoch). The only way from one to the other
//! is [`LocalTime::to_utc`] with the site's offset.
//!
//! The calendar is proleptic Gregorian in pure integer arithmetic (H. Hinnant,
//! "chrono-Compatible Low-Level Date Algorithms", public-domain `civil_from_days` and
//! `days_from_civil`), so no stamp can make it panic. It knows nothing of files or formats.

/// Seconds in a day.
pub const SECONDS_PER_DAY: i64 = 86_400;

/// A naive calendar time on the site's clock (local standard time, no daylight saving):
/// whole seconds since 1970-01-01T00:00 local.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct LocalTime(pub i64);

/// An instant in UTC: seconds since 1970-01-01T00:00Z (fractional where the sun needs it).
#[derive(Clone, Copy, Debug, PartialEq, PartialOrd)]
pub struct UtcTime(pub f64);

impl LocalTime {
    /// The same instant in UTC, given the site's offset from UTC in hours (east positive).
    pub fn to_utc(self, utc_offset_h: f64) -> UtcTime {
        UtcTime(self.0 as f64 - utc_offset_h * 3600.0)
    }

    /// Local midnight at the start of a calendar day.
    pub fn from_civil(year: i64, month: u32, day: u32) -> Self {
        LocalTime(days_from_civil(year, month, day) * SECONDS_PER_DAY)
    }

    /// (year, month 1..=12, day 1..=31) on the site's calendar.
    pub fn civil(self) -> (i64, u32, u32) {
        civil_from_days(self.0.div_euclid(SECONDS_PER_DAY))
    }

    /// Calendar year on the site's clock.
    pub fn year(self) -> i64 {
        self.civil().0
    }

    /// Month 1..=12 on the site's clock.
    pub fn month(self) -> u32 {
        self.civil().1
    }

    /// Hour of the day 0..=23 on the site's clock.
    pub fn hour(self) -> u32 {
        (self.0.rem_euclid(SECONDS_PER_DAY) / 3600) as u32
    }

    /// Day of the year 1..=366 on the site's clock.
    pub fn day_of_year(self) -> u32 {
        let (year, month, day) = self.civil();
        day_of_year(year, month, day)
    }

    /// True on a Saturday or Sunday (1970-01-01 was a Thursday).
    pub fn is_weekend(self) -> bool {
        // 0 = Monday … 6 = Sunday.
        let weekday = (self.0.div_euclid(SECONDS_PER_DAY) + 3).rem_euclid(7);
        weekday >= 5
    }

    /// Local midnight at the start of this calendar day.
    pub fn day_start(self) -> LocalTime {
        LocalTime(self.0.div_euclid(SECONDS_PER_DAY) * SECONDS_PER_DAY)
    }

    /// `YYYY-MM-DDTHH:MM`, with `:SS` only when the seconds are not zero.
    pub fn format(self) -> String {
        let (year, month, day) = self.civil();
        let secs = self.0.rem_euclid(SECONDS_PER_DAY);
        let (h, m, s) = (secs / 3600, secs % 3600 / 60, secs % 60);
        if s == 0 {
            format!("{year:04}-{month:02}-{day:02}T{h:02}:{m:02}")
        } else {
            format!("{year:04}-{month:02}-{day:02}T{h:02}:{m:02}:{s:02}")
        }
    }
}

impl UtcTime {
    /// Day of year (1 = 1 January, fractional) in UTC, for the Spencer series.
    pub fn day_of_year_frac(self) -> f64 {
        let day_start = (self.0 / SECONDS_PER_DAY as f64).floor();
        let (year, month, day) = civil_from_days(day_start as i64);
        f64::from(day_of_year(year, month, day)) + (self.0 / SECONDS_PER_DAY as f64 - day_start)
    }
}

/// Day of the year 1..=366 of a calendar date.
pub fn day_of_year(year: i64, month: u32, day: u32) -> u32 {
    const CUMULATIVE: [u32; 12] = [0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334];
    let leap = u32::from(month > 2 && is_leap_year(year));
    CUMULATIVE[(month.clamp(1, 12) - 1) as usize] + day + leap
}

/// True in a leap year of the Gregorian calendar.
pub fn is_leap_year(year: i64) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

/// Proleptic Gregorian (year, month, day) from days since 1970-01-01.
///
/// # Source
/// H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", `civil_from_days`.
pub fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let year = yoe + era * 400 + i64::from(month <= 2);
    (year, month, day)
}

/// Days since 1970-01-01 of a proleptic Gregorian date.
///
/// # Source
/// H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", `days_from_civil`.
pub fn days_from_civil(year: i64, month: u32, day: u32) -> i64 {
    let (month, day) = (i64::from(month), i64::from(day));
    let y = if month <= 2 { year - 1 } else { year };
    let era = y.div_euclid(400);
    let yoe = y.rem_euclid(400);
    let mp = (month + 9) % 12;
    let doy = (153 * mp + 2) / 5 + day - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::{Datelike, NaiveDate, Weekday};

    #[test]
    fn calendar_agrees_with_chrono_over_four_centuries_of_days() {
        // Source: chrono 0.4 as a general-purpose calendar oracle (independent code).
        let mut day = NaiveDate::from_ymd_opt(1900, 1, 1).unwrap();
        let end = NaiveDate::from_ymd_opt(2300, 12, 31).unwrap();
        while day <= end {
            let s = day.and_hms_opt(13, 0, 0).unwrap().and_utc().timestamp();
            let t = LocalTime(s);
            let (y, m, d) = t.civil();
            assert_eq!((y as i32, m, d), (day.year(), day.month(), day.day()));
            assert_eq!(t.day_of_year(), day.ordinal());
            assert_eq!(t.hour(), 13);
            assert_eq!(
                t.is_weekend(),
                matches!(day.weekday(), Weekday::Sat | Weekday::Sun)
            );
            assert_eq!(
                LocalTime::from_civil(y, m, d),
                t.day_start(),
                "days_from_civil inverts civil_from_days"
            );
            day = day.succ_opt().unwrap();
        }
    }

    #[test]
    fn local_to_utc_subtracts_the_offset() {
        // Source: definition of a fixed UTC offset (east positive), common practice.
        let noon_local = LocalTime::from_civil(2025, 6, 21).0 + 12 * 3600;
        assert_eq!(
            LocalTime(noon_local).to_utc(2.0).0,
            (noon_local - 7200) as f64
        );
        assert_eq!(
            LocalTime(noon_local).to_utc(-5.5).0,
            (noon_local + 19_800) as f64
        );
    }

    #[test]
    fn utc_day_of_year_is_fractional() {
        // Source: chrono 0.4 as oracle: 2025-01-01T00:00Z is 1 735 689 600 s; 2025-03-01 is
        // day 60 of a common year.
        assert!((UtcTime(1_735_689_600.0).day_of_year_frac() - 1.0).abs() < 1e-9);
        assert!((UtcTime(1_735_689_600.0 - 43_200.0).day_of_year_frac() - 366.5).abs() < 1e-9);
        assert!((UtcTime(1_740_787_200.0).day_of_year_frac() - 60.0).abs() < 1e-9);
    }

    #[test]
    fn stamps_format_with_seconds_only_when_needed() {
        // Source: the weather format's stamp spelling (notebooks-free-docs/weather-format.md).
        let s = LocalTime::from_civil(2024, 2, 29).0 + 23 * 3600 + 45 * 60;
        assert_eq!(LocalTime(s).format(), "2024-02-29T23:45");
        assert_eq!(LocalTime(s + 7).format(), "2024-02-29T23:45:07");
    }
}
