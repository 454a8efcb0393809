//! The synthesizer's input: twelve monthly means as a file gives them ([`MonthlyInputs`]),
//! their validation into the [`MonthlyClimate`] that [`synthesize`] takes (with the textbook
//! sun of every hour of the year prepared once), and [`SynthError`], whose messages name the
//! key and the month.
//!
//! It deliberately reads no file (`io/monthly_toml.rs` parses the TOML) and draws nothing at
//! random: after validation the synthesis cannot meet a bad value.
//!
//! [`synthesize`]: super::synthesize

use thiserror::Error;

use super::hourly::CLEAR_SKY_MARGIN_FRAC;
use super::textbook_sun::{
    monthly_extraterrestrial_from_days, year_calendar, year_hours_sun, HourSun,
};
use crate::error::WeatherError;

/// Month names as messages use them, index 0 = January.
pub const MONTH_NAMES: [&str; 12] = [
    "january",
    "february",
    "march",
    "april",
    "may",
    "june",
    "july",
    "august",
    "september",
    "october",
    "november",
    "december",
];

/// Years the synthesizer makes (the range of the textbook sun formulas' fit, with margin).
pub const YEAR_RANGE: (i32, i32) = (1901, 2099);

/// Day-to-day standard deviation of the daily mean air temperature when the input gives none,
/// K.
///
/// # Source
/// From memory: the day-to-day standard deviation of daily mean temperature about its
/// seasonal course is typically 2–4 K in mid-latitudes (larger in continental winters,
/// smaller in deserts and maritime climates). Give `air_day_sd_dk` where it is known.
pub const DEFAULT_AIR_DAY_SD_DK: f64 = 3.0;

/// Why monthly inputs cannot be synthesized. Messages are lower-case, name the key and the
/// month, and say what to check; [`SynthError::key`] and [`SynthError::month`] let the caller
/// point at the line of the input file.
#[derive(Debug, Error)]
pub enum SynthError {
    /// A site value or the year outside its range.
    #[error("{key} = {value} is outside {range}{hint}")]
    BadSite {
        key: &'static str,
        value: f64,
        range: String,
        hint: &'static str,
    },
    /// The site name is empty.
    #[error("name is empty; name the site (it is written into the weather file)")]
    EmptyName,
    /// A monthly list without exactly twelve values.
    #[error("{key} has {found} values; one per month is needed, january to december{}", count_hint(*found))]
    MonthCount { key: &'static str, found: usize },
    /// NaN or infinity.
    #[error("{key} for {} = {value} is not a finite number", MONTH_NAMES[*month])]
    NotFinite {
        key: &'static str,
        month: usize,
        value: f64,
    },
    /// A monthly value outside its plausible range.
    #[error("{key} for {} = {value} is outside {range}{hint}", MONTH_NAMES[*month])]
    OutOfRange {
        key: &'static str,
        month: usize,
        value: f64,
        range: String,
        hint: &'static str,
    },
    /// More irradiation than reaches the top of the atmosphere.
    #[error("ghi_kwh_m2_day for {} = {value} is above the extraterrestrial irradiation at latitude {latitude_deg}° ({limit_kwh_m2_day:.2} kWh/m² per day, the month's mean of Duffie & Beckman eq. 1.10.3); check the units (kWh/m² per day, not per month) and the latitude", MONTH_NAMES[*month])]
    AboveExtraterrestrial {
        month: usize,
        value: f64,
        latitude_deg: f64,
        limit_kwh_m2_day: f64,
    },
    /// More irradiation than a clear sky gives in that month.
    #[error("ghi_kwh_m2_day for {} = {value} is more than a clear sky gives there ({limit_kwh_m2_day:.2} kWh/m² per day: Haurwitz clear sky + {margin_pct} %); check the value, the latitude and the month order", MONTH_NAMES[*month])]
    AboveClearSky {
        month: usize,
        value: f64,
        limit_kwh_m2_day: f64,
        margin_pct: f64,
    },
    /// Daily minimum above the mean or maximum below it.
    #[error("air temperatures for {} must satisfy air_min_c ≤ air_mean_c ≤ air_max_c, found {min_c} / {mean_c} / {max_c}", MONTH_NAMES[*month])]
    TemperatureOrder {
        month: usize,
        min_c: f64,
        mean_c: f64,
        max_c: f64,
    },
    /// `air_min_c` without `air_max_c` or the reverse.
    #[error("{present} is given without {missing}; give both, or air_range_dk instead")]
    Unpaired {
        present: &'static str,
        missing: &'static str,
    },
    /// Both ways of giving the daily range.
    #[error("air_range_dk is given together with air_min_c and air_max_c; give one or the other")]
    RangeTwice,
    /// No daily range at all.
    #[error("no daily temperature range: give air_min_c and air_max_c, or air_range_dk")]
    NoRange,
    /// A month's output missed its input (a bug, never expected for validated input).
    #[error("the synthesized {what} for {} came out {got:.3} instead of {target:.3}; this is a bug, please report it with the input file", MONTH_NAMES[*month])]
    NotReproduced {
        what: &'static str,
        month: usize,
        target: f64,
        got: f64,
    },
    /// The synthesized series failed the weather validation (a bug).
    #[error("the synthesized year failed validation (a bug, please report it): {0}")]
    Weather(#[from] WeatherError),
}

fn count_hint(found: usize) -> String {
    if found < 12 {
        format!(" ({} has no value)", MONTH_NAMES[found])
    } else {
        format!(" ({} too many)", found - 12)
    }
}

impl SynthError {
    /// The input key the problem is about, when there is one.
    pub fn key(&self) -> Option<&'static str> {
        match self {
            SynthError::BadSite { key, .. }
            | SynthError::MonthCount { key, .. }
            | SynthError::NotFinite { key, .. }
            | SynthError::OutOfRange { key, .. } => Some(key),
            SynthError::EmptyName => Some("name"),
            SynthError::AboveExtraterrestrial { .. } | SynthError::AboveClearSky { .. } => {
                Some("ghi_kwh_m2_day")
            }
            SynthError::TemperatureOrder { .. } => Some("air_mean_c"),
            SynthError::Unpaired { present, .. } => Some(present),
            SynthError::RangeTwice => Some("air_range_dk"),
            SynthError::NoRange | SynthError::NotReproduced { .. } | SynthError::Weather(_) => None,
        }
    }

    /// The month (0 = January) the problem is about, when there is one.
    pub fn month(&self) -> Option<usize> {
        match self {
            SynthError::NotFinite { month, .. }
            | SynthError::OutOfRange { month, .. }
            | SynthError::AboveExtraterrestrial { month, .. }
            | SynthError::AboveClearSky { month, .. }
            | SynthError::TemperatureOrder { month, .. }
            | SynthError::NotReproduced { month, .. } => Some(*month),
            _ => None,
        }
    }
}

/// Monthly inputs as a file gives them: lists are not yet checked for length or range.
/// Index 0 of every list is January.
#[derive(Clone, Debug, PartialEq)]
pub struct MonthlyInputs {
    pub name: String,
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub elevation_m: f64,
    pub utc_offset_h: f64,
    /// Calendar year to generate (every day of it, hourly).
    pub year: i32,
    /// Monthly mean of daily global horizontal irradiation, kWh/m² per day.
    pub ghi_kwh_m2_day: Vec<f64>,
    /// Monthly mean air temperature (mean of all hours), °C.
    pub air_mean_c: Vec<f64>,
    /// Monthly mean of the daily minimum, °C (with `air_max_c`).
    pub air_min_c: Option<Vec<f64>>,
    /// Monthly mean of the daily maximum, °C (with `air_min_c`).
    pub air_max_c: Option<Vec<f64>>,
    /// Monthly mean daily range (maximum − minimum), K (instead of `air_min_c`/`air_max_c`).
    pub air_range_dk: Option<Vec<f64>>,
    /// Day-to-day standard deviation of the daily mean temperature, K
    /// (default [`DEFAULT_AIR_DAY_SD_DK`]).
    pub air_day_sd_dk: Option<Vec<f64>>,
    /// Monthly mean wind speed, m/s (no wind column without it).
    pub wind_m_s: Option<Vec<f64>>,
}

/// Validated monthly climate: the only input [`synthesize`] takes. Built by
/// [`MonthlyInputs::validate`]; after that the synthesis cannot meet a bad value.
///
/// [`synthesize`]: super::synthesize
#[derive(Clone, Debug)]
pub struct MonthlyClimate {
    pub(super) name: String,
    pub(super) latitude_deg: f64,
    pub(super) longitude_deg: f64,
    pub(super) elevation_m: f64,
    pub(super) utc_offset_h: f64,
    pub(super) year: i32,
    pub(super) ghi_kwh_m2_day: [f64; 12],
    pub(super) air_mean_c: [f64; 12],
    /// Daily minimum minus monthly mean (≤ 0), K.
    pub(super) air_min_offset_dk: [f64; 12],
    /// Daily maximum minus monthly mean (≥ 0), K.
    pub(super) air_max_offset_dk: [f64; 12],
    pub(super) air_day_sd_dk: [f64; 12],
    pub(super) wind_m_s: Option<[f64; 12]>,
    /// Midnight of 1 January, naive local seconds.
    pub(super) year_start_s: i64,
    pub(super) days: usize,
    /// Month (0..12) of each day.
    pub(super) day_month: Vec<usize>,
    /// The textbook sun of every hour of the year.
    pub(super) hours: Vec<HourSun>,
    /// Monthly mean daily extraterrestrial irradiation (D&B eq. 1.10.3), kWh/m² per day.
    pub(super) extraterrestrial_kwh_m2_day: [f64; 12],
}

impl MonthlyClimate {
    pub fn name(&self) -> &str {
        &self.name
    }
    pub fn latitude_deg(&self) -> f64 {
        self.latitude_deg
    }
    pub fn longitude_deg(&self) -> f64 {
        self.longitude_deg
    }
    pub fn utc_offset_h(&self) -> f64 {
        self.utc_offset_h
    }
    pub fn year(&self) -> i32 {
        self.year
    }
    /// The input irradiation, kWh/m² per day.
    pub fn ghi_kwh_m2_day(&self) -> [f64; 12] {
        self.ghi_kwh_m2_day
    }
    /// The input mean temperature, °C.
    pub fn air_mean_c(&self) -> [f64; 12] {
        self.air_mean_c
    }
    /// The input mean daily minimum and maximum, °C (from the range when given that way:
    /// mean ∓ range/2).
    pub fn air_min_max_c(&self) -> ([f64; 12], [f64; 12]) {
        let mut lo = [0.0; 12];
        let mut hi = [0.0; 12];
        for m in 0..12 {
            lo[m] = self.air_mean_c[m] + self.air_min_offset_dk[m];
            hi[m] = self.air_mean_c[m] + self.air_max_offset_dk[m];
        }
        (lo, hi)
    }
    /// The input wind, m/s.
    pub fn wind_m_s(&self) -> Option<[f64; 12]> {
        self.wind_m_s
    }
    /// Monthly mean daily extraterrestrial irradiation, kWh/m² per day.
    pub fn extraterrestrial_kwh_m2_day(&self) -> [f64; 12] {
        self.extraterrestrial_kwh_m2_day
    }
    /// Monthly mean clearness index K̄T = H̄ / H̄0 (0 where H̄0 = 0, polar night).
    pub fn clearness_frac(&self) -> [f64; 12] {
        let mut k = [0.0; 12];
        for ((kt, h), h0) in k
            .iter_mut()
            .zip(&self.ghi_kwh_m2_day)
            .zip(&self.extraterrestrial_kwh_m2_day)
        {
            if *h0 > 0.0 {
                *kt = h / h0;
            }
        }
        k
    }
    /// The textbook sun of every hour of the year (hour k starts k hours after midnight of
    /// 1 January, local standard time).
    pub fn hours(&self) -> &[HourSun] {
        &self.hours
    }
    /// Month (0 = January) of every day of the year.
    pub fn day_month(&self) -> &[usize] {
        &self.day_month
    }
    /// Midnight of 1 January in naive local seconds since 1970-01-01T00:00.
    pub fn year_start_s(&self) -> i64 {
        self.year_start_s
    }
}

fn twelve(key: &'static str, values: &[f64]) -> Result<[f64; 12], SynthError> {
    if values.len() != 12 {
        return Err(SynthError::MonthCount {
            key,
            found: values.len(),
        });
    }
    let mut out = [0.0; 12];
    for (m, &v) in values.iter().enumerate() {
        if !v.is_finite() {
            return Err(SynthError::NotFinite {
                key,
                month: m,
                value: v,
            });
        }
        out[m] = v;
    }
    Ok(out)
}

fn check_months(
    key: &'static str,
    values: &[f64; 12],
    lo: f64,
    hi: f64,
    hint: &'static str,
) -> Result<(), SynthError> {
    for (m, &v) in values.iter().enumerate() {
        if !(lo..=hi).contains(&v) {
            return Err(SynthError::OutOfRange {
                key,
                month: m,
                value: v,
                range: format!("{lo} to {hi}"),
                hint,
            });
        }
    }
    Ok(())
}

fn check_site(key: &'static str, value: f64, lo: f64, hi: f64) -> Result<(), SynthError> {
    if value.is_finite() && (lo..=hi).contains(&value) {
        Ok(())
    } else {
        Err(SynthError::BadSite {
            key,
            value,
            range: format!("{lo} to {hi}"),
            hint: "",
        })
    }
}

impl MonthlyInputs {
    /// Checks every input and prepares the hourly sun of the year.
    ///
    /// Rules, in this order (the first violation is reported):
    /// - name not empty; latitude −90..=90°, longitude −180..=180°, elevation −500..=9000 m,
    ///   UTC offset −12..=14 h in quarter hours; year 1901..=2099;
    /// - every list has twelve finite values;
    /// - irradiation ≥ 0 and at most the month's mean daily extraterrestrial irradiation
    ///   (Duffie & Beckman eq. 1.10.3, averaged over the month's days);
    /// - mean temperature −60..=50 °C; either `air_min_c` and `air_max_c` (with
    ///   min ≤ mean ≤ max, each −90..=60 °C) or `air_range_dk` (0..=40 K), not both;
    ///   `air_day_sd_dk` 0..=10 K; wind 0..=30 m/s;
    /// - irradiation at most what the Haurwitz clear sky gives that month, plus
    ///   [`CLEAR_SKY_MARGIN_FRAC`] (the synthesis never exceeds that bound in any hour).
    ///
    /// # Errors
    /// A [`SynthError`] naming the key and month.
    pub fn validate(&self) -> Result<MonthlyClimate, SynthError> {
        self.check_site_and_year()?;
        let lists = self.monthly_lists()?;

        let (year_start_s, day_month) =
            year_calendar(self.year).ok_or_else(|| SynthError::BadSite {
                key: "year",
                value: f64::from(self.year),
                range: format!("{} to {}", YEAR_RANGE.0, YEAR_RANGE.1),
                hint: "",
            })?;
        let days = day_month.len();
        let extraterrestrial = monthly_extraterrestrial_from_days(self.latitude_deg, &day_month);
        check_ghi_below_extraterrestrial(&lists.ghi, &extraterrestrial, self.latitude_deg)?;

        check_months(
            "air_mean_c",
            &lists.mean,
            -60.0,
            50.0,
            " °C (a monthly mean; is it in kelvin or fahrenheit?)",
        )?;
        let (min_offset, max_offset) =
            temperature_offsets(&lists.mean, lists.min, lists.max, lists.range)?;
        let day_sd = match lists.day_sd {
            Some(sd) => {
                check_months("air_day_sd_dk", &sd, 0.0, 10.0, " K")?;
                sd
            }
            None => [DEFAULT_AIR_DAY_SD_DK; 12],
        };
        if let Some(w) = &lists.wind {
            check_months(
                "wind_m_s",
                w,
                0.0,
                30.0,
                " m/s (a monthly mean; is it in km/h or knots?)",
            )?;
        }

        let hours = year_hours_sun(
            year_start_s,
            days,
            self.latitude_deg,
            self.longitude_deg,
            self.utc_offset_h,
        );
        check_ghi_below_clear_sky(&lists.ghi, &hours, &day_month)?;

        Ok(MonthlyClimate {
            name: self.name.trim().to_string(),
            latitude_deg: self.latitude_deg,
            longitude_deg: self.longitude_deg,
            elevation_m: self.elevation_m,
            utc_offset_h: self.utc_offset_h,
            year: self.year,
            ghi_kwh_m2_day: lists.ghi,
            air_mean_c: lists.mean,
            air_min_offset_dk: min_offset,
            air_max_offset_dk: max_offset,
            air_day_sd_dk: day_sd,
            wind_m_s: lists.wind,
            year_start_s,
            days,
            day_month,
            hours,
            extraterrestrial_kwh_m2_day: extraterrestrial,
        })
    }

    /// The first rule of [`MonthlyInputs::validate`]: name, latitude, longitude, elevation,
    /// UTC offset (range, then quarter hours) and year, in that order.
    fn check_site_and_year(&self) -> Result<(), SynthError> {
        if self.name.trim().is_empty() {
            return Err(SynthError::EmptyName);
        }
        check_site("latitude_deg", self.latitude_deg, -90.0, 90.0)?;
        check_site("longitude_deg", self.longitude_deg, -180.0, 180.0)?;
        check_site("elevation_m", self.elevation_m, -500.0, 9000.0)?;
        check_site("utc_offset_h", self.utc_offset_h, -12.0, 14.0)?;
        if (self.utc_offset_h * 4.0).fract() != 0.0 {
            return Err(SynthError::BadSite {
                key: "utc_offset_h",
                value: self.utc_offset_h,
                range: "-12 to 14".to_string(),
                hint: " in whole quarter hours (e.g. 1, -5, 5.5, 5.75)",
            });
        }
        if !(YEAR_RANGE.0..=YEAR_RANGE.1).contains(&self.year) {
            return Err(SynthError::BadSite {
                key: "year",
                value: f64::from(self.year),
                range: format!("{} to {}", YEAR_RANGE.0, YEAR_RANGE.1),
                hint: " (the textbook sun formulas are fitted to these years)",
            });
        }
        Ok(())
    }

    /// The second rule of [`MonthlyInputs::validate`]: every list given has twelve finite
    /// values, checked in the order of the fields.
    fn monthly_lists(&self) -> Result<MonthlyLists, SynthError> {
        let optional = |key: &'static str, list: &Option<Vec<f64>>| {
            list.as_deref().map(|v| twelve(key, v)).transpose()
        };
        Ok(MonthlyLists {
            ghi: twelve("ghi_kwh_m2_day", &self.ghi_kwh_m2_day)?,
            mean: twelve("air_mean_c", &self.air_mean_c)?,
            min: optional("air_min_c", &self.air_min_c)?,
            max: optional("air_max_c", &self.air_max_c)?,
            range: optional("air_range_dk", &self.air_range_dk)?,
            day_sd: optional("air_day_sd_dk", &self.air_day_sd_dk)?,
            wind: optional("wind_m_s", &self.wind_m_s)?,
        })
    }
}

/// The lists of [`MonthlyInputs`] as twelve finite values each, not yet range-checked.
struct MonthlyLists {
    ghi: [f64; 12],
    mean: [f64; 12],
    min: Option<[f64; 12]>,
    max: Option<[f64; 12]>,
    range: Option<[f64; 12]>,
    day_sd: Option<[f64; 12]>,
    wind: Option<[f64; 12]>,
}

/// Each month's irradiation is ≥ 0 and at most its mean daily extraterrestrial irradiation
/// (month by month, the first violation reported).
fn check_ghi_below_extraterrestrial(
    ghi: &[f64; 12],
    extraterrestrial: &[f64; 12],
    latitude_deg: f64,
) -> Result<(), SynthError> {
    for m in 0..12 {
        if ghi[m] < 0.0 {
            return Err(SynthError::OutOfRange {
                key: "ghi_kwh_m2_day",
                month: m,
                value: ghi[m],
                range: "0..".to_string(),
                hint: " (irradiation cannot be negative)",
            });
        }
        if ghi[m] > extraterrestrial[m] {
            return Err(SynthError::AboveExtraterrestrial {
                month: m,
                value: ghi[m],
                latitude_deg,
                limit_kwh_m2_day: extraterrestrial[m],
            });
        }
    }
    Ok(())
}

/// The daily minimum and maximum as offsets from the monthly mean (≤ 0 and ≥ 0), K, from
/// `air_min_c` and `air_max_c` or from `air_range_dk` (mean ∓ range/2); exactly one of the
/// two ways must be given.
fn temperature_offsets(
    mean: &[f64; 12],
    min: Option<[f64; 12]>,
    max: Option<[f64; 12]>,
    range: Option<[f64; 12]>,
) -> Result<([f64; 12], [f64; 12]), SynthError> {
    match (min, max, range) {
        (Some(_), Some(_), Some(_)) => Err(SynthError::RangeTwice),
        (Some(_), None, _) => Err(SynthError::Unpaired {
            present: "air_min_c",
            missing: "air_max_c",
        }),
        (None, Some(_), _) => Err(SynthError::Unpaired {
            present: "air_max_c",
            missing: "air_min_c",
        }),
        (None, None, None) => Err(SynthError::NoRange),
        (Some(lo), Some(hi), None) => {
            check_months("air_min_c", &lo, -90.0, 60.0, " °C")?;
            check_months("air_max_c", &hi, -90.0, 60.0, " °C")?;
            let mut lo_off = [0.0; 12];
            let mut hi_off = [0.0; 12];
            for m in 0..12 {
                if !(lo[m] <= mean[m] && mean[m] <= hi[m]) {
                    return Err(SynthError::TemperatureOrder {
                        month: m,
                        min_c: lo[m],
                        mean_c: mean[m],
                        max_c: hi[m],
                    });
                }
                lo_off[m] = lo[m] - mean[m];
                hi_off[m] = hi[m] - mean[m];
            }
            Ok((lo_off, hi_off))
        }
        (None, None, Some(r)) => {
            check_months("air_range_dk", &r, 0.0, 40.0, " K (maximum − minimum)")?;
            Ok((r.map(|x| -0.5 * x), r.map(|x| 0.5 * x)))
        }
    }
}

/// Each month's irradiation is at most what the Haurwitz clear sky gives that month (the
/// mean over its days of the hourly clear-sky sums), plus [`CLEAR_SKY_MARGIN_FRAC`].
fn check_ghi_below_clear_sky(
    ghi: &[f64; 12],
    hours: &[HourSun],
    day_month: &[usize],
) -> Result<(), SynthError> {
    let mut clear_wh = [0.0; 12];
    let mut month_days = [0usize; 12];
    for (d, &m) in day_month.iter().enumerate() {
        month_days[m] += 1;
        clear_wh[m] += hours[d * 24..(d + 1) * 24]
            .iter()
            .map(|h| h.clear_sky_w_m2)
            .sum::<f64>();
    }
    for m in 0..12 {
        let limit = (1.0 + CLEAR_SKY_MARGIN_FRAC) * clear_wh[m] / month_days[m] as f64 / 1000.0;
        if ghi[m] > limit {
            return Err(SynthError::AboveClearSky {
                month: m,
                value: ghi[m],
                limit_kwh_m2_day: limit,
                margin_pct: CLEAR_SKY_MARGIN_FRAC * 100.0,
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::weather_gen::synth::test_support::base_inputs;

    fn check_invalid(change: impl Fn(&mut MonthlyInputs), expected_start: &str) {
        let mut inputs = base_inputs();
        change(&mut inputs);
        let msg = inputs.validate().unwrap_err().to_string();
        assert!(
            msg.starts_with(expected_start),
            "got: {msg}\nwant: {expected_start}"
        );
        assert!(!msg.ends_with('.'), "{msg}");
    }

    #[test]
    fn bad_inputs_are_rejected_naming_key_and_month() {
        check_invalid(
            |i| {
                i.ghi_kwh_m2_day.pop();
            },
            "ghi_kwh_m2_day has 11 values; one per month is needed, january to december (december has no value)",
        );
        check_invalid(
            |i| i.air_mean_c.push(3.0),
            "air_mean_c has 13 values; one per month is needed, january to december (1 too many)",
        );
        check_invalid(
            |i| i.ghi_kwh_m2_day[2] = -0.5,
            "ghi_kwh_m2_day for march = -0.5 is outside 0..",
        );
        check_invalid(
            |i| i.ghi_kwh_m2_day[4] = f64::NAN,
            "ghi_kwh_m2_day for may = NaN is not a finite number",
        );
        // Source: Duffie & Beckman eq. 1.10.3 (recomputed): at 45° N the December mean H0 is
        // 2.98 kWh/m² per day, so 5 must fail as above the top of the atmosphere.
        check_invalid(
            |i| i.ghi_kwh_m2_day[11] = 5.0,
            "ghi_kwh_m2_day for december = 5 is above the extraterrestrial irradiation at latitude 45°",
        );
        // Source: Haurwitz 1945 clear sky (recomputed): a December at 45° N with K̄T = 0.87
        // (2.6 kWh/m² per day, below H0 = 2.98) is brighter than the clear sky + 10 %.
        check_invalid(
            |i| i.ghi_kwh_m2_day[11] = 2.6,
            "ghi_kwh_m2_day for december = 2.6 is more than a clear sky gives there",
        );
        check_invalid(
            |i| i.air_min_c.as_mut().unwrap()[6] = 22.0,
            "air temperatures for july must satisfy air_min_c ≤ air_mean_c ≤ air_max_c",
        );
        check_invalid(
            |i| i.air_max_c = None,
            "air_min_c is given without air_max_c",
        );
        check_invalid(
            |i| i.air_range_dk = Some(vec![8.0; 12]),
            "air_range_dk is given together with air_min_c and air_max_c",
        );
        check_invalid(
            |i| {
                i.air_min_c = None;
                i.air_max_c = None;
            },
            "no daily temperature range",
        );
        check_invalid(
            |i| i.air_mean_c[0] = 273.0,
            "air_mean_c for january = 273 is outside -60 to 50 °C",
        );
        check_invalid(
            |i| i.wind_m_s.as_mut().unwrap()[1] = -1.0,
            "wind_m_s for february = -1 is outside 0 to 30",
        );
        check_invalid(
            |i| i.latitude_deg = 95.0,
            "latitude_deg = 95 is outside -90 to 90",
        );
        check_invalid(
            |i| i.utc_offset_h = 1.3,
            "utc_offset_h = 1.3 is outside -12 to 14 in whole quarter hours",
        );
        check_invalid(|i| i.year = 1800, "year = 1800 is outside 1901 to 2099");
        check_invalid(|i| i.name = "  ".to_string(), "name is empty");
        let e = base_inputs();
        let mut bad = e.clone();
        bad.ghi_kwh_m2_day[2] = -0.5;
        let err = bad.validate().unwrap_err();
        assert_eq!((err.key(), err.month()), (Some("ghi_kwh_m2_day"), Some(2)));
    }
}
