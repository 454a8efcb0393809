//! Monthly sums, extremes and repairs of a weather series (what `weather inspect` prints).

use crate::input::weather::{Weather, WeatherWarning};
use crate::time::LocalTime;

/// One day of the plot: its local midnight (naive seconds since 1970-01-01T00:00) and its
/// global horizontal irradiation, kWh/m².
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DayPoint {
    pub day_start_s: i64,
    pub ghi_kwh_m2: f64,
}

/// One month of a weather file, as `inspect` reports it.
#[derive(Clone, Debug, PartialEq)]
pub struct MonthSummary {
    /// Calendar year and month (1..=12) of the intervals' starts.
    pub year: i64,
    pub month: u32,
    /// Days covered (intervals × length / 24 h).
    pub days: f64,
    pub ghi_kwh_m2: f64,
    pub ghi_kwh_m2_day: f64,
    pub air_mean_c: f64,
    /// Mean of the daily minima and maxima (days as in the file, partial days included).
    pub air_daily_min_c: f64,
    pub air_daily_max_c: f64,
    pub air_lowest_c: f64,
    pub air_highest_c: f64,
}

/// What `inspect` reports about a weather file.
#[derive(Clone, Debug, PartialEq)]
pub struct WeatherSummary {
    pub rows: usize,
    pub interval_s: i64,
    /// One entry per calendar month present, in file order.
    pub months: Vec<MonthSummary>,
    /// Global horizontal irradiation of each calendar day present.
    pub days: Vec<DayPoint>,
    /// Lowest and highest air temperature with the stamp as the file writes it.
    pub lowest: (f64, String),
    pub highest: (f64, String),
    /// Intervals filled to repair gaps, and in how many gaps.
    pub filled_intervals: usize,
    pub filled_gaps: usize,
    /// Values clamped while reading (small negative irradiance, diffuse above global).
    pub clamped_values: usize,
    /// Annual irradiation of each calendar year with all twelve months present, kWh/m².
    pub complete_years: Vec<(i64, f64)>,
}

/// Monthly and daily sums of a validated weather series.
pub fn summarize(w: &Weather) -> WeatherSummary {
    let hours = w.interval_s as f64 / 3600.0;
    let mut months: Vec<MonthSummary> = Vec::new();
    let mut days: Vec<DayPoint> = Vec::new();
    // Daily extremes per month: (sum of minima, sum of maxima, days).
    let mut extremes: Vec<(f64, f64, usize)> = Vec::new();
    let mut day_min = f64::INFINITY;
    let mut day_max = f64::NEG_INFINITY;
    let mut lowest = (f64::INFINITY, String::new());
    let mut highest = (f64::NEG_INFINITY, String::new());
    for k in 0..w.len() {
        let start = w.local_start_s[k];
        let day_start = start.div_euclid(86_400) * 86_400;
        let (year, month, _) = LocalTime(start).civil();
        let ghi_kwh = w.ghi_w_m2[k] * hours / 1000.0;
        let t = w.air_temp_c[k];
        if t < lowest.0 {
            lowest = (t, w.stamp_text(k));
        }
        if t > highest.0 {
            highest = (t, w.stamp_text(k));
        }
        let new_month = months
            .last()
            .is_none_or(|m| (m.year, m.month) != (year, month));
        let new_day = days.last().is_none_or(|d| d.day_start_s != day_start);
        if new_day {
            if let Some(e) = extremes.last_mut() {
                if day_min.is_finite() {
                    e.0 += day_min;
                    e.1 += day_max;
                    e.2 += 1;
                }
            }
            day_min = f64::INFINITY;
            day_max = f64::NEG_INFINITY;
            days.push(DayPoint {
                day_start_s: day_start,
                ghi_kwh_m2: 0.0,
            });
        }
        if new_month {
            months.push(MonthSummary {
                year,
                month,
                days: 0.0,
                ghi_kwh_m2: 0.0,
                ghi_kwh_m2_day: 0.0,
                air_mean_c: 0.0,
                air_daily_min_c: 0.0,
                air_daily_max_c: 0.0,
                air_lowest_c: f64::INFINITY,
                air_highest_c: f64::NEG_INFINITY,
            });
            extremes.push((0.0, 0.0, 0));
        }
        day_min = day_min.min(t);
        day_max = day_max.max(t);
        if let Some(d) = days.last_mut() {
            d.ghi_kwh_m2 += ghi_kwh;
        }
        if let Some(m) = months.last_mut() {
            m.days += hours / 24.0;
            m.ghi_kwh_m2 += ghi_kwh;
            m.air_mean_c += t;
            m.air_lowest_c = m.air_lowest_c.min(t);
            m.air_highest_c = m.air_highest_c.max(t);
        }
    }
    if let Some(e) = extremes.last_mut() {
        if day_min.is_finite() {
            e.0 += day_min;
            e.1 += day_max;
            e.2 += 1;
        }
    }
    for (m, (sum_min, sum_max, n)) in months.iter_mut().zip(&extremes) {
        let rows = m.days * 24.0 / hours;
        m.air_mean_c /= rows;
        m.ghi_kwh_m2_day = m.ghi_kwh_m2 / m.days;
        if *n > 0 {
            m.air_daily_min_c = sum_min / *n as f64;
            m.air_daily_max_c = sum_max / *n as f64;
        }
    }

    let mut filled_intervals = 0;
    let mut filled_gaps = 0;
    let mut clamped_values = 0;
    for warning in &w.warnings {
        match warning {
            WeatherWarning::FilledGaps {
                gaps, intervals, ..
            } => {
                filled_gaps += gaps;
                filled_intervals += intervals;
            }
            WeatherWarning::ClampedNegativeIrradiance { count, .. }
            | WeatherWarning::ClampedDiffuseAboveGlobal { count, .. } => clamped_values += count,
            WeatherWarning::MonthsMissing { .. } => {}
        }
    }
    let mut complete_years: Vec<(i64, f64)> = Vec::new();
    let mut year = months.first().map_or(0, |m| m.year);
    let last = months.last().map_or(-1, |m| m.year);
    while year <= last {
        let of_year: Vec<&MonthSummary> = months.iter().filter(|m| m.year == year).collect();
        if of_year.len() == 12 {
            complete_years.push((year, of_year.iter().map(|m| m.ghi_kwh_m2).sum()));
        }
        year += 1;
    }
    WeatherSummary {
        rows: w.len(),
        interval_s: w.interval_s,
        months,
        days,
        lowest,
        highest,
        filled_intervals,
        filled_gaps,
        clamped_values,
        complete_years,
    }
}
