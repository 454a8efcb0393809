//! Weather synthesis: an hourly year in the crate's weather format from twelve monthly means.
//!
//! Users often have only monthly figures for a site (a climate table, a solar atlas): the
//! mean daily global horizontal irradiation of each month, the mean air temperature with the
//! mean daily minimum and maximum (or the mean daily range), perhaps the mean wind speed.
//! [`synthesize`] turns those into an hourly year with published stochastic methods, so that
//! the simulation sees realistic runs of dull and bright days, cloudy hours inside a day and
//! cold clear nights:
//!
//! 1. daily clearness indices Kt from the library of Markov transition matrices of Aguiar,
//!    Collares-Pereira & Conde 1988 (a matrix per class of the monthly mean clearness K̄T);
//! 2. hourly clearness inside each day from the TAG model (time-dependent, autoregressive,
//!    Gaussian) of Aguiar & Collares-Pereira 1992;
//! 3. no hour brighter than the Haurwitz 1945 clear sky plus [`CLEAR_SKY_MARGIN_FRAC`];
//! 4. beam and diffuse parts from the Erbs, Klein & Duffie 1982 split
//!    ([`crate::physics::sky::erbs_split`]);
//! 5. air temperature from daily minima and maxima with the Parton & Logan 1981 daily cycle
//!    (sine by day, exponential decay by night), a first-order autoregressive day-to-day
//!    anomaly and a daily range that follows the day's clearness;
//! 6. wind (when given) from gamma-distributed daily means and an afternoon maximum;
//! 7. each month rescaled so that its means reproduce the inputs (irradiation within 2 %,
//!    temperature within 0.5 °C; in practice much closer).
//!
//! The sun is the textbook one (Spencer / Duffie & Beckman, about 0.5°), as in the weather
//! sanity checks: good enough for daily and hourly clearness, not for the simulation, which
//! recomputes the sun with NREL SPA. The same seed gives the same series (and so the same
//! CSV bytes) with the locked `rand` version; each quantity draws from its own stream.
//!
//! This module is pure (no file I/O; the input file format lives with the command in
//! `weather_tools.rs`). It deliberately does not model humidity, snow, wind direction,
//! year-to-year variability or any correlation between cloud and temperature beyond the daily
//! range; it does not claim that its output is the climate of any real place.
//! The method is written out in `notebooks-free-docs/method-synth.md`.

use std::f64::consts::PI;

use chrono::NaiveDate;
use rand::distr::Distribution as _;
use rand::rngs::StdRng;
use rand::{RngExt, SeedableRng};
use statrs::distribution::{Gamma, Normal};
use thiserror::Error;

use crate::error::WeatherError;
use crate::input::weather::{
    cos_zenith_from_angles, solar_time_h, StampConvention, UncheckedWeather, Weather, WeatherSite,
};
use crate::physics::sky::erbs_split;
use crate::physics::sun::{declination_spencer_deg, extraterrestrial_normal_w_m2};
use crate::time::{is_leap_year, LocalTime};
use crate::weather_gen::sample::haurwitz_ghi_w_m2;

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

/// No synthesized hour exceeds the Haurwitz clear-sky irradiance by more than this fraction
/// (before rounding to 0.1 W/m²).
///
/// # Source
/// Common practice, no source: Haurwitz has no elevation or turbidity term, so it is low for
/// dry, high or very clean air, and hourly means under broken cloud can exceed the clear sky
/// (cloud-edge enhancement). 10 % covers both without allowing absurd hours.
pub const CLEAR_SKY_MARGIN_FRAC: f64 = 0.10;

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

/// Lag-one autocorrelation of the daily mean temperature anomaly.
///
/// # Source
/// From memory: daily mean temperature anomalies persist, with lag-one autocorrelations of
/// about 0.6–0.8 at mid-latitude stations.
pub const AIR_ANOMALY_LAG1: f64 = 0.7;

/// Parton & Logan 1981 coefficients for air temperature at screen height (150 cm): lag of
/// the maximum after solar noon `a` (h), night-time decay `b`, lag of the minimum after
/// sunrise `c` (h).
///
/// # Source
/// Parton & Logan 1981, "A model for diurnal variation in soil and air temperature",
/// Agricultural Meteorology 23, 205–216, Table 1 (air at 150 cm: a = 1.86, b = 2.20,
/// c = −0.17).
pub const PARTON_LOGAN_ABC: (f64, f64, f64) = (1.86, 2.20, -0.17);

/// Sub-steps per hour for the hourly sun (extraterrestrial and clear-sky means): the same
/// 5-minute steps as the weather sanity check, so the two agree.
const SUBSTEPS: usize = 12;

/// Attempts at a month's daily clearness sequence; the one whose mean is closest to K̄T is
/// kept (then scaled). Stops early within [`MONTH_MEAN_ACCEPT`].
const MONTH_ATTEMPTS: usize = 20;
const MONTH_MEAN_ACCEPT: f64 = 0.005;

/// Redraws of one hour's TAG innovation before the clearness is clamped to its bounds.
const TAG_REDRAWS: usize = 20;

/// Day length bounds for the Parton & Logan cycle, h: beyond the polar circles the day or
/// the night vanishes and the published cycle has no shape; the bounds keep a short night or
/// a short day so the curve stays defined (documented in notebooks-free-docs/method-synth.md).
const DAY_LENGTH_BOUNDS_H: (f64, f64) = (2.0, 22.0);

/// Daily range scale from clearness: R_d = R_m · clamp(½ + ½ Kt_d / K̄T, bounds).
const RANGE_SCALE_BOUNDS: (f64, f64) = (0.25, 1.75);

/// Gamma shape of the daily mean wind factor (mean 1, coefficient of variation 1/√shape).
const WIND_DAY_SHAPE: f64 = 4.0;

/// Seeds of the independent random streams (xor-ed with the user's seed).
const STREAM_CLEARNESS: u64 = 0x9E37_79B9_7F4A_7C15;
const STREAM_HOURLY: u64 = 0xC2B2_AE3D_27D4_EB4F;
const STREAM_TEMPERATURE: u64 = 0x1656_67B1_9E37_79F9;
const STREAM_WIND: u64 = 0x27D4_EB2F_1656_67C5;

// =======================================================================================
// Inputs and their validation
// =======================================================================================

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
#[derive(Clone, Debug)]
pub struct MonthlyClimate {
    name: String,
    latitude_deg: f64,
    longitude_deg: f64,
    elevation_m: f64,
    utc_offset_h: f64,
    year: i32,
    ghi_kwh_m2_day: [f64; 12],
    air_mean_c: [f64; 12],
    /// Daily minimum minus monthly mean (≤ 0), K.
    air_min_offset_dk: [f64; 12],
    /// Daily maximum minus monthly mean (≥ 0), K.
    air_max_offset_dk: [f64; 12],
    air_day_sd_dk: [f64; 12],
    wind_m_s: Option<[f64; 12]>,
    /// Midnight of 1 January, naive local seconds.
    year_start_s: i64,
    days: usize,
    /// Month (0..12) of each day.
    day_month: Vec<usize>,
    /// The textbook sun of every hour of the year.
    hours: Vec<HourSun>,
    /// Monthly mean daily extraterrestrial irradiation (D&B eq. 1.10.3), kWh/m² per day.
    extraterrestrial_kwh_m2_day: [f64; 12],
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
                range: format!("{lo}..={hi}"),
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
            range: format!("{lo}..={hi}"),
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
                range: "-12..=14".to_string(),
                hint: " in whole quarter hours (e.g. 1, -5, 5.5, 5.75)",
            });
        }
        if !(YEAR_RANGE.0..=YEAR_RANGE.1).contains(&self.year) {
            return Err(SynthError::BadSite {
                key: "year",
                value: f64::from(self.year),
                range: format!("{}..={}", YEAR_RANGE.0, YEAR_RANGE.1),
                hint: " (the textbook sun formulas are fitted to these years)",
            });
        }

        let ghi = twelve("ghi_kwh_m2_day", &self.ghi_kwh_m2_day)?;
        let mean = twelve("air_mean_c", &self.air_mean_c)?;
        let min = self
            .air_min_c
            .as_deref()
            .map(|v| twelve("air_min_c", v))
            .transpose()?;
        let max = self
            .air_max_c
            .as_deref()
            .map(|v| twelve("air_max_c", v))
            .transpose()?;
        let range = self
            .air_range_dk
            .as_deref()
            .map(|v| twelve("air_range_dk", v))
            .transpose()?;
        let day_sd = self
            .air_day_sd_dk
            .as_deref()
            .map(|v| twelve("air_day_sd_dk", v))
            .transpose()?;
        let wind = self
            .wind_m_s
            .as_deref()
            .map(|v| twelve("wind_m_s", v))
            .transpose()?;

        let (year_start_s, day_month) =
            year_calendar(self.year).ok_or_else(|| SynthError::BadSite {
                key: "year",
                value: f64::from(self.year),
                range: format!("{}..={}", YEAR_RANGE.0, YEAR_RANGE.1),
                hint: "",
            })?;
        let days = day_month.len();
        let extraterrestrial = monthly_extraterrestrial_from_days(self.latitude_deg, &day_month);
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
                    latitude_deg: self.latitude_deg,
                    limit_kwh_m2_day: extraterrestrial[m],
                });
            }
        }

        check_months(
            "air_mean_c",
            &mean,
            -60.0,
            50.0,
            " °C (a monthly mean; is it in kelvin or fahrenheit?)",
        )?;
        let (min_offset, max_offset) = match (min, max, range) {
            (Some(_), Some(_), Some(_)) => return Err(SynthError::RangeTwice),
            (Some(_), None, _) => {
                return Err(SynthError::Unpaired {
                    present: "air_min_c",
                    missing: "air_max_c",
                })
            }
            (None, Some(_), _) => {
                return Err(SynthError::Unpaired {
                    present: "air_max_c",
                    missing: "air_min_c",
                })
            }
            (None, None, None) => return Err(SynthError::NoRange),
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
                (lo_off, hi_off)
            }
            (None, None, Some(r)) => {
                check_months("air_range_dk", &r, 0.0, 40.0, " K (maximum − minimum)")?;
                (r.map(|x| -0.5 * x), r.map(|x| 0.5 * x))
            }
        };
        let day_sd = match day_sd {
            Some(sd) => {
                check_months("air_day_sd_dk", &sd, 0.0, 10.0, " K")?;
                sd
            }
            None => [DEFAULT_AIR_DAY_SD_DK; 12],
        };
        if let Some(w) = &wind {
            check_months(
                "wind_m_s",
                w,
                0.0,
                30.0,
                " m/s (a monthly mean; is it in km/h or knots?)",
            )?;
        }

        let mut hours = vec![HourSun::default(); days * 24];
        for (d, day) in hours.chunks_mut(24).enumerate() {
            day_hours_sun(
                year_start_s + 86_400 * d as i64,
                0..24,
                self.latitude_deg,
                self.longitude_deg,
                self.utc_offset_h,
                day,
            );
        }
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

        Ok(MonthlyClimate {
            name: self.name.trim().to_string(),
            latitude_deg: self.latitude_deg,
            longitude_deg: self.longitude_deg,
            elevation_m: self.elevation_m,
            utc_offset_h: self.utc_offset_h,
            year: self.year,
            ghi_kwh_m2_day: ghi,
            air_mean_c: mean,
            air_min_offset_dk: min_offset,
            air_max_offset_dk: max_offset,
            air_day_sd_dk: day_sd,
            wind_m_s: wind,
            year_start_s,
            days,
            day_month,
            hours,
            extraterrestrial_kwh_m2_day: extraterrestrial,
        })
    }
}

// =======================================================================================
// Sun: extraterrestrial and clear-sky irradiation
// =======================================================================================

/// Daily extraterrestrial irradiation on a horizontal surface, Wh/m².
///
/// # Formula
/// H0 = (24/π) · G_on(n) · (cos φ cos δ sin ωs + ωs sin φ sin δ), ωs in radians,
/// cos ωs = −tan φ tan δ clamped to −1..1 (polar day: ωs = π; polar night: ωs = 0),
/// with `day_of_year` = n, `latitude_deg` = φ, δ from Spencer 1971.
///
/// # Source
/// Duffie & Beckman 4th ed. eq. 1.10.3, with G_sc (1 + 0.033 cos(360 n/365)) replaced by
/// the Spencer 1971 G_on of [`extraterrestrial_normal_w_m2`] (solar constant 1361 W/m², the
/// book uses 1367) and the book's Cooper declination by Spencer's (eq. 1.6.1b).
///
/// # Validity
/// Any latitude and day; 0 in polar night.
pub fn daily_extraterrestrial_wh_m2(day_of_year: f64, latitude_deg: f64) -> f64 {
    let phi = latitude_deg.to_radians();
    let delta = declination_spencer_deg(day_of_year).to_radians();
    let omega_s = (-phi.tan() * delta.tan()).clamp(-1.0, 1.0).acos();
    let h = 24.0 / PI
        * extraterrestrial_normal_w_m2(day_of_year)
        * (phi.cos() * delta.cos() * omega_s.sin() + omega_s * phi.sin() * delta.sin());
    h.max(0.0)
}

/// Monthly mean of the daily extraterrestrial irradiation, kWh/m² per day: the mean of
/// [`daily_extraterrestrial_wh_m2`] over the days of each month of `year` (index 0 =
/// January). Years outside the calendar chrono knows give zeros (never for validated input).
pub fn monthly_extraterrestrial_kwh_m2_day(year: i32, latitude_deg: f64) -> [f64; 12] {
    let day_month = year_calendar(year).map(|(_, m)| m).unwrap_or_default();
    monthly_extraterrestrial_from_days(latitude_deg, &day_month)
}

fn monthly_extraterrestrial_from_days(latitude_deg: f64, day_month: &[usize]) -> [f64; 12] {
    let mut sum = [0.0; 12];
    let mut count = [0usize; 12];
    for (d, &m) in day_month.iter().enumerate() {
        sum[m] += daily_extraterrestrial_wh_m2((d + 1) as f64, latitude_deg);
        count[m] += 1;
    }
    let mut out = [0.0; 12];
    for m in 0..12 {
        if count[m] > 0 {
            out[m] = sum[m] / count[m] as f64 / 1000.0;
        }
    }
    out
}

/// Midnight of 1 January (naive local seconds) and the month (0..12) of every day of `year`.
fn year_calendar(year: i32) -> Option<(i64, Vec<usize>)> {
    let start = NaiveDate::from_ymd_opt(year, 1, 1)?
        .and_hms_opt(0, 0, 0)?
        .and_utc()
        .timestamp();
    let days = if is_leap_year(i64::from(year)) {
        366
    } else {
        365
    };
    let months = (0..days)
        .map(|d| LocalTime(start + 86_400 * d as i64).civil().1 as usize - 1)
        .collect();
    Some((start, months))
}

/// The textbook sun over one hour.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct HourSun {
    /// Hour mean of the extraterrestrial irradiance on the horizontal, W/m².
    pub extraterrestrial_w_m2: f64,
    /// Hour mean of the Haurwitz clear-sky global horizontal irradiance, W/m².
    pub clear_sky_w_m2: f64,
    /// Mean cos z over the sunlit part of the hour (0 when the sun stays down): the sun the
    /// TAG model and the Erbs split see (notebooks-free-docs/method-sun.md: the midpoint of the sunlit part).
    pub cos_zenith_sunlit: f64,
    /// Extraterrestrial normal irradiance of the day, W/m².
    pub g_on_w_m2: f64,
}

/// The textbook sun over the hour starting at `local_start_s` (naive local seconds).
///
/// # Formula
/// Over N = 12 five-minute sub-steps j (midpoints): extraterrestrial = (1/N) Σ G_on cos⁺zⱼ,
/// clear sky = (1/N) Σ Haurwitz(cos zⱼ), sunlit cos z = mean of cos zⱼ over the sub-steps
/// with cos zⱼ > 0.
///
/// # Source
/// cos z from the textbook sun (as `weather::cos_zenith_textbook`: Duffie & Beckman eqs. 1.5.2, 1.5.3,
/// 1.6.1b, 1.6.5); G_on D&B eq. 1.4.1b; Haurwitz 1945 ([`haurwitz_ghi_w_m2`]).
pub fn hour_sun(
    local_start_s: i64,
    latitude_deg: f64,
    longitude_deg: f64,
    utc_offset_h: f64,
) -> HourSun {
    let mut out = [HourSun::default()];
    let day_start = local_start_s.div_euclid(86_400) * 86_400;
    let first_hour = ((local_start_s - day_start) / 3600) as usize;
    day_hours_sun(
        day_start,
        first_hour..first_hour + 1,
        latitude_deg,
        longitude_deg,
        utc_offset_h,
        &mut out,
    );
    out[0]
}

/// [`hour_sun`] for the whole hours `hours` (0..24) of the day starting at `day_start_s`,
/// written into `out`. The declination and equation of time depend only on the day number,
/// so they are computed once per day (the same formulas as `weather::cos_zenith_textbook`, which
/// would recompute them at every sub-step).
fn day_hours_sun(
    day_start_s: i64,
    hours: std::ops::Range<usize>,
    latitude_deg: f64,
    longitude_deg: f64,
    utc_offset_h: f64,
    out: &mut [HourSun],
) {
    let day_of_year = f64::from(LocalTime(day_start_s).day_of_year());
    let g_on = extraterrestrial_normal_w_m2(day_of_year);
    let delta = declination_spencer_deg(day_of_year);
    let dt_h = 1.0 / SUBSTEPS as f64;
    for (slot, hour) in out.iter_mut().zip(hours) {
        let (mut et, mut cs, mut cz_sum, mut lit) = (0.0, 0.0, 0.0, 0usize);
        for j in 0..SUBSTEPS {
            let clock_h = hour as f64 + (j as f64 + 0.5) * dt_h;
            let solar_h = solar_time_h(clock_h, day_of_year, longitude_deg, utc_offset_h);
            let cz = cos_zenith_from_angles(latitude_deg, delta, 15.0 * (solar_h - 12.0));
            if cz > 0.0 {
                et += g_on * cz;
                cs += haurwitz_ghi_w_m2(cz);
                cz_sum += cz;
                lit += 1;
            }
        }
        *slot = HourSun {
            extraterrestrial_w_m2: et / SUBSTEPS as f64,
            clear_sky_w_m2: cs / SUBSTEPS as f64,
            cos_zenith_sunlit: if lit > 0 { cz_sum / lit as f64 } else { 0.0 },
            g_on_w_m2: g_on,
        };
    }
}

// =======================================================================================
// Daily clearness: Aguiar, Collares-Pereira & Conde 1988
// =======================================================================================

/// Lower bound of the daily clearness index states of each Aguiar matrix (by class of the
/// monthly mean clearness index, see [`aguiar_class`]).
///
/// # Source
/// Aguiar, Collares-Pereira & Conde 1988, "Simple procedure for generating sequences of daily
/// radiation values using a library of Markov transition matrices", Solar Energy 40(3),
/// 269–279: the library's Kt,min and Kt,max per class.
pub const AGUIAR_KT_MIN: [f64; 10] = [
    0.031, 0.058, 0.051, 0.052, 0.028, 0.053, 0.044, 0.085, 0.010, 0.319,
];

/// Upper bound of the daily clearness index states of each Aguiar matrix.
///
/// # Source
/// As [`AGUIAR_KT_MIN`].
pub const AGUIAR_KT_MAX: [f64; 10] = [
    0.705, 0.694, 0.753, 0.753, 0.807, 0.856, 0.818, 0.846, 0.842, 0.865,
];

/// The library of Markov transition matrices: `[class][from state][to state]`.
///
/// Class 0 is K̄T ≤ 0.30, class k (1..=8) is 0.25 + 0.05k < K̄T ≤ 0.30 + 0.05k, class 9 is
/// K̄T > 0.70. State j of a class spans Kt,min + j·Δ … Kt,min + (j+1)·Δ with
/// Δ = (Kt,max − Kt,min)/10. Rows are printed to three decimals and so sum to 1 within
/// ±0.005; the sampler divides by the row's own sum.
///
/// # Source
/// Aguiar, Collares-Pereira & Conde 1988, Solar Energy 40(3), the published matrices. Two
/// independent public reproductions differed in two entries (class 2 row 5: 0.125 or 0.124;
/// class 6 row 4: 0.283 or 0.282); a third reproduction decided both (0.125, 0.283).
#[rustfmt::skip]
pub const AGUIAR_MATRICES: [[[f64; 10]; 10]; 10] = [
    // K̄T ≤ 0.30
    [
        [0.229, 0.333, 0.208, 0.042, 0.083, 0.042, 0.042, 0.021, 0.000, 0.000],
        [0.167, 0.319, 0.194, 0.139, 0.097, 0.028, 0.042, 0.000, 0.014, 0.000],
        [0.250, 0.250, 0.091, 0.136, 0.091, 0.046, 0.046, 0.023, 0.068, 0.000],
        [0.158, 0.237, 0.158, 0.263, 0.026, 0.053, 0.079, 0.026, 0.000, 0.000],
        [0.211, 0.053, 0.211, 0.158, 0.053, 0.053, 0.158, 0.105, 0.000, 0.000],
        [0.125, 0.125, 0.250, 0.188, 0.063, 0.125, 0.000, 0.125, 0.000, 0.000],
        [0.040, 0.240, 0.080, 0.120, 0.080, 0.080, 0.120, 0.120, 0.080, 0.040],
        [0.000, 0.250, 0.000, 0.125, 0.000, 0.125, 0.125, 0.250, 0.063, 0.063],
        [0.000, 0.250, 0.000, 0.125, 0.250, 0.000, 0.250, 0.000, 0.000, 0.125],
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.500, 0.250, 0.000, 0.250],
    ],
    // 0.30 < K̄T ≤ 0.35
    [
        [0.000, 0.000, 0.091, 0.000, 0.364, 0.091, 0.182, 0.000, 0.273, 0.000],
        [0.118, 0.118, 0.176, 0.118, 0.059, 0.118, 0.176, 0.059, 0.059, 0.000],
        [0.067, 0.267, 0.067, 0.200, 0.067, 0.000, 0.133, 0.133, 0.000, 0.067],
        [0.118, 0.235, 0.000, 0.235, 0.059, 0.176, 0.118, 0.000, 0.059, 0.000],
        [0.077, 0.154, 0.308, 0.077, 0.154, 0.077, 0.000, 0.077, 0.077, 0.000],
        [0.083, 0.000, 0.167, 0.250, 0.083, 0.167, 0.000, 0.083, 0.167, 0.000],
        [0.222, 0.222, 0.000, 0.111, 0.111, 0.000, 0.111, 0.222, 0.000, 0.000],
        [0.091, 0.182, 0.273, 0.000, 0.091, 0.273, 0.000, 0.091, 0.000, 0.000],
        [0.111, 0.111, 0.111, 0.222, 0.000, 0.000, 0.000, 0.222, 0.111, 0.111],
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.500, 0.000, 0.000, 0.500],
    ],
    // 0.35 < K̄T ≤ 0.40
    [
        [0.206, 0.088, 0.176, 0.176, 0.088, 0.029, 0.176, 0.029, 0.029, 0.000],
        [0.120, 0.100, 0.140, 0.160, 0.120, 0.220, 0.100, 0.000, 0.020, 0.020],
        [0.077, 0.123, 0.185, 0.123, 0.077, 0.139, 0.092, 0.123, 0.061, 0.000],
        [0.048, 0.111, 0.095, 0.206, 0.206, 0.190, 0.095, 0.048, 0.000, 0.000],
        [0.059, 0.137, 0.118, 0.137, 0.098, 0.118, 0.118, 0.157, 0.059, 0.000],
        [0.014, 0.097, 0.139, 0.153, 0.125, 0.139, 0.208, 0.056, 0.042, 0.028],
        [0.073, 0.101, 0.116, 0.145, 0.087, 0.159, 0.203, 0.087, 0.029, 0.000],
        [0.019, 0.037, 0.111, 0.056, 0.074, 0.111, 0.185, 0.296, 0.074, 0.037],
        [0.035, 0.069, 0.035, 0.000, 0.035, 0.103, 0.172, 0.138, 0.379, 0.035],
        [0.000, 0.167, 0.167, 0.000, 0.167, 0.000, 0.000, 0.333, 0.000, 0.167],
    ],
    // 0.40 < K̄T ≤ 0.45
    [
        [0.167, 0.167, 0.167, 0.000, 0.083, 0.125, 0.000, 0.167, 0.125, 0.000],
        [0.117, 0.117, 0.150, 0.117, 0.083, 0.117, 0.200, 0.067, 0.017, 0.017],
        [0.049, 0.085, 0.134, 0.158, 0.098, 0.110, 0.134, 0.134, 0.061, 0.037],
        [0.039, 0.090, 0.141, 0.141, 0.167, 0.141, 0.090, 0.141, 0.039, 0.013],
        [0.009, 0.139, 0.074, 0.093, 0.194, 0.139, 0.167, 0.093, 0.074, 0.019],
        [0.036, 0.018, 0.117, 0.099, 0.144, 0.180, 0.180, 0.117, 0.072, 0.036],
        [0.000, 0.046, 0.061, 0.061, 0.136, 0.159, 0.273, 0.167, 0.098, 0.000],
        [0.016, 0.056, 0.080, 0.128, 0.104, 0.080, 0.160, 0.208, 0.136, 0.032],
        [0.011, 0.053, 0.021, 0.043, 0.128, 0.096, 0.074, 0.223, 0.277, 0.074],
        [0.000, 0.074, 0.037, 0.000, 0.074, 0.074, 0.074, 0.074, 0.333, 0.259],
    ],
    // 0.45 < K̄T ≤ 0.50
    [
        [0.120, 0.200, 0.160, 0.120, 0.120, 0.120, 0.080, 0.000, 0.040, 0.040],
        [0.100, 0.080, 0.120, 0.140, 0.140, 0.200, 0.180, 0.040, 0.000, 0.000],
        [0.046, 0.114, 0.068, 0.171, 0.125, 0.171, 0.080, 0.159, 0.057, 0.011],
        [0.015, 0.061, 0.084, 0.099, 0.191, 0.153, 0.153, 0.115, 0.115, 0.015],
        [0.024, 0.030, 0.098, 0.098, 0.165, 0.195, 0.195, 0.140, 0.043, 0.012],
        [0.015, 0.026, 0.062, 0.124, 0.144, 0.170, 0.170, 0.222, 0.062, 0.005],
        [0.000, 0.013, 0.045, 0.108, 0.112, 0.175, 0.188, 0.224, 0.117, 0.018],
        [0.008, 0.023, 0.054, 0.066, 0.093, 0.125, 0.191, 0.253, 0.183, 0.004],
        [0.006, 0.022, 0.061, 0.033, 0.067, 0.083, 0.139, 0.222, 0.322, 0.044],
        [0.000, 0.046, 0.091, 0.091, 0.046, 0.046, 0.136, 0.091, 0.273, 0.182],
    ],
    // 0.50 < K̄T ≤ 0.55
    [
        [0.250, 0.179, 0.107, 0.107, 0.143, 0.071, 0.107, 0.036, 0.000, 0.000],
        [0.133, 0.022, 0.089, 0.111, 0.156, 0.178, 0.111, 0.133, 0.067, 0.000],
        [0.064, 0.048, 0.143, 0.048, 0.175, 0.143, 0.206, 0.095, 0.079, 0.000],
        [0.000, 0.022, 0.078, 0.111, 0.156, 0.156, 0.244, 0.167, 0.044, 0.022],
        [0.016, 0.027, 0.037, 0.069, 0.160, 0.219, 0.230, 0.160, 0.075, 0.005],
        [0.013, 0.025, 0.030, 0.093, 0.144, 0.202, 0.215, 0.219, 0.055, 0.004],
        [0.006, 0.041, 0.035, 0.064, 0.090, 0.180, 0.337, 0.192, 0.049, 0.006],
        [0.012, 0.021, 0.029, 0.035, 0.132, 0.123, 0.184, 0.371, 0.082, 0.012],
        [0.008, 0.016, 0.016, 0.024, 0.071, 0.103, 0.159, 0.270, 0.309, 0.024],
        [0.000, 0.000, 0.000, 0.000, 0.059, 0.000, 0.059, 0.294, 0.412, 0.176],
    ],
    // 0.55 < K̄T ≤ 0.60
    [
        [0.217, 0.087, 0.000, 0.174, 0.130, 0.087, 0.087, 0.130, 0.087, 0.000],
        [0.026, 0.079, 0.132, 0.079, 0.026, 0.158, 0.158, 0.132, 0.158, 0.053],
        [0.020, 0.020, 0.020, 0.040, 0.160, 0.180, 0.160, 0.200, 0.100, 0.100],
        [0.025, 0.013, 0.038, 0.076, 0.076, 0.139, 0.139, 0.266, 0.215, 0.013],
        [0.030, 0.030, 0.050, 0.020, 0.091, 0.131, 0.162, 0.283, 0.131, 0.071],
        [0.006, 0.006, 0.013, 0.057, 0.057, 0.121, 0.204, 0.287, 0.185, 0.064],
        [0.004, 0.026, 0.037, 0.030, 0.093, 0.107, 0.193, 0.307, 0.167, 0.037],
        [0.011, 0.009, 0.014, 0.042, 0.041, 0.071, 0.152, 0.418, 0.203, 0.041],
        [0.012, 0.022, 0.022, 0.038, 0.019, 0.050, 0.113, 0.281, 0.360, 0.084],
        [0.008, 0.024, 0.039, 0.039, 0.063, 0.039, 0.118, 0.118, 0.284, 0.268],
    ],
    // 0.60 < K̄T ≤ 0.65
    [
        [0.067, 0.133, 0.133, 0.067, 0.067, 0.200, 0.133, 0.133, 0.067, 0.000],
        [0.118, 0.059, 0.059, 0.059, 0.059, 0.118, 0.118, 0.235, 0.118, 0.059],
        [0.000, 0.024, 0.024, 0.049, 0.146, 0.073, 0.195, 0.244, 0.195, 0.049],
        [0.026, 0.000, 0.026, 0.026, 0.053, 0.184, 0.263, 0.184, 0.237, 0.000],
        [0.014, 0.000, 0.042, 0.056, 0.069, 0.097, 0.139, 0.306, 0.278, 0.000],
        [0.009, 0.009, 0.052, 0.069, 0.052, 0.112, 0.215, 0.285, 0.138, 0.060],
        [0.009, 0.009, 0.026, 0.017, 0.094, 0.099, 0.232, 0.283, 0.210, 0.021],
        [0.010, 0.014, 0.016, 0.019, 0.027, 0.062, 0.163, 0.467, 0.202, 0.019],
        [0.004, 0.007, 0.031, 0.017, 0.033, 0.050, 0.086, 0.252, 0.469, 0.050],
        [0.000, 0.000, 0.015, 0.046, 0.031, 0.046, 0.077, 0.123, 0.446, 0.215],
    ],
    // 0.65 < K̄T ≤ 0.70
    [
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 1.000, 0.000],
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 1.000, 0.000],
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.250, 0.250, 0.500, 0.000],
        [0.000, 0.000, 0.000, 0.000, 0.250, 0.000, 0.000, 0.375, 0.250, 0.125],
        [0.000, 0.000, 0.000, 0.083, 0.000, 0.167, 0.167, 0.250, 0.333, 0.000],
        [0.000, 0.000, 0.042, 0.042, 0.042, 0.083, 0.083, 0.292, 0.292, 0.125],
        [0.000, 0.000, 0.032, 0.000, 0.000, 0.032, 0.129, 0.387, 0.355, 0.065],
        [0.000, 0.000, 0.000, 0.038, 0.038, 0.075, 0.047, 0.340, 0.415, 0.047],
        [0.004, 0.004, 0.007, 0.007, 0.011, 0.030, 0.052, 0.141, 0.654, 0.089],
        [0.000, 0.000, 0.000, 0.000, 0.061, 0.061, 0.030, 0.030, 0.349, 0.470],
    ],
    // K̄T > 0.70
    [
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 1.000, 0.000],
        [0.100, 0.100, 0.100, 0.100, 0.100, 0.100, 0.100, 0.100, 0.100, 0.100],
        [0.000, 0.000, 0.000, 0.250, 0.000, 0.000, 0.000, 0.500, 0.250, 0.000],
        [0.000, 0.000, 0.143, 0.143, 0.000, 0.143, 0.143, 0.429, 0.000, 0.000],
        [0.000, 0.000, 0.000, 0.200, 0.000, 0.000, 0.200, 0.400, 0.200, 0.000],
        [0.000, 0.000, 0.000, 0.000, 0.000, 0.000, 0.222, 0.444, 0.333, 0.000],
        [0.000, 0.000, 0.000, 0.000, 0.080, 0.080, 0.080, 0.480, 0.240, 0.040],
        [0.000, 0.000, 0.027, 0.009, 0.027, 0.018, 0.135, 0.523, 0.252, 0.009],
        [0.000, 0.000, 0.000, 0.022, 0.000, 0.043, 0.043, 0.326, 0.511, 0.054],
        [0.000, 0.000, 0.000, 0.143, 0.000, 0.000, 0.000, 0.143, 0.714, 0.000],
    ],
];

/// Which Aguiar matrix serves a month of mean clearness index `kt_month` (0..=9).
///
/// # Source
/// Aguiar, Collares-Pereira & Conde 1988: classes K̄T ≤ 0.30, then steps of 0.05 up to 0.70,
/// then K̄T > 0.70 (upper bounds inclusive).
pub fn aguiar_class(kt_month: f64) -> usize {
    (0..9)
        .find(|&k| kt_month <= f64::from(30 + 5 * k as u32) / 100.0)
        .unwrap_or(9)
}

/// The next day's clearness index from the previous day's, given a uniform number `u` in
/// [0, 1).
///
/// # Formula
/// Δ = (Kt,max − Kt,min)/10; row i = ⌊(Kt_prev − Kt,min)/Δ⌋ clamped to 0..=9; the row's
/// probabilities pᵢⱼ (divided by their sum) are stacked on [0, 1); `u` falls in state j at
/// fraction f of its band; Kt = Kt,min + (j + f)·Δ (uniform within the state).
///
/// # Source
/// Aguiar, Collares-Pereira & Conde 1988, Solar Energy 40(3) (the procedure and
/// [`AGUIAR_MATRICES`]).
pub fn aguiar_next_clearness(class: usize, previous_kt: f64, u: f64) -> f64 {
    let class = class.min(9);
    let (lo, hi) = (AGUIAR_KT_MIN[class], AGUIAR_KT_MAX[class]);
    let step = (hi - lo) / 10.0;
    let row = ((previous_kt - lo) / step).floor().clamp(0.0, 9.0) as usize;
    let p = &AGUIAR_MATRICES[class][row];
    let total: f64 = p.iter().sum();
    let target = u.clamp(0.0, 1.0) * total;
    let mut cum = 0.0;
    let mut last = 0;
    for (j, &pj) in p.iter().enumerate() {
        if pj > 0.0 {
            if target < cum + pj {
                return lo + (j as f64 + (target - cum) / pj) * step;
            }
            last = j;
        }
        cum += pj;
    }
    lo + (last as f64 + 1.0) * step
}

/// A raw sequence of `days` daily clearness indices for a month of mean clearness
/// `kt_month`, starting from the previous day's `previous_kt` (one uniform draw per day).
/// [`synthesize`] draws several and keeps the one closest to K̄T before scaling it.
pub fn aguiar_month_sequence(
    kt_month: f64,
    previous_kt: f64,
    days: usize,
    rng: &mut StdRng,
) -> Vec<f64> {
    let class = aguiar_class(kt_month);
    let mut prev = previous_kt;
    (0..days)
        .map(|_| {
            prev = aguiar_next_clearness(class, prev, rng.random_range(0.0..1.0));
            prev
        })
        .collect()
}

// =======================================================================================
// Hourly clearness: TAG, Aguiar & Collares-Pereira 1992
// =======================================================================================

/// Parameters of the TAG model for one day of clearness index Kt.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TagParams {
    /// Lag-one autocorrelation φ₁ of the normalised hourly deviations.
    pub phi: f64,
    pub lambda: f64,
    pub eta: f64,
    pub kappa: f64,
    /// Scale A and slope B of the standard deviation.
    pub a: f64,
    pub b: f64,
}

/// TAG parameters for a day of clearness index `kt_day`.
///
/// # Formula
/// φ₁ = 0.38 + 0.06 cos(7.4 Kt − 2.5);
/// λ = −0.19 + 1.12 Kt + 0.24 e^(−8 Kt); η = 0.32 − 1.6 (Kt − 0.5)²;
/// κ = 0.19 + 2.27 Kt² − 2.51 Kt³;
/// A = 0.14 e^(−20 (Kt − 0.35)²); B = 3 (Kt − 0.45)² + 16 Kt⁵.
///
/// # Source
/// Aguiar & Collares-Pereira 1992, "TAG: a time-dependent, autoregressive, Gaussian model
/// for generating synthetic hourly radiation", Solar Energy 49(3), 167–174. (One public
/// reproduction prints B with 0.16 Kt⁵; two others and the paper's behaviour — low noise
/// at noon on clear days, much more at low sun — agree on 16 Kt⁵.)
pub fn tag_params(kt_day: f64) -> TagParams {
    let k = kt_day;
    TagParams {
        phi: 0.38 + 0.06 * (7.4 * k - 2.5).cos(),
        lambda: -0.19 + 1.12 * k + 0.24 * (-8.0 * k).exp(),
        eta: 0.32 - 1.6 * (k - 0.5).powi(2),
        kappa: 0.19 + 2.27 * k * k - 2.51 * k.powi(3),
        a: 0.14 * (-20.0 * (k - 0.35).powi(2)).exp(),
        b: 3.0 * (k - 0.45).powi(2) + 16.0 * k.powi(5),
    }
}

impl TagParams {
    /// Mean hourly clearness at solar elevation h: λ + η e^(−κ / sin h).
    ///
    /// # Source
    /// Aguiar & Collares-Pereira 1992 (as [`tag_params`]).
    pub fn mean_kt(&self, sin_elevation: f64) -> f64 {
        self.lambda + self.eta * (-self.kappa / sin_elevation.max(1e-3)).exp()
    }

    /// Standard deviation of the hourly clearness at solar elevation h: A e^(B (1 − sin h)).
    ///
    /// # Source
    /// Aguiar & Collares-Pereira 1992 (as [`tag_params`]).
    pub fn sigma_kt(&self, sin_elevation: f64) -> f64 {
        self.a * (self.b * (1.0 - sin_elevation.clamp(0.0, 1.0))).exp()
    }
}

/// Scales `values` so that they sum to `target` without any exceeding its cap, keeping their
/// shape where the caps allow: values at their cap stay there and the rest is spread over
/// the others in proportion (water filling). With `target` at or above the sum of the caps
/// every value is its cap; with all values zero the caps give the shape.
pub fn fit_to_total(values: &mut [f64], caps: &[f64], target: f64) {
    if target <= 0.0 {
        values.iter_mut().for_each(|v| *v = 0.0);
        return;
    }
    let cap_total: f64 = caps.iter().sum();
    if target >= cap_total {
        values.copy_from_slice(caps);
        return;
    }
    let mut sum: f64 = values.iter().sum();
    if sum <= 0.0 {
        values.copy_from_slice(caps);
        sum = cap_total;
    }
    let f = target / sum;
    values.iter_mut().for_each(|v| *v *= f);
    for _ in 0..200 {
        let mut excess = 0.0;
        let mut free = 0.0;
        for (v, &c) in values.iter_mut().zip(caps) {
            if *v >= c {
                excess += *v - c;
                *v = c;
            } else {
                free += *v;
            }
        }
        if excess <= 1e-12 * target || free <= 0.0 {
            break;
        }
        let f = (free + excess) / free;
        for (v, &c) in values.iter_mut().zip(caps) {
            if *v < c {
                *v *= f;
            }
        }
    }
}

// =======================================================================================
// Air temperature: Parton & Logan 1981
// =======================================================================================

/// One day's temperature cycle: extremes and the sun's times, in apparent solar hours.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DayCycle {
    pub min_c: f64,
    pub max_c: f64,
    pub sunrise_h: f64,
    pub sunset_h: f64,
}

impl DayCycle {
    /// The day's geometry at latitude φ on day n: sunrise/sunset from cos ωs = −tan φ tan δ
    /// (Duffie & Beckman eq. 1.6.10), day length 2ωs/15 clamped to 2..=22 h so that the
    /// cycle stays defined beyond the polar circles.
    pub fn new(min_c: f64, max_c: f64, day_of_year: f64, latitude_deg: f64) -> DayCycle {
        let phi = latitude_deg.to_radians();
        let delta = declination_spencer_deg(day_of_year).to_radians();
        let omega_s_deg = (-phi.tan() * delta.tan())
            .clamp(-1.0, 1.0)
            .acos()
            .to_degrees();
        let length = (2.0 * omega_s_deg / 15.0).clamp(DAY_LENGTH_BOUNDS_H.0, DAY_LENGTH_BOUNDS_H.1);
        DayCycle {
            min_c,
            max_c,
            sunrise_h: 12.0 - length / 2.0,
            sunset_h: 12.0 + length / 2.0,
        }
    }

    /// Time of the minimum, solar hours: sunrise + c.
    pub fn min_time_h(&self) -> f64 {
        self.sunrise_h + PARTON_LOGAN_ABC.2
    }

    fn daytime_c(&self, solar_h: f64) -> f64 {
        let (a, _, c) = PARTON_LOGAN_ABC;
        let length = self.sunset_h - self.sunrise_h;
        let m = solar_h - self.min_time_h();
        self.min_c + (self.max_c - self.min_c) * (PI * m / (length + 2.0 * (a - c))).sin()
    }
}

/// Air temperature at apparent solar time `solar_h` (0..24) of `today`, °C.
///
/// # Formula
/// With Y = day length, t_n = sunrise + c, a, b, c = [`PARTON_LOGAN_ABC`]:
/// - day (t_n ≤ t ≤ sunset): T = T_min + (T_max − T_min) sin(π (t − t_n) / (Y + 2(a − c)))
///   (maximum at solar noon + a);
/// - night, n hours after sunset, until the next minimum Z hours later:
///   T = T_min,next + (T_sunset − T_min,next) (e^(−b n/Z) − e^(−b)) / (1 − e^(−b)).
///
/// # Source
/// Parton & Logan 1981, Agricultural Meteorology 23, 205–216, with two departures
/// (notebooks-free-docs/method-synth.md). The published day curve divides by Y + 2a and so
/// peaks at noon + a + c; here Y + 2(a − c), peaking at noon + a. The night curve is the
/// published exponential decay from the sunset temperature, but over Z = sunset to the next
/// minimum (published: the night length) and shifted and rescaled so that it ends exactly
/// at the next morning's minimum (the published form stops short of it and leaves a step at
/// t_n; common fix, no source).
///
/// # Validity
/// `solar_h` in 0..24 of `today`; earlier than today's minimum it is still last night
/// (`previous` evening to `today`'s minimum), later than sunset it is tonight (to `next`).
pub fn parton_logan_c(solar_h: f64, previous: &DayCycle, today: &DayCycle, next: &DayCycle) -> f64 {
    if solar_h < today.min_time_h() {
        night_c(previous, today, solar_h + 24.0)
    } else if solar_h <= today.sunset_h {
        today.daytime_c(solar_h)
    } else {
        night_c(today, next, solar_h)
    }
}

/// Night from `evening`'s sunset to `morning`'s minimum; `solar_h` counted from the start
/// of `evening`'s day.
fn night_c(evening: &DayCycle, morning: &DayCycle, solar_h: f64) -> f64 {
    let b = PARTON_LOGAN_ABC.1;
    let n = solar_h - evening.sunset_h;
    let z = 24.0 + morning.min_time_h() - evening.sunset_h;
    let at_sunset = evening.daytime_c(evening.sunset_h);
    let floor = (-b).exp();
    let w = ((-b * n / z).exp() - floor) / (1.0 - floor);
    morning.min_c + (at_sunset - morning.min_c) * w
}

/// A monthly value interpolated linearly between mid-month days, cyclic over the year.
/// `mids` are the mid-month positions in days from 1 January 00:00; `x` the same unit.
fn seasonal(monthly: &[f64; 12], mids: &[f64; 12], days: f64, x: f64) -> f64 {
    let x = x.rem_euclid(days);
    let (x0, v0, x1, v1) = if x < mids[0] {
        (mids[11] - days, monthly[11], mids[0], monthly[0])
    } else if x >= mids[11] {
        (mids[11], monthly[11], mids[0] + days, monthly[0])
    } else {
        let i = (0..11).rfind(|&i| mids[i] <= x).unwrap_or(0);
        (mids[i], monthly[i], mids[i + 1], monthly[i + 1])
    };
    v0 + (v1 - v0) * (x - x0) / (x1 - x0)
}

// =======================================================================================
// The synthesis
// =======================================================================================

/// A synthesized year with the daily clearness it ended up with.
#[derive(Clone, Debug)]
pub struct Synthesis {
    /// The hourly year, validated like a file read from disk (stamps at interval start).
    pub weather: Weather,
    /// Each day's clearness index as written: Σ GHI / H0 of the day (0 when H0 = 0).
    pub daily_clearness_frac: Vec<f64>,
}

/// Makes an hourly year from validated monthly inputs.
///
/// # Formula
/// For each month m with K̄T = H̄/H̄0 > 0:
/// 1. up to 20 sequences of daily Kt from [`aguiar_month_sequence`] (chained from the
///    previous day; the year starts from December's K̄T), keeping the one whose mean is
///    closest to K̄T; then all scaled by one factor so that Σ Kt_d · H0_d = H̄ · days, with
///    H0_d the day's sum of hourly extraterrestrial irradiation;
/// 2. within each day, TAG: y_h = φ₁ y_{h−1} + r, r ~ N(0, √(1 − φ₁²)), y at the first
///    sunlit hour ~ N(0, 1); kt_h = mean_kt(sin h) + σ(sin h) · y_h, redrawn up to 20 times
///    until 0 ≤ kt_h ≤ Haurwitz_h / G0_h, then clamped; GHI_h = kt_h · G0_h;
/// 3. each day's hours scaled to Kt_d · H0_d and each month's hours to H̄ · days with
///    [`fit_to_total`], caps (1 + [`CLEAR_SKY_MARGIN_FRAC`]) · Haurwitz_h;
/// 4. GHI rounded to 0.1 W/m²; DNI and DHI from [`erbs_split`] at the sunlit-mean zenith,
///    rounded, DHI ≤ GHI;
/// 5. daily extremes T_min,d = c_d + Δmin_m · s_d and T_max,d = c_d + Δmax_m · s_d, with
///    c_d = A(d) + x_d: A interpolated between mid-month anchors, x_d an AR(1) anomaly
///    (lag-one [`AIR_ANOMALY_LAG1`], standard deviation `air_day_sd_dk`), s_d =
///    clamp(½ + ½ Kt_d/K̄T, 0.25, 1.75), Δmin/Δmax the input minimum/maximum minus mean
///    interpolated between mid-months; hourly values from [`parton_logan_c`] at the hour's
///    midpoint in apparent solar time; the anchors A_m iterated until each month's mean of
///    the hourly values equals the input mean; rounded to 0.1 °C;
/// 6. wind (if given): w_h = w̄_m · g_d · f_h · (1 + 0.2 cos(2π (t − 14 h)/24)), g_d ~
///    Gamma(4, 4) per day, f_h = max(0.05, 1 + 0.25 z_h), z_h = 0.8 z_{h−1} + 0.6 N(0, 1);
///    each month scaled to its input mean; rounded to 0.1 m/s.
///
/// # Source
/// Steps 1–2: Aguiar, Collares-Pereira & Conde 1988; Aguiar & Collares-Pereira 1992.
/// Step 3: Haurwitz 1945 clear sky, margin common practice (see the constant). Step 4: Erbs,
/// Klein & Duffie 1982. Step 5: Parton & Logan 1981 cycle; the anomaly, its persistence and
/// the clearness-dependent range are common practice, no source (see the constants). Step 6:
/// common practice, no source (a gamma-distributed daily mean, an afternoon maximum).
///
/// # Errors
/// None for validated inputs; [`SynthError::NotReproduced`] or [`SynthError::Weather`] would
/// be bugs.
pub fn synthesize(
    climate: &MonthlyClimate,
    seed: u64,
    source: &str,
) -> Result<Synthesis, SynthError> {
    let days = climate.days;
    let n = days * 24;
    let hours = &climate.hours;
    let clearness = climate.clearness_frac();
    let month_days = {
        let mut c = [0usize; 12];
        climate.day_month.iter().for_each(|&m| c[m] += 1);
        c
    };
    let day_h0_wh: Vec<f64> = (0..days)
        .map(|d| {
            hours[d * 24..(d + 1) * 24]
                .iter()
                .map(|h| h.extraterrestrial_w_m2)
                .sum()
        })
        .collect();

    // 1. Daily clearness.
    let mut rng = StdRng::seed_from_u64(seed ^ STREAM_CLEARNESS);
    let mut daily_kt = vec![0.0; days];
    let mut previous = if clearness[11] > 0.0 {
        clearness[11]
    } else {
        0.5
    };
    let mut first_day = 0;
    for m in 0..12 {
        let count = month_days[m];
        let range = first_day..first_day + count;
        first_day += count;
        if clearness[m] <= 0.0 {
            continue; // polar night or a month of zero irradiation: every day stays 0
        }
        let mut best: Option<(f64, Vec<f64>)> = None;
        for _ in 0..MONTH_ATTEMPTS {
            let seq = aguiar_month_sequence(clearness[m], previous, count, &mut rng);
            let err = (seq.iter().sum::<f64>() / count as f64 - clearness[m]).abs();
            let better = best.as_ref().is_none_or(|(e, _)| err < *e);
            if better {
                best = Some((err, seq));
            }
            if err <= MONTH_MEAN_ACCEPT {
                break;
            }
        }
        let seq = best.map(|(_, s)| s).unwrap_or_default();
        previous = *seq.last().unwrap_or(&clearness[m]);
        let target_wh = climate.ghi_kwh_m2_day[m] * 1000.0 * count as f64;
        let got_wh: f64 = range
            .clone()
            .zip(&seq)
            .map(|(d, kt)| kt * day_h0_wh[d])
            .sum();
        let f = if got_wh > 0.0 {
            target_wh / got_wh
        } else {
            0.0
        };
        for (d, kt) in range.zip(seq) {
            daily_kt[d] = kt * f;
        }
    }

    // 2.–3. Hourly global irradiance.
    let caps: Vec<f64> = hours
        .iter()
        .map(|h| (1.0 + CLEAR_SKY_MARGIN_FRAC) * h.clear_sky_w_m2)
        .collect();
    let mut ghi = vec![0.0; n];
    let mut rng = StdRng::seed_from_u64(seed ^ STREAM_HOURLY);
    let standard = Normal::standard();
    for d in 0..days {
        let kt_day = daily_kt[d];
        let slot = d * 24..(d + 1) * 24;
        if kt_day <= 0.0 || day_h0_wh[d] <= 0.0 {
            continue;
        }
        let p = tag_params(kt_day);
        let innovation_sd = (1.0 - p.phi * p.phi).max(0.0).sqrt();
        let mut y: Option<f64> = None;
        for k in slot.clone() {
            let h = &hours[k];
            if h.extraterrestrial_w_m2 <= 0.0 {
                continue;
            }
            let kt_clear = h.clear_sky_w_m2 / h.extraterrestrial_w_m2;
            let mean = p.mean_kt(h.cos_zenith_sunlit);
            let sigma = p.sigma_kt(h.cos_zenith_sunlit);
            let mut kt = 0.0;
            let mut y_new = 0.0;
            for _ in 0..TAG_REDRAWS {
                y_new = match y {
                    None => standard.sample(&mut rng),
                    Some(prev) => p.phi * prev + innovation_sd * standard.sample(&mut rng),
                };
                kt = mean + sigma * y_new;
                if (0.0..=kt_clear).contains(&kt) {
                    break;
                }
            }
            y = Some(y_new);
            ghi[k] = kt.clamp(0.0, kt_clear) * h.extraterrestrial_w_m2;
        }
        fit_to_total(&mut ghi[slot.clone()], &caps[slot], kt_day * day_h0_wh[d]);
    }
    let mut first_hour = 0;
    for (&count, &h_month) in month_days.iter().zip(&climate.ghi_kwh_m2_day) {
        let slot = first_hour..first_hour + count * 24;
        first_hour = slot.end;
        fit_to_total(
            &mut ghi[slot.clone()],
            &caps[slot],
            h_month * 1000.0 * count as f64,
        );
    }

    // 4. Rounding and the Erbs split.
    let mut dni = vec![0.0; n];
    let mut dhi = vec![0.0; n];
    for k in 0..n {
        ghi[k] = round1(ghi[k]);
        let h = &hours[k];
        if ghi[k] > 0.0 && h.cos_zenith_sunlit > 0.0 {
            let split = erbs_split(
                ghi[k],
                h.cos_zenith_sunlit.clamp(-1.0, 1.0).acos().to_degrees(),
                h.g_on_w_m2,
            );
            dni[k] = round1(split.dni_w_m2);
            dhi[k] = round1(split.dhi_w_m2).min(ghi[k]);
        } else if ghi[k] > 0.0 {
            dhi[k] = ghi[k];
        }
    }

    // 5. Temperature.
    let temp = synthesize_temperature(climate, &daily_kt, &clearness, seed);

    // 6. Wind.
    let wind = climate
        .wind_m_s
        .map(|w| synthesize_wind(climate, &w, &month_days, seed));

    let stamp_s: Vec<i64> = (0..n)
        .map(|k| climate.year_start_s + 3600 * k as i64)
        .collect();
    let weather = UncheckedWeather {
        source: source.to_string(),
        site: WeatherSite {
            name: Some(climate.name.clone()),
            latitude_deg: Some(climate.latitude_deg),
            longitude_deg: Some(climate.longitude_deg),
            elevation_m: Some(climate.elevation_m),
            utc_offset_h: Some(climate.utc_offset_h),
        },
        interval_s: 3600,
        stamp: StampConvention::Start,
        stamp_s,
        line: vec![0; n],
        ghi_w_m2: ghi,
        dni_w_m2: Some(dni),
        dhi_w_m2: Some(dhi),
        air_temp_c: temp,
        wind_m_s: wind,
        albedo_frac: None,
        pressure_hpa: None,
    }
    .validate()?;

    check_reproduced(climate, &weather, &month_days)?;
    let daily_clearness_frac = (0..days)
        .map(|d| {
            if day_h0_wh[d] > 0.0 {
                weather.ghi_w_m2[d * 24..(d + 1) * 24].iter().sum::<f64>() / day_h0_wh[d]
            } else {
                0.0
            }
        })
        .collect();
    Ok(Synthesis {
        weather,
        daily_clearness_frac,
    })
}

/// The promise of [`synthesize`]: monthly irradiation within 2 % (or 1 Wh/m² per day for
/// dark months) and mean temperature within 0.5 °C of the inputs.
fn check_reproduced(
    climate: &MonthlyClimate,
    w: &Weather,
    month_days: &[usize; 12],
) -> Result<(), SynthError> {
    let mut ghi = [0.0; 12];
    let mut temp = [0.0; 12];
    for k in 0..w.len() {
        let m = w.local_month(k) as usize - 1;
        ghi[m] += w.ghi_w_m2[k];
        temp[m] += w.air_temp_c[k];
    }
    for m in 0..12 {
        let got = ghi[m] / 1000.0 / month_days[m] as f64;
        let target = climate.ghi_kwh_m2_day[m];
        if (got - target).abs() > (0.02 * target).max(0.001) {
            return Err(SynthError::NotReproduced {
                what: "irradiation (kWh/m² per day)",
                month: m,
                target,
                got,
            });
        }
        let got = temp[m] / (24 * month_days[m]) as f64;
        let target = climate.air_mean_c[m];
        if (got - target).abs() > 0.5 {
            return Err(SynthError::NotReproduced {
                what: "mean air temperature (°C)",
                month: m,
                target,
                got,
            });
        }
    }
    Ok(())
}

/// Step 5 of [`synthesize`]: hourly air temperature.
fn synthesize_temperature(
    climate: &MonthlyClimate,
    daily_kt: &[f64],
    clearness: &[f64; 12],
    seed: u64,
) -> Vec<f64> {
    let days = climate.days;
    let days_f = days as f64;
    let mids = mid_month_positions(&climate.day_month);
    let mut rng = StdRng::seed_from_u64(seed ^ STREAM_TEMPERATURE);
    let standard = Normal::standard();

    // Day slots −1..=days (index + 1): the night before 1 January and after 31 December
    // need their neighbours.
    let slots = days + 2;
    let slot_day = |i: usize| i as f64 - 1.0; // day index, may be −1 or `days`
    let mut anomaly = Vec::with_capacity(slots);
    let mut range_scale = Vec::with_capacity(slots);
    let mut lo_off = Vec::with_capacity(slots);
    let mut hi_off = Vec::with_capacity(slots);
    let mut x = 0.0;
    for i in 0..slots {
        let noon = slot_day(i) + 0.5;
        let sd = seasonal(&climate.air_day_sd_dk, &mids, days_f, noon);
        x = if i == 0 {
            sd * standard.sample(&mut rng)
        } else {
            AIR_ANOMALY_LAG1 * x
                + (1.0 - AIR_ANOMALY_LAG1 * AIR_ANOMALY_LAG1).sqrt()
                    * sd
                    * standard.sample(&mut rng)
        };
        anomaly.push(x);
        let d = i.saturating_sub(1).min(days - 1);
        let m = climate.day_month[d];
        range_scale.push(if clearness[m] > 0.0 {
            (0.5 + 0.5 * daily_kt[d] / clearness[m])
                .clamp(RANGE_SCALE_BOUNDS.0, RANGE_SCALE_BOUNDS.1)
        } else {
            1.0
        });
        lo_off.push(seasonal(&climate.air_min_offset_dk, &mids, days_f, noon));
        hi_off.push(seasonal(&climate.air_max_offset_dk, &mids, days_f, noon));
    }

    // Each hour's solar day slot and solar time (the cycle runs on apparent solar time).
    let n = days * 24;
    let position: Vec<(usize, f64)> = (0..n)
        .map(|k| {
            let d = k / 24;
            let doy = (d + 1) as f64;
            let s = solar_time_h(
                (k % 24) as f64 + 0.5,
                doy,
                climate.longitude_deg,
                climate.utc_offset_h,
            );
            let slot = d + 1;
            if s >= 24.0 {
                (slot + 1, s - 24.0)
            } else if s < 0.0 {
                (slot - 1, s + 24.0)
            } else {
                (slot, s)
            }
        })
        .collect();

    let mut anchors = climate.air_mean_c;
    let mut temp = vec![0.0; n];
    for _ in 0..60 {
        let cycles: Vec<DayCycle> = (0..slots)
            .map(|i| {
                let noon = slot_day(i) + 0.5;
                let centre = seasonal(&anchors, &mids, days_f, noon) + anomaly[i];
                // Day number of the slot; the slots before and after the year borrow
                // 31 December and 1 January.
                let doy = match i {
                    0 => days_f,
                    i if i > days => 1.0,
                    i => i as f64,
                };
                DayCycle::new(
                    centre + lo_off[i] * range_scale[i],
                    centre + hi_off[i] * range_scale[i],
                    doy,
                    climate.latitude_deg,
                )
            })
            .collect();
        for (k, &(slot, s)) in position.iter().enumerate() {
            let prev = &cycles[slot.saturating_sub(1)];
            let next = &cycles[(slot + 1).min(slots - 1)];
            temp[k] = parton_logan_c(s, prev, &cycles[slot], next);
        }
        let mut sum = [0.0; 12];
        let mut count = [0usize; 12];
        for (k, t) in temp.iter().enumerate() {
            let m = climate.day_month[k / 24];
            sum[m] += t;
            count[m] += 1;
        }
        let mut worst: f64 = 0.0;
        for m in 0..12 {
            let err = climate.air_mean_c[m] - sum[m] / count[m] as f64;
            anchors[m] += err;
            worst = worst.max(err.abs());
        }
        if worst < 1e-3 {
            break;
        }
    }
    temp.iter().map(|&t| round1(t)).collect()
}

/// Step 6 of [`synthesize`]: hourly wind speed.
fn synthesize_wind(
    climate: &MonthlyClimate,
    monthly: &[f64; 12],
    month_days: &[usize; 12],
    seed: u64,
) -> Vec<f64> {
    let days = climate.days;
    let mut rng = StdRng::seed_from_u64(seed ^ STREAM_WIND);
    let standard = Normal::standard();
    let day_factor =
        // ok: constant parameters, checked by a unit test.
        Gamma::new(WIND_DAY_SHAPE, WIND_DAY_SHAPE).expect("constant gamma parameters are valid");
    let mut wind = Vec::with_capacity(days * 24);
    let mut z: f64 = 0.0;
    for d in 0..days {
        let g = day_factor.sample(&mut rng);
        let m = climate.day_month[d];
        for h in 0..24 {
            z = 0.8 * z + 0.6 * standard.sample(&mut rng);
            let diurnal = 1.0 + 0.2 * (2.0 * PI * (h as f64 + 0.5 - 14.0) / 24.0).cos();
            wind.push(monthly[m] * g * (1.0 + 0.25 * z).max(0.05) * diurnal);
        }
    }
    let mut first = 0;
    for m in 0..12 {
        let slot = first..first + month_days[m] * 24;
        first = slot.end;
        let mean = wind[slot.clone()].iter().sum::<f64>() / slot.len() as f64;
        let f = if mean > 0.0 { monthly[m] / mean } else { 0.0 };
        for w in &mut wind[slot] {
            *w = round1((*w * f).min(40.0));
        }
    }
    wind
}

/// Mid-month positions in days from 1 January 00:00.
fn mid_month_positions(day_month: &[usize]) -> [f64; 12] {
    let mut start = [0usize; 12];
    let mut count = [0usize; 12];
    for (d, &m) in day_month.iter().enumerate().rev() {
        start[m] = d;
        count[m] += 1;
    }
    let mut mids = [0.0; 12];
    for m in 0..12 {
        mids[m] = start[m] as f64 + count[m] as f64 / 2.0;
    }
    mids
}

/// Rounds to one decimal, as the CSV carries it (so writing and re-reading is exact).
fn round1(v: f64) -> f64 {
    let r = (v * 10.0).round() / 10.0;
    if r == 0.0 {
        0.0
    } else {
        r
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::weather_csv::weather_csv_text;

    /// An invented mid-latitude climate (no real station): K̄T about 0.4–0.6.
    fn base_inputs() -> MonthlyInputs {
        MonthlyInputs {
            name: "Testfield (invented)".to_string(),
            latitude_deg: 45.0,
            longitude_deg: 7.0,
            elevation_m: 300.0,
            utc_offset_h: 1.0,
            year: 2025,
            ghi_kwh_m2_day: vec![1.4, 2.3, 3.6, 4.7, 5.6, 6.2, 6.4, 5.5, 4.2, 2.7, 1.6, 1.2],
            air_mean_c: vec![
                0.5, 2.0, 6.5, 10.5, 15.0, 19.0, 21.5, 21.0, 16.5, 11.0, 5.5, 1.5,
            ],
            air_min_c: Some(vec![
                -3.0, -2.0, 1.5, 5.0, 9.5, 13.0, 15.5, 15.0, 11.5, 6.5, 2.0, -2.0,
            ]),
            air_max_c: Some(vec![
                4.5, 6.5, 12.0, 16.0, 20.5, 25.0, 28.0, 27.5, 22.0, 16.0, 9.5, 5.0,
            ]),
            air_range_dk: None,
            air_day_sd_dk: None,
            wind_m_s: Some(vec![
                2.5, 2.7, 3.0, 3.1, 2.8, 2.5, 2.4, 2.3, 2.4, 2.5, 2.6, 2.5,
            ]),
        }
    }

    #[test]
    fn daily_extraterrestrial_matches_duffie_beckman_example_1_10_1() {
        // Source: Duffie & Beckman 4th ed., Example 1.10.1 (φ = 43° N, 15 April, n = 105):
        // H0 = 33.8 MJ/m² (from memory; the book's own formula with its inputs recomputes to
        // 33.77). Scaled to the book's 1367 W/m²; tolerance 0.1 MJ/m²: half a printed unit
        // plus the Spencer-vs-Cooper declination difference (0.07°, about 0.05 MJ/m²).
        let ours_mj = daily_extraterrestrial_wh_m2(105.0, 43.0) * 3600.0 / 1e6 * 1367.0 / 1361.0;
        assert!((ours_mj - 33.8).abs() <= 0.1, "{ours_mj}");
    }

    #[test]
    fn daily_extraterrestrial_in_polar_night_and_polar_day() {
        // Source: common practice, no source (geometry): no sun at 80° N at the December
        // solstice.
        assert_eq!(daily_extraterrestrial_wh_m2(355.0, 80.0), 0.0);
        // Source: recomputed from eq. 1.10.3 (regression guard): at the pole ωs = π and
        // H0 = 24 · G_on · sin δ. n = 172, Γ = 2π·171/365: Spencer's δ = 23.452046°, Spencer's
        // distance factor 1.000110 + 0.034221 cos Γ + 0.001280 sin Γ + 0.000719 cos 2Γ
        // + 0.000077 sin 2Γ = 0.967443, G_on = 1361 · 0.967443 = 1316.69 W/m²
        // → 12576.431 Wh/m² (recomputed by hand to 3 decimals: 5e-4).
        let factor = crate::physics::sun::earth_sun_distance_factor(172.0);
        assert!((factor - 0.967443).abs() <= 5e-7, "{factor}");
        let h = daily_extraterrestrial_wh_m2(172.0, 90.0);
        assert!((h - 12576.431).abs() <= 5e-4, "{h}");
    }

    #[test]
    fn hour_sun_agrees_with_the_weather_sanity_check() {
        // Source: the weather module's extraterrestrial mean (same textbook formulas, written
        // independently per sub-step): agreement to rounding.
        let start = year_calendar(2025).unwrap().0;
        for k in [
            0_i64,
            11,
            12,
            13,
            100 * 24 + 7,
            172 * 24 + 12,
            355 * 24 + 16,
        ] {
            let t = start + 3600 * k;
            for (lat, lon, utc) in [(45.0, 7.0, 1.0), (-33.9, 18.4, 2.0), (64.0, -21.9, 0.0)] {
                let ours = hour_sun(t, lat, lon, utc).extraterrestrial_w_m2;
                let theirs = crate::input::weather::mean_extraterrestrial_horizontal_w_m2(
                    t, 3600, 12, lat, lon, utc,
                );
                assert!(
                    (ours - theirs).abs() < 1e-6,
                    "{k} {lat}: {ours} vs {theirs}"
                );
            }
        }
    }

    #[test]
    fn aguiar_rows_are_probability_distributions() {
        // Source: Aguiar et al. 1988 matrices, printed to 3 decimals: each row sums to 1
        // within 10 × 0.0005 of rounding (largest deviation found: 0.003, class 2 row 0), and
        // every one of the 1000 entries is a probability. This does not compare entries with
        // the paper: a mistyped entry is caught only if it moves its row sum past 0.005.
        for (c, matrix) in AGUIAR_MATRICES.iter().enumerate() {
            for (r, row) in matrix.iter().enumerate() {
                let s: f64 = row.iter().sum();
                assert!((s - 1.0).abs() <= 0.005, "class {c} row {r}: {s}");
                assert!(row.iter().all(|&p| (0.0..=1.0).contains(&p)));
            }
            assert!(AGUIAR_KT_MIN[c] < AGUIAR_KT_MAX[c]);
        }
    }

    /// Mean and standard deviation of the stationary distribution of a class's chain
    /// (uniform within each state), by power iteration.
    fn stationary(class: usize) -> (f64, f64) {
        let m = &AGUIAR_MATRICES[class];
        let mut pi = [0.1; 10];
        for _ in 0..5000 {
            let mut next = [0.0; 10];
            for i in 0..10 {
                let total: f64 = m[i].iter().sum();
                for j in 0..10 {
                    next[j] += pi[i] * m[i][j] / total;
                }
            }
            pi = next;
        }
        let (lo, hi) = (AGUIAR_KT_MIN[class], AGUIAR_KT_MAX[class]);
        let step = (hi - lo) / 10.0;
        let mid = |j: usize| lo + (j as f64 + 0.5) * step;
        let mean: f64 = (0..10).map(|j| pi[j] * mid(j)).sum();
        let m2: f64 = (0..10)
            .map(|j| pi[j] * (mid(j).powi(2) + step * step / 12.0))
            .sum();
        (mean, (m2 - mean * mean).sqrt())
    }

    #[test]
    fn each_matrix_reproduces_its_own_class_of_monthly_clearness() {
        // Source: Aguiar et al. 1988: each matrix was built from months whose K̄T falls in its
        // class, so the chain's long-run mean must fall in that class too. A coarse check of
        // each matrix as a whole (it catches a matrix filed under the wrong class or wrong
        // Kt,min/Kt,max, not a single mistyped entry); no entry is compared with the paper.
        for class in 0..10 {
            let (mean, _) = stationary(class);
            let lo = if class == 0 {
                0.0
            } else {
                0.25 + 0.05 * class as f64
            };
            let hi = if class == 9 {
                1.0
            } else {
                0.30 + 0.05 * class as f64
            };
            assert!(mean > lo && mean <= hi, "class {class}: {mean}");
        }
    }

    #[test]
    fn aguiar_class_boundaries() {
        // Source: Aguiar et al. 1988 class limits (upper bounds inclusive).
        for (kt, class) in [
            (0.1, 0),
            (0.30, 0),
            (0.300_001, 1),
            (0.35, 1),
            (0.40, 2),
            (0.45, 3),
            (0.5, 4),
            (0.500_001, 5),
            (0.70, 8),
            (0.700_001, 9),
            (0.9, 9),
        ] {
            assert_eq!(aguiar_class(kt), class, "{kt}");
        }
    }

    #[test]
    fn aguiar_next_clearness_stays_in_the_class_range() {
        // Source: the procedure of Aguiar et al. 1988: u = 0 lands at the bottom of the
        // first possible state, u → 1 at the top of the last; every value inside the class.
        let (lo, hi) = (AGUIAR_KT_MIN[4], AGUIAR_KT_MAX[4]);
        assert!((aguiar_next_clearness(4, 0.0, 0.0) - lo).abs() < 1e-12);
        assert!((aguiar_next_clearness(4, 0.0, 1.0) - hi).abs() < 1e-9);
        // Class 8, row 0 has all its weight in state 8: Kt,min + 8Δ … + 9Δ.
        let step = (AGUIAR_KT_MAX[8] - AGUIAR_KT_MIN[8]) / 10.0;
        let v = aguiar_next_clearness(8, 0.0, 0.5);
        assert!((v - (AGUIAR_KT_MIN[8] + 8.5 * step)).abs() < 1e-12, "{v}");
        for i in 0..1000 {
            let u = i as f64 / 1000.0;
            for class in 0..10 {
                let v = aguiar_next_clearness(class, 0.5, u);
                assert!(v >= AGUIAR_KT_MIN[class] && v <= AGUIAR_KT_MAX[class]);
            }
        }
    }

    fn check_tag(kt: f64, expected: [f64; 6]) {
        let p = tag_params(kt);
        let got = [p.phi, p.lambda, p.eta, p.kappa, p.a, p.b];
        for (g, e) in got.iter().zip(expected) {
            assert!((g - e).abs() <= 5e-7, "kt {kt}: {got:?} vs {expected:?}");
        }
    }

    #[test]
    fn tag_parameters() {
        // Source: recomputed from Aguiar & Collares-Pereira 1992 (regression guard), to 6
        // decimals: φ, λ, η, κ, A, B.
        check_tag(0.5, [0.401741, 0.374396, 0.32, 0.44375, 0.089268, 0.5075]);
        check_tag(0.7, [0.326279, 0.594887, 0.256, 0.44137, 0.012081, 2.87662]);
        // Source: Aguiar & Collares-Pereira 1992 (text): clear days vary little at noon and
        // much more at low sun.
        let p = tag_params(0.7);
        assert!(p.sigma_kt(0.1) > 5.0 * p.sigma_kt(0.95));
    }

    #[test]
    fn fit_to_total_keeps_shape_and_caps() {
        // Source: recomputed from the rule (regression guard).
        let mut v = [1.0, 2.0, 3.0];
        fit_to_total(&mut v, &[10.0, 10.0, 10.0], 12.0);
        assert_eq!(v, [2.0, 4.0, 6.0]);
        let mut v = [1.0, 2.0, 3.0];
        fit_to_total(&mut v, &[10.0, 3.0, 10.0], 12.0);
        assert!((v[0] - 2.25).abs() < 1e-12 && v[1] == 3.0 && (v[2] - 6.75).abs() < 1e-12);
        let mut v = [1.0, 2.0];
        fit_to_total(&mut v, &[3.0, 4.0], 100.0);
        assert_eq!(v, [3.0, 4.0]);
        let mut v = [0.0, 0.0];
        fit_to_total(&mut v, &[1.0, 3.0], 2.0);
        assert_eq!(v, [0.5, 1.5]);
        let mut v = [1.0, 2.0];
        fit_to_total(&mut v, &[3.0, 4.0], 0.0);
        assert_eq!(v, [0.0, 0.0]);
    }

    #[test]
    fn parton_logan_cycle_hits_its_extremes_and_joins_the_next_day() {
        // Equator: ωs = 90° on every day, so sunrise 06:00 and sunset 18:00 solar time.
        let yesterday = DayCycle::new(1.0, 9.0, 80.0, 0.0);
        let today = DayCycle::new(0.0, 10.0, 81.0, 0.0);
        let tomorrow = DayCycle::new(2.0, 12.0, 82.0, 0.0);
        assert!((today.sunrise_h - 6.0).abs() < 1e-9 && (today.sunset_h - 18.0).abs() < 1e-9);
        let t = |h: f64| parton_logan_c(h, &yesterday, &today, &tomorrow);
        // Source: Parton & Logan 1981: minimum at sunrise + c. Maximum at solar noon + a: this
        // crate's variant of the day curve (the published one peaks at noon + a + c; see
        // parton_logan_day_curve_against_hand_values).
        assert!(t(6.0 - 0.17).abs() < 1e-12);
        assert!((t(12.0 + 1.86) - 10.0).abs() < 1e-12);
        // Source: recomputed from the formula (regression guard): at sunset
        // 10 · sin(π · 12.17 / 16.06) = 6.8961.
        assert!((t(18.0) - 6.8961).abs() < 5e-5);
        // Source: the rule (continuity): the night curve starts at the sunset temperature
        // and ends at the next minimum.
        assert!((t(18.0 + 1e-9) - t(18.0)).abs() < 1e-6);
        let next_morning = parton_logan_c(6.0 - 0.17 - 1e-9, &today, &tomorrow, &tomorrow);
        assert!((next_morning - 2.0).abs() < 1e-6, "{next_morning}");
        let early = t(6.0 - 0.17 - 1e-9);
        assert!(early.abs() < 1e-6, "{early}");
        // Cooling all night, never below the coming minimum.
        let mut last = t(18.0);
        for i in 1..=20 {
            let v = t(18.0 + 0.29 * i as f64);
            assert!(v < last && v > 2.0 - 1e-9, "{i}: {v}");
            last = v;
        }
    }

    #[test]
    fn parton_logan_day_curve_against_hand_values() {
        // Equator, day 81: sunrise 06:00, sunset 18:00 solar time, Y = 12 h; a = 1.86 h,
        // c = −0.17 h (air at 150 cm); Tmin 0 °C, Tmax 10 °C; m = t − (sunrise + c).
        let yesterday = DayCycle::new(1.0, 9.0, 80.0, 0.0);
        let today = DayCycle::new(0.0, 10.0, 81.0, 0.0);
        let tomorrow = DayCycle::new(2.0, 12.0, 82.0, 0.0);
        let t = |h: f64| parton_logan_c(h, &yesterday, &today, &tomorrow);
        // Source: Parton & Logan 1981 day curve T = Tmin + (Tmax − Tmin) sin(π m / (Y + 2a)),
        // computed by hand: at 09:00 (m = 3.17 h) 10 · sin(π · 3.17 / 15.72) = 5.91981; at
        // noon (m = 6.17 h) 9.43506; at sunset (m = 12.17 h) 6.51421; maximum at m = Y/2 + a,
        // i.e. noon + a + c = 13.69 h. This crate departs from it (documented in
        // notebooks-free-docs/method-synth.md): its denominator is Y + 2(a − c) = 16.06 h —
        // the published curve with a replaced by a − c = 2.03 h — so that the maximum falls at
        // noon + a = 13.86 h. Hand values of the published formula with that substitution:
        // 09:00 5.81119, noon 9.34535, 13:41:24 (published maximum) 9.99447, sunset 6.89607
        // (5e-6: printed to 5 decimals). The departure from the published curve is −0.10862,
        // −0.08971, −0.00553 and +0.38186 K at these instants.
        for (h, expected) in [
            (9.0, 5.811_19),
            (12.0, 9.345_35),
            (13.69, 9.994_47),
            (18.0, 6.896_07),
        ] {
            assert!((t(h) - expected).abs() <= 5e-6, "{h} h: {}", t(h));
        }
        // Source: Parton & Logan 1981 (both forms): the minimum at sunrise + c.
        assert!(t(5.83).abs() <= 1e-12);
    }

    #[test]
    fn seasonal_interpolation_hits_mid_month_values() {
        let months: Vec<usize> = year_calendar(2025).unwrap().1;
        let mids = mid_month_positions(&months);
        let v = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0];
        // Source: recomputed from the rule (regression guard): the middle of January
        // (day 15.5) gives January's value; 1 January 00:00 lies 16.5 of 31 days from the
        // middle of December to the middle of January.
        assert!((mids[0] - 15.5).abs() < 1e-12);
        assert!(seasonal(&v, &mids, 365.0, 15.5).abs() < 1e-12);
        assert!((seasonal(&v, &mids, 365.0, 0.0) - (11.0 - 11.0 * 15.5 / 31.0)).abs() < 1e-12);
        assert!((seasonal(&v, &mids, 365.0, mids[6]) - 6.0).abs() < 1e-12);
    }

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
            "air_mean_c for january = 273 is outside -60..=50 °C",
        );
        check_invalid(
            |i| i.wind_m_s.as_mut().unwrap()[1] = -1.0,
            "wind_m_s for february = -1 is outside 0..=30",
        );
        check_invalid(
            |i| i.latitude_deg = 95.0,
            "latitude_deg = 95 is outside -90..=90",
        );
        check_invalid(
            |i| i.utc_offset_h = 1.3,
            "utc_offset_h = 1.3 is outside -12..=14 in whole quarter hours",
        );
        check_invalid(|i| i.year = 1800, "year = 1800 is outside 1901..=2099");
        check_invalid(|i| i.name = "  ".to_string(), "name is empty");
        let e = base_inputs();
        let mut bad = e.clone();
        bad.ghi_kwh_m2_day[2] = -0.5;
        let err = bad.validate().unwrap_err();
        assert_eq!((err.key(), err.month()), (Some("ghi_kwh_m2_day"), Some(2)));
    }

    fn monthly_means(w: &Weather) -> ([f64; 12], [f64; 12], [f64; 12]) {
        let mut ghi = [0.0; 12];
        let mut temp = [0.0; 12];
        let mut wind = [0.0; 12];
        let mut hours = [0usize; 12];
        for k in 0..w.len() {
            let m = w.local_month(k) as usize - 1;
            ghi[m] += w.ghi_w_m2[k];
            temp[m] += w.air_temp_c[k];
            wind[m] += w.wind_m_s.as_ref().map_or(0.0, |v| v[k]);
            hours[m] += 1;
        }
        for m in 0..12 {
            ghi[m] /= hours[m] as f64 / 24.0 * 1000.0;
            temp[m] /= hours[m] as f64;
            wind[m] /= hours[m] as f64;
        }
        (ghi, temp, wind)
    }

    #[test]
    fn monthly_means_reproduce_the_inputs() {
        let inputs = base_inputs();
        let climate = inputs.validate().unwrap();
        let s = synthesize(&climate, 11, "t").unwrap();
        let w = &s.weather;
        assert_eq!(w.len(), 8760);
        assert!(w.warnings.is_empty(), "{:?}", w.warnings);
        let (ghi, temp, wind) = monthly_means(w);
        for m in 0..12 {
            // Source: the task's requirement (issue text): irradiation within 2 %, mean
            // temperature within 0.5 °C; wind (our own promise) within 0.05 m/s rounding.
            let g = inputs.ghi_kwh_m2_day[m];
            assert!(
                (ghi[m] - g).abs() <= 0.02 * g,
                "month {m}: ghi {} vs {g}",
                ghi[m]
            );
            let t = inputs.air_mean_c[m];
            assert!(
                (temp[m] - t).abs() <= 0.5,
                "month {m}: temp {} vs {t}",
                temp[m]
            );
            let v = inputs.wind_m_s.as_ref().unwrap()[m];
            assert!(
                (wind[m] - v).abs() <= 0.05,
                "month {m}: wind {} vs {v}",
                wind[m]
            );
        }
    }

    #[test]
    fn no_hour_exceeds_the_clear_sky_by_more_than_the_margin() {
        let climate = base_inputs().validate().unwrap();
        let s = synthesize(&climate, 3, "t").unwrap();
        let w = &s.weather;
        for (k, h) in climate.hours().iter().enumerate() {
            // Source: this crate's stated margin (CLEAR_SKY_MARGIN_FRAC, common practice) on
            // the Haurwitz 1945 clear sky, plus half of the 0.1 W/m² rounding.
            let cap = (1.0 + CLEAR_SKY_MARGIN_FRAC) * h.clear_sky_w_m2 + 0.05;
            assert!(w.ghi_w_m2[k] <= cap, "hour {k}: {} > {cap}", w.ghi_w_m2[k]);
            let (dni, dhi) = (
                w.dni_w_m2.as_ref().unwrap()[k],
                w.dhi_w_m2.as_ref().unwrap()[k],
            );
            assert!(dhi <= w.ghi_w_m2[k] && dni >= 0.0);
        }
        // Source: notebooks-free-docs/weather-format.md rule (1.5 × extraterrestrial) as the weather check applies it.
        w.check_against_extraterrestrial(45.0, 7.0, 1.0).unwrap();
    }

    #[test]
    fn same_seed_same_bytes_other_seed_other_bytes() {
        let climate = base_inputs().validate().unwrap();
        let a = weather_csv_text(&synthesize(&climate, 7, "a").unwrap().weather);
        let b = weather_csv_text(&synthesize(&climate, 7, "b").unwrap().weather);
        let c = weather_csv_text(&synthesize(&climate, 8, "c").unwrap().weather);
        assert_eq!(a, b);
        assert_ne!(a, c);
    }

    #[test]
    fn leap_years_have_366_days_and_range_inputs_work() {
        let mut inputs = base_inputs();
        inputs.year = 2024;
        inputs.air_min_c = None;
        inputs.air_max_c = None;
        inputs.air_range_dk = Some(vec![8.0; 12]);
        inputs.wind_m_s = None;
        let s = synthesize(&inputs.validate().unwrap(), 1, "t").unwrap();
        assert_eq!(s.weather.len(), 366 * 24);
        assert!(s.weather.wind_m_s.is_none());
        let (ghi, temp, _) = monthly_means(&s.weather);
        // Source: the task's requirement (2 %, 0.5 °C), February with 29 days.
        assert!((ghi[1] - 2.3).abs() <= 0.02 * 2.3 && (temp[1] - 2.0).abs() <= 0.5);
    }

    #[test]
    fn daily_clearness_spread_matches_the_published_matrices() {
        // A site whose every month has K̄T = 0.50 (class 4) at 35° N, where the clear-sky cap
        // rarely binds; five years (seeds) pooled.
        let mut inputs = base_inputs();
        inputs.latitude_deg = 35.0;
        let h0 = monthly_extraterrestrial_kwh_m2_day(2025, 35.0);
        inputs.ghi_kwh_m2_day = h0.iter().map(|h| 0.5 * h).collect();
        let climate = inputs.validate().unwrap();
        let kt_month = climate.clearness_frac();
        let mut ratios = Vec::new();
        for seed in 0..5 {
            let s = synthesize(&climate, seed, "t").unwrap();
            for (d, kt) in s.daily_clearness_frac.iter().enumerate() {
                ratios.push(kt / kt_month[climate.day_month()[d]]);
            }
        }
        let n = ratios.len() as f64;
        let mean = ratios.iter().sum::<f64>() / n;
        let sd = (ratios.iter().map(|r| (r - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        // Source: the task's requirement (monthly means within 2 %) pooled over the year.
        assert!((mean - 1.0).abs() <= 0.02, "{mean}");
        // Source: recomputed from the published Aguiar et al. 1988 matrix of class 4: the
        // coefficient of variation (standard deviation / mean) of daily Kt of its stationary
        // distribution. Tolerance 12 %: about three standard errors of a standard deviation
        // from ~1800 autocorrelated days, plus the clear-sky cap trimming the brightest days.
        let (m, s) = stationary(4);
        let expected = s / m;
        assert!((sd / expected - 1.0).abs() <= 0.12, "cv {sd} vs {expected}");
    }

    #[test]
    fn polar_sites_synthesize_without_trouble() {
        // Beyond the polar circles: months of polar night (no sun, input 0) and of midnight
        // sun, with the day length of the temperature cycle clamped.
        for latitude_deg in [78.0, -72.0] {
            let mut inputs = base_inputs();
            inputs.latitude_deg = latitude_deg;
            // K̄T = 0.2, or 90 % of the clear sky where the sun barely rises (Haurwitz is
            // tiny at a few degrees of elevation).
            inputs.ghi_kwh_m2_day = vec![0.0; 12];
            let dark = inputs.validate().unwrap();
            let mut clear = [0.0; 12];
            let mut days = [0.0; 12];
            for (d, &m) in dark.day_month().iter().enumerate() {
                clear[m] += dark.hours()[d * 24..(d + 1) * 24]
                    .iter()
                    .map(|h| h.clear_sky_w_m2 / 1000.0)
                    .sum::<f64>();
                days[m] += 1.0;
            }
            let h0 = monthly_extraterrestrial_kwh_m2_day(2025, latitude_deg);
            inputs.ghi_kwh_m2_day = (0..12)
                .map(|m| (0.2 * h0[m]).min(0.9 * clear[m] / days[m]))
                .collect();
            let climate = inputs.validate().unwrap();
            let s = synthesize(&climate, 5, "t").unwrap();
            let (ghi, temp, _) = monthly_means(&s.weather);
            for m in 0..12 {
                // Source: the task's requirement (2 %, 0.5 °C); polar night stays dark.
                let g = inputs.ghi_kwh_m2_day[m];
                assert!(
                    (ghi[m] - g).abs() <= (0.02 * g).max(1e-9),
                    "{latitude_deg} {m}"
                );
                assert!((temp[m] - inputs.air_mean_c[m]).abs() <= 0.5);
            }
        }
    }

    #[test]
    #[ignore = "timing, run by hand: cargo test --release --lib synth::tests::time -- --ignored --nocapture"]
    fn time_one_synthesized_year() {
        let inputs = base_inputs();
        let start = std::time::Instant::now();
        let climate = inputs.validate().unwrap();
        let validated = start.elapsed();
        let s = synthesize(&climate, 1, "t").unwrap();
        let total = start.elapsed();
        println!(
            "validate {:.1} ms, validate + synthesize {:.1} ms ({} rows)\n{}",
            validated.as_secs_f64() * 1e3,
            total.as_secs_f64() * 1e3,
            s.weather.len(),
            diagnostics(&climate, &s.weather)
        );
    }

    /// Monthly input vs output table (irradiation, mean, mean daily min and max) for eyeballing.
    fn diagnostics(climate: &MonthlyClimate, w: &Weather) -> String {
        let (ghi, temp, _) = monthly_means(w);
        let (lo_in, hi_in) = climate.air_min_max_c();
        let mut lo = [0.0; 12];
        let mut hi = [0.0; 12];
        let mut n = [0.0; 12];
        for d in 0..w.len() / 24 {
            let day = &w.air_temp_c[d * 24..(d + 1) * 24];
            let m = w.local_month(d * 24) as usize - 1;
            lo[m] += day.iter().cloned().fold(f64::INFINITY, f64::min);
            hi[m] += day.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            n[m] += 1.0;
        }
        let mut out = String::new();
        for m in 0..12 {
            out.push_str(&format!(
                "{:>2} ghi {:.2}/{:.2} kt {:.2} mean {:.2}/{:.2} min {:.1}/{:.1} max {:.1}/{:.1}\n",
                m + 1,
                climate.ghi_kwh_m2_day()[m],
                ghi[m],
                climate.clearness_frac()[m],
                climate.air_mean_c()[m],
                temp[m],
                lo_in[m],
                lo[m] / n[m],
                hi_in[m],
                hi[m] / n[m]
            ));
        }
        out
    }
}
