//! The validated weather series every later stage works on, and the rules that make it valid.
//!
//! A [`Weather`] holds one row per interval: the interval's start in local standard time
//! (fixed UTC offset, no daylight saving) and the interval-mean values, copied into plain
//! `Vec<f64>` for the simulation loop. An importer (our CSV in `io/weather_csv.rs`, later
//! others) fills an [`UncheckedWeather`] with the values as written plus the file line of
//! each row, and [`UncheckedWeather::validate`] applies the notebooks-free-docs/weather-format.md rules: stamps on the
//! grid, in order, without duplicates; short gaps repaired, long ones rejected; physical
//! ranges; small night-time negatives and small diffuse-above-global excesses clamped with a
//! counted warning. The one rule that needs the site (GHI against extraterrestrial
//! irradiance) is [`Weather::check_against_extraterrestrial`], called once the site is
//! resolved.
//!
//! This module deliberately knows no file format, reads no files, and does not merge the
//! header's site with the plan's (that is the caller's job). Its sun maths is the textbook
//! Spencer/Duffie & Beckman approximation, good enough for sanity limits and the demo
//! generator; the simulation uses the NREL SPA in `physics::sun`.

use std::fmt;

use crate::error::WeatherError;
use crate::physics::sun::{
    declination_spencer_deg, equation_of_time_min, extraterrestrial_normal_w_m2,
};
use crate::time::LocalTime;

/// Night-time irradiance down to this far below zero is sensor offset: clamped to 0 with a
/// counted warning. Anything more negative is an error.
///
/// # Source
/// Common practice, no source: thermopile pyranometers read −1 to −5 W/m² at night from
/// thermal offset; 10 W/m² leaves margin without hiding a sign error in a column.
pub const NEGATIVE_CLAMP_W_M2: f64 = 10.0;

/// Diffuse above global by at most this much is rounding or sensor mismatch: DHI is set to
/// GHI with a counted warning. More is an error (swapped columns are the usual cause).
///
/// # Source
/// Common practice, no source.
pub const DIFFUSE_EXCESS_CLAMP_W_M2: f64 = 5.0;

/// At most this many consecutive missing intervals are filled; a longer gap is an error.
pub const MAX_FILL_INTERVALS: i64 = 3;

/// GHI may not exceed this multiple of the interval-mean extraterrestrial horizontal
/// irradiance (notebooks-free-docs/weather-format.md).
pub const EXTRATERRESTRIAL_FACTOR: f64 = 1.5;

/// Added to the extraterrestrial limit so that twilight (sun just below the horizon, a few
/// W/m² of sky light) and the textbook sun's ~0.5° error do not reject real files.
///
/// # Source
/// Common practice, no source.
pub const EXTRATERRESTRIAL_ALLOWANCE_W_M2: f64 = 10.0;

/// Plausible air temperature, °C (notebooks-free-docs/weather-format.md).
pub const AIR_TEMP_RANGE_C: (f64, f64) = (-90.0, 60.0);
/// Plausible wind speed at 10 m, m/s.
pub const WIND_RANGE_M_S: (f64, f64) = (0.0, 75.0);
/// Ground albedo, fraction.
pub const ALBEDO_RANGE_FRAC: (f64, f64) = (0.0, 1.0);
/// Plausible station pressure, hPa (sea level to high mountain sites, with margin).
pub const PRESSURE_RANGE_HPA: (f64, f64) = (300.0, 1100.0);

/// Interval lengths accepted, minutes: the divisors of 60, so that every hour holds a whole
/// number of intervals and stamps fall on the clock's grid.
/// Most intervals (rows, after gap repair) in one weather series: 530,000, which holds ten
/// years of 10-minute data (526,032 intervals) or one year of 1-minute data (527,040 in a
/// leap year). Memory grows with the number of intervals (about 2 kB each for a plan like
/// the demo); notebooks-free-docs/limits-and-file-safety.md gives the measured figures.
pub const MAX_INTERVALS: usize = 530_000;

/// Refuses a series longer than [`MAX_INTERVALS`].
///
/// # Errors
/// [`WeatherError::TooManyIntervals`] naming the file.
pub fn check_interval_count(file: &str, count: usize) -> Result<(), WeatherError> {
    if count > MAX_INTERVALS {
        return Err(WeatherError::TooManyIntervals {
            file: file.to_string(),
            count,
            max: MAX_INTERVALS,
        });
    }
    Ok(())
}

/// The first control character other than tab (and the line breaks that end lines) in a
/// text, as (1-based line, 1-based column in characters, code point).
pub fn first_control_character(text: &str) -> Option<(usize, usize, u32)> {
    let lines: Vec<&str> = text.split('\n').collect();
    let last = lines.len() - 1;
    for (i, line) in lines.into_iter().enumerate() {
        // A carriage return ends a line only before a line feed (CRLF); a lone one, even at
        // the end of the text, is a control character.
        let line = if i < last {
            line.strip_suffix('\r').unwrap_or(line)
        } else {
            line
        };
        if let Some((col, c)) = line
            .chars()
            .enumerate()
            .find(|(_, c)| c.is_control() && *c != '\t')
        {
            return Some((i + 1, col + 1, c as u32));
        }
    }
    None
}

pub const ACCEPTED_INTERVALS_MIN: [i64; 12] = [1, 2, 3, 4, 5, 6, 10, 12, 15, 20, 30, 60];

const SECONDS_PER_DAY: i64 = 86_400;

/// Whether a stamp marks the start or the end of the interval its row averages.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum StampConvention {
    /// `12:00` is the mean over 12:00–13:00 (hourly).
    Start,
    /// `12:00` is the mean over 11:00–12:00 (hourly).
    End,
}

impl StampConvention {
    /// The header spelling: `start` or `end`.
    pub fn as_str(self) -> &'static str {
        match self {
            StampConvention::Start => "start",
            StampConvention::End => "end",
        }
    }
}

/// Site facts a weather file may carry in its header; each may instead come from the plan.
///
/// Two headers are equal when they give the same facts, wherever in the file they stand.
#[derive(Clone, Debug, Default)]
pub struct WeatherSite {
    pub name: Option<String>,
    pub latitude_deg: Option<f64>,
    pub longitude_deg: Option<f64>,
    pub elevation_m: Option<f64>,
    pub utc_offset_h: Option<f64>,
    /// The file line that gave each site key (`latitude_deg`, …), for messages; empty when
    /// the weather was made in memory.
    pub key_lines: Vec<(&'static str, usize)>,
}

impl PartialEq for WeatherSite {
    fn eq(&self, other: &Self) -> bool {
        self.name == other.name
            && self.latitude_deg == other.latitude_deg
            && self.longitude_deg == other.longitude_deg
            && self.elevation_m == other.elevation_m
            && self.utc_offset_h == other.utc_offset_h
    }
}

/// A repair made while reading, counted; the text tells the user what to do about it.
#[derive(Clone, Debug, PartialEq)]
pub enum WeatherWarning {
    /// Small negative irradiance (night-time sensor offset) set to 0.
    ClampedNegativeIrradiance {
        column: String,
        count: usize,
        most_negative_w_m2: f64,
    },
    /// Diffuse slightly above global: diffuse set to global.
    ClampedDiffuseAboveGlobal {
        count: usize,
        largest_excess_w_m2: f64,
    },
    /// Missing intervals filled (see [`UncheckedWeather::validate`] for how).
    FilledGaps {
        gaps: usize,
        intervals: usize,
        first_missing: String,
    },
    /// Months with no interval at all.
    MonthsMissing { missing: Vec<u32> },
}

impl fmt::Display for WeatherWarning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            WeatherWarning::ClampedNegativeIrradiance {
                column,
                count,
                most_negative_w_m2,
            } => write!(
                f,
                "clamped {count} small negative {column} values to 0 (lowest {most_negative_w_m2}); \
                 usual night-time sensor offset, nothing to do unless they occur by day"
            ),
            WeatherWarning::ClampedDiffuseAboveGlobal {
                count,
                largest_excess_w_m2,
            } => write!(
                f,
                "set dhi_w_m2 to ghi_w_m2 in {count} rows where diffuse exceeded global by up to \
                 {largest_excess_w_m2} W/m²; check the source if this is more than a few rows"
            ),
            WeatherWarning::FilledGaps {
                gaps,
                intervals,
                first_missing,
            } => write!(
                f,
                "filled {intervals} missing intervals in {gaps} gaps (first at {first_missing}); \
                 irradiance from the same clock time on the neighbouring days, other values by \
                 linear interpolation; supply the rows for exact results"
            ),
            WeatherWarning::MonthsMissing { missing } => {
                let names: Vec<&str> = missing
                    .iter()
                    .map(|m| MONTH_NAMES[(*m as usize).clamp(1, 12) - 1])
                    .collect();
                write!(
                    f,
                    "the weather covers {} of 12 months (missing: {}); monthly results cover only \
                     the months present and annual totals are not a full year",
                    12 - missing.len(),
                    names.join(", ")
                )
            }
        }
    }
}

const MONTH_NAMES: [&str; 12] = [
    "jan", "feb", "mar", "apr", "may", "jun", "jul", "aug", "sep", "oct", "nov", "dec",
];

/// A validated weather series: one row per interval, in time order, on a regular grid.
#[derive(Clone, Debug)]
pub struct Weather {
    /// File name (as given) for messages.
    pub source: String,
    pub site: WeatherSite,
    /// Interval length, seconds (60..=3600, divides 3600).
    pub interval_s: i64,
    /// How the file's stamps were written (kept so the file can be written back the same way).
    pub stamp: StampConvention,
    /// START of each interval in local standard time, seconds since 1970-01-01T00:00 of that
    /// local clock (naive); UTC = this − offset·3600. Strictly increasing by `interval_s`.
    pub local_start_s: Vec<i64>,
    /// 1-based file line each row came from; 0 for a row not read from a file (filled in to
    /// repair a gap, or generated).
    pub source_line: Vec<usize>,
    pub ghi_w_m2: Vec<f64>,
    pub dni_w_m2: Option<Vec<f64>>,
    pub dhi_w_m2: Option<Vec<f64>>,
    pub air_temp_c: Vec<f64>,
    pub wind_m_s: Option<Vec<f64>>,
    pub albedo_frac: Option<Vec<f64>>,
    pub pressure_hpa: Option<Vec<f64>>,
    /// Repairs made while reading, counted.
    pub warnings: Vec<WeatherWarning>,
}

impl Weather {
    /// Number of intervals.
    pub fn len(&self) -> usize {
        self.local_start_s.len()
    }

    /// True when there are no intervals (never for a validated series).
    pub fn is_empty(&self) -> bool {
        self.local_start_s.is_empty()
    }

    /// Calendar month 1..=12 of the interval's START in local standard time.
    ///
    /// The start (not the midpoint) is used so that an hourly row always belongs to the
    /// month of its own hour: with `stamp = end`, the row stamped `2026-01-01T00:00`
    /// covers 23:00–24:00 on 31 December and counts in December.
    pub fn local_month(&self, k: usize) -> u32 {
        LocalTime(self.local_start_s[k]).civil().1
    }

    /// Hour of day 0..=23 of the interval's START in local standard time.
    pub fn local_hour(&self, k: usize) -> u32 {
        (self.local_start_s[k].rem_euclid(SECONDS_PER_DAY) / 3600) as u32
    }

    /// Day of year 1..=366 of the interval's START in local standard time.
    pub fn local_day_of_year(&self, k: usize) -> u32 {
        LocalTime(self.local_start_s[k]).day_of_year()
    }

    /// Which months (index 0 = January) hold at least one interval start.
    pub fn months_covered(&self) -> [bool; 12] {
        let mut covered = [false; 12];
        for k in 0..self.len() {
            covered[self.local_month(k) as usize - 1] = true;
        }
        covered
    }

    /// Start of interval `k` in UTC, seconds since 1970-01-01T00:00:00Z.
    ///
    /// # Formula
    /// t_utc = t_local − offset_h · 3600 (offset rounded to the second).
    pub fn utc_start_s(&self, k: usize, utc_offset_h: f64) -> i64 {
        self.local_start_s[k] - (utc_offset_h * 3600.0).round() as i64
    }

    /// The stamp of row `k` as the file writes it (start or end per [`Weather::stamp`]).
    pub fn stamp_text(&self, k: usize) -> String {
        let shift = match self.stamp {
            StampConvention::Start => 0,
            StampConvention::End => self.interval_s,
        };
        LocalTime(self.local_start_s[k] + shift).format()
    }

    /// notebooks-free-docs/weather-format.md rule that needs the sun: GHI above 1.5 × extraterrestrial horizontal
    /// irradiance is an error naming the line.
    ///
    /// # Formula
    /// limit = 1.5 · (1/N) Σⱼ G_on(n) · max(cos zⱼ, 0) + 10 W/m², over N equal sub-steps of
    /// the interval (N = interval_s / 300, at least 4; sub-step midpoints), with
    /// cos z = sin φ sin δ + cos φ cos δ cos ω,
    /// ω = 15° · (solar time − 12 h),
    /// solar time = clock time + [4 min/° · (λ − 15° · offset_h) + E] (λ east-positive),
    /// n = local day of year. The 10 W/m² allowance is [`EXTRATERRESTRIAL_ALLOWANCE_W_M2`].
    ///
    /// # Source
    /// G_on: Duffie & Beckman 4th ed. eq. 1.4.1b (Spencer 1971); δ: eq. 1.6.1b; E: eq. 1.5.3;
    /// solar time: eq. 1.5.2; cos z: eq. 1.6.5. Factor 1.5: notebooks-free-docs/weather-format.md.
    ///
    /// # Validity
    /// The textbook sun is within about 0.5° of the true position: ample for a limit with
    /// a factor of 1.5. Rows filled to repair a gap are checked too (they name line 0 and
    /// the stamp).
    ///
    /// # Errors
    /// [`WeatherError::BadSite`] for a latitude outside −90..=90, longitude outside
    /// −180..=180 or offset outside −12..=14 h; [`WeatherError::AboveExtraterrestrial`] for
    /// the first row above the limit.
    pub fn check_against_extraterrestrial(
        &self,
        latitude_deg: f64,
        longitude_deg: f64,
        utc_offset_h: f64,
    ) -> Result<(), WeatherError> {
        let site_checks = [
            ("latitude_deg", latitude_deg, -90.0, 90.0),
            ("longitude_deg", longitude_deg, -180.0, 180.0),
            ("utc_offset_h", utc_offset_h, -12.0, 14.0),
        ];
        for (what, value, lo, hi) in site_checks {
            if !(value.is_finite() && (lo..=hi).contains(&value)) {
                return Err(WeatherError::BadSite {
                    file: self.source.clone(),
                    what: what.to_string(),
                    value,
                    range: format!("{lo} to {hi}"),
                });
            }
        }
        let substeps = (self.interval_s / 300).max(4);
        for k in 0..self.len() {
            let eth = mean_extraterrestrial_horizontal_w_m2(
                self.local_start_s[k],
                self.interval_s,
                substeps,
                latitude_deg,
                longitude_deg,
                utc_offset_h,
            );
            let limit = EXTRATERRESTRIAL_FACTOR * eth + EXTRATERRESTRIAL_ALLOWANCE_W_M2;
            if self.ghi_w_m2[k] > limit {
                return Err(WeatherError::AboveExtraterrestrial {
                    file: self.source.clone(),
                    line: self.source_line[k],
                    stamp: self.stamp_text(k),
                    ghi_w_m2: self.ghi_w_m2[k],
                    limit_w_m2: limit,
                });
            }
        }
        Ok(())
    }
}

/// Weather as an importer read it: values as written, not yet checked or repaired.
///
/// Importers check syntax (numbers parse, required cells are present, NaN/inf are
/// rejected with the line); [`UncheckedWeather::validate`] checks meaning. All column
/// vectors have the length of `stamp_s`.
#[derive(Clone, Debug)]
pub struct UncheckedWeather {
    pub source: String,
    pub site: WeatherSite,
    pub interval_s: i64,
    pub stamp: StampConvention,
    /// Each row's stamp as written (start or end per `stamp`), naive local seconds.
    pub stamp_s: Vec<i64>,
    /// 1-based file line of each row.
    pub line: Vec<usize>,
    pub ghi_w_m2: Vec<f64>,
    pub dni_w_m2: Option<Vec<f64>>,
    pub dhi_w_m2: Option<Vec<f64>>,
    pub air_temp_c: Vec<f64>,
    pub wind_m_s: Option<Vec<f64>>,
    pub albedo_frac: Option<Vec<f64>>,
    pub pressure_hpa: Option<Vec<f64>>,
}

/// Per-row value checks: which column, its plausible range, and a hint for the message.
struct RangeRule {
    column: &'static str,
    lo: f64,
    hi: f64,
    hint: &'static str,
}

const AIR_TEMP_RULE: RangeRule = RangeRule {
    column: "air_temp_c",
    lo: AIR_TEMP_RANGE_C.0,
    hi: AIR_TEMP_RANGE_C.1,
    hint: " °C (is it in kelvin or fahrenheit?)",
};
const WIND_RULE: RangeRule = RangeRule {
    column: "wind_m_s",
    lo: WIND_RANGE_M_S.0,
    hi: WIND_RANGE_M_S.1,
    hint: " m/s (is it in km/h or knots?)",
};
const ALBEDO_RULE: RangeRule = RangeRule {
    column: "albedo_frac",
    lo: ALBEDO_RANGE_FRAC.0,
    hi: ALBEDO_RANGE_FRAC.1,
    hint: " (a fraction, not a percentage)",
};
const PRESSURE_RULE: RangeRule = RangeRule {
    column: "pressure_hpa",
    lo: PRESSURE_RANGE_HPA.0,
    hi: PRESSURE_RANGE_HPA.1,
    hint: " hPa (is it in Pa or kPa?)",
};

impl UncheckedWeather {
    /// Checks every notebooks-free-docs/weather-format.md rule that needs no site, repairs what can be repaired, and
    /// returns the validated series.
    ///
    /// Rules, in file order (the first violation is reported):
    /// - stamps on the `interval_s` grid counted from local midnight; strictly increasing
    ///   (a repeat is a duplicate, a step back is out of order);
    /// - a gap of up to [`MAX_FILL_INTERVALS`] missing intervals is filled, a longer one
    ///   is an error. Irradiance in a filled interval is the mean of the same clock time one
    ///   day before and one day after (whichever exist and are real rows) — a straight line
    ///   across sunset would put sunshine into the night; with neither day available it
    ///   falls back to linear interpolation. Temperature, wind, albedo and pressure are
    ///   interpolated linearly between the rows bounding the gap;
    /// - every value finite; air temperature in −90..=60 °C, wind 0..=75 m/s, albedo 0..=1,
    ///   pressure 300..=1100 hPa;
    /// - irradiance ≥ −10 W/m² clamped to 0 (counted), below that an error; DNI at most the
    ///   extraterrestrial normal irradiance of that day + 10 W/m²;
    /// - DHI above GHI by ≤ 5 W/m² set to GHI (counted), by more an error;
    /// - fewer than 12 months covered: a warning.
    ///
    /// # Errors
    /// One [`WeatherError`] naming the file, line, column and value of the first problem.
    pub fn validate(mut self) -> Result<Weather, WeatherError> {
        self.check_shape()?;
        let shift = match self.stamp {
            StampConvention::Start => 0,
            StampConvention::End => self.interval_s,
        };
        let mut clamps = Clamps::default();
        // (index of the row after the gap, number of missing intervals)
        let mut gaps: Vec<(usize, i64)> = Vec::new();
        for k in 0..self.stamp_s.len() {
            let missing = self.check_stamp(k)?;
            if missing > 0 {
                gaps.push((k, missing));
            }
            self.clamp_irradiance(k, shift, &mut clamps)?;
            self.clamp_diffuse(k, &mut clamps)?;
            self.check_other_ranges(k)?;
        }
        let warnings = clamps.warnings();
        let mut weather = self.into_weather(shift, warnings);
        if !gaps.is_empty() {
            let added: i64 = gaps.iter().map(|g| g.1).sum();
            check_interval_count(&weather.source, weather.len() + added as usize)?;
            repair_gaps(&mut weather, &gaps, shift);
        }
        warn_missing_months(&mut weather);
        Ok(weather)
    }

    /// The series as a whole: some rows, an accepted interval, columns of one length, DNI
    /// and DHI both or neither.
    fn check_shape(&self) -> Result<(), WeatherError> {
        let file = self.source.clone();
        let n = self.stamp_s.len();
        if n == 0 {
            return Err(WeatherError::NoData { file });
        }
        check_interval_count(&file, n)?;
        let interval_s = self.interval_s;
        if !(interval_s > 0 && interval_s % 60 == 0 && check_interval_min(interval_s / 60).is_ok())
        {
            return Err(WeatherError::BadInterval { file, interval_s });
        }
        let lengths_ok = [
            Some(self.line.len()),
            Some(self.ghi_w_m2.len()),
            self.dni_w_m2.as_ref().map(Vec::len),
            self.dhi_w_m2.as_ref().map(Vec::len),
            Some(self.air_temp_c.len()),
            self.wind_m_s.as_ref().map(Vec::len),
            self.albedo_frac.as_ref().map(Vec::len),
            self.pressure_hpa.as_ref().map(Vec::len),
        ]
        .iter()
        .flatten()
        .all(|&len| len == n);
        if !lengths_ok {
            return Err(WeatherError::Csv {
                file,
                message: "columns of different lengths (importer bug)".to_string(),
            });
        }
        if self.dni_w_m2.is_some() != self.dhi_w_m2.is_some() {
            let (present, missing) = if self.dni_w_m2.is_some() {
                ("dni_w_m2", "dhi_w_m2")
            } else {
                ("dhi_w_m2", "dni_w_m2")
            };
            return Err(WeatherError::UnpairedBeamDiffuse {
                file,
                line: self.line[0],
                present: present.to_string(),
                missing: missing.to_string(),
            });
        }
        Ok(())
    }

    /// Row `k`'s stamp: on the grid, after the previous row's, and at most
    /// [`MAX_FILL_INTERVALS`] intervals after it. Returns how many intervals are missing
    /// before row `k` (0 for the first row).
    fn check_stamp(&self, k: usize) -> Result<i64, WeatherError> {
        let file = self.source.clone();
        let interval_s = self.interval_s;
        let line = self.line[k];
        let stamp = self.stamp_s[k];
        if stamp.rem_euclid(interval_s) != 0 {
            return Err(WeatherError::OffGrid {
                file,
                line,
                value: LocalTime(stamp).format(),
                interval_min: interval_s / 60,
            });
        }
        if k == 0 {
            return Ok(0);
        }
        let previous = self.stamp_s[k - 1];
        let step = stamp - previous;
        if step == 0 {
            return Err(WeatherError::DuplicateStamp {
                file,
                line,
                value: LocalTime(stamp).format(),
                first_line: self.line[k - 1],
            });
        }
        if step < 0 {
            return Err(WeatherError::OutOfOrder {
                file,
                line,
                value: LocalTime(stamp).format(),
                previous: LocalTime(previous).format(),
                previous_line: self.line[k - 1],
            });
        }
        let missing = step / interval_s - 1;
        if missing > MAX_FILL_INTERVALS {
            return Err(WeatherError::Gap {
                file,
                line,
                value: LocalTime(stamp).format(),
                previous: LocalTime(previous).format(),
                missing,
                max_fill: MAX_FILL_INTERVALS,
            });
        }
        Ok(missing)
    }

    /// Row `k`'s GHI, DNI and DHI: finite; small negatives clamped to 0 and counted, larger
    /// ones rejected; DNI at most the extraterrestrial normal irradiance of the day (`shift`
    /// turns the stamp into the interval's start) plus the allowance.
    fn clamp_irradiance(
        &mut self,
        k: usize,
        shift: i64,
        clamps: &mut Clamps,
    ) -> Result<(), WeatherError> {
        let line = self.line[k];
        let day_of_year = LocalTime(self.stamp_s[k] - shift).day_of_year() as f64;
        let dni_max_w_m2 =
            extraterrestrial_normal_w_m2(day_of_year) + EXTRATERRESTRIAL_ALLOWANCE_W_M2;
        let irradiance: [(&str, Option<&mut Vec<f64>>, f64); 3] = [
            ("ghi_w_m2", Some(&mut self.ghi_w_m2), f64::INFINITY),
            ("dni_w_m2", self.dni_w_m2.as_mut(), dni_max_w_m2),
            ("dhi_w_m2", self.dhi_w_m2.as_mut(), f64::INFINITY),
        ];
        for (slot, (column, values, max_w_m2)) in irradiance.into_iter().enumerate() {
            let Some(values) = values else { continue };
            let value = values[k];
            check_finite(&self.source, line, column, value)?;
            if value < -NEGATIVE_CLAMP_W_M2 {
                return Err(WeatherError::NegativeIrradiance {
                    file: self.source.clone(),
                    line,
                    column: column.to_string(),
                    value,
                    tolerance_w_m2: NEGATIVE_CLAMP_W_M2,
                });
            }
            if value < 0.0 {
                clamps.negatives[slot].0 += 1;
                clamps.negatives[slot].1 = clamps.negatives[slot].1.min(value);
                values[k] = 0.0;
            }
            if value > max_w_m2 {
                return Err(WeatherError::OutOfRange {
                    file: self.source.clone(),
                    line,
                    column: column.to_string(),
                    value,
                    range: format!("0 to {max_w_m2:.0}"),
                    hint: " W/m² (extraterrestrial normal irradiance that day, plus 10)"
                        .to_string(),
                });
            }
        }
        Ok(())
    }

    /// Row `k`'s DHI against GHI: above by at most [`DIFFUSE_EXCESS_CLAMP_W_M2`] it is set
    /// to GHI and counted, by more rejected.
    fn clamp_diffuse(&mut self, k: usize, clamps: &mut Clamps) -> Result<(), WeatherError> {
        let Some(dhi) = self.dhi_w_m2.as_mut() else {
            return Ok(());
        };
        let ghi = self.ghi_w_m2[k];
        let excess = dhi[k] - ghi;
        if excess > DIFFUSE_EXCESS_CLAMP_W_M2 {
            return Err(WeatherError::DiffuseAboveGlobal {
                file: self.source.clone(),
                line: self.line[k],
                dhi_w_m2: dhi[k],
                ghi_w_m2: ghi,
                tolerance_w_m2: DIFFUSE_EXCESS_CLAMP_W_M2,
            });
        }
        if excess > 0.0 {
            clamps.diffuse.0 += 1;
            clamps.diffuse.1 = clamps.diffuse.1.max(excess);
            dhi[k] = ghi;
        }
        Ok(())
    }

    /// Row `k`'s air temperature, and wind, albedo and pressure where given, within their
    /// plausible ranges.
    fn check_other_ranges(&self, k: usize) -> Result<(), WeatherError> {
        let (file, line) = (&self.source, self.line[k]);
        check_range(file, line, &AIR_TEMP_RULE, self.air_temp_c[k])?;
        for (rule, values) in [
            (&WIND_RULE, &self.wind_m_s),
            (&ALBEDO_RULE, &self.albedo_frac),
            (&PRESSURE_RULE, &self.pressure_hpa),
        ] {
            if let Some(values) = values {
                check_range(file, line, rule, values[k])?;
            }
        }
        Ok(())
    }

    /// The checked columns as a [`Weather`], stamps moved to the interval's start.
    fn into_weather(self, shift: i64, warnings: Vec<WeatherWarning>) -> Weather {
        let local_start_s: Vec<i64> = self.stamp_s.iter().map(|s| s - shift).collect();
        Weather {
            source: self.source,
            site: self.site,
            interval_s: self.interval_s,
            stamp: self.stamp,
            local_start_s,
            source_line: self.line,
            ghi_w_m2: self.ghi_w_m2,
            dni_w_m2: self.dni_w_m2,
            dhi_w_m2: self.dhi_w_m2,
            air_temp_c: self.air_temp_c,
            wind_m_s: self.wind_m_s,
            albedo_frac: self.albedo_frac,
            pressure_hpa: self.pressure_hpa,
            warnings,
        }
    }
}

/// What [`UncheckedWeather::validate`] clamped, for the warnings.
#[derive(Default)]
struct Clamps {
    /// Per irradiance column (GHI, DNI, DHI): values clamped to 0, and the most negative.
    negatives: [(usize, f64); 3],
    /// DHI values set to GHI, and the largest excess.
    diffuse: (usize, f64),
}

impl Clamps {
    /// One warning per irradiance column with clamped negatives, then one for diffuse.
    fn warnings(&self) -> Vec<WeatherWarning> {
        let mut warnings = Vec::new();
        for (slot, column) in ["ghi_w_m2", "dni_w_m2", "dhi_w_m2"].iter().enumerate() {
            let (count, most_negative_w_m2) = self.negatives[slot];
            if count > 0 {
                warnings.push(WeatherWarning::ClampedNegativeIrradiance {
                    column: column.to_string(),
                    count,
                    most_negative_w_m2,
                });
            }
        }
        if self.diffuse.0 > 0 {
            warnings.push(WeatherWarning::ClampedDiffuseAboveGlobal {
                count: self.diffuse.0,
                largest_excess_w_m2: self.diffuse.1,
            });
        }
        warnings
    }
}

/// Fills the `gaps` (index of the row after the gap, missing intervals; not empty) and
/// warns with their number, the intervals filled and the first missing stamp as the file
/// writes it (`shift` turns an interval's start back into an end stamp).
fn repair_gaps(weather: &mut Weather, gaps: &[(usize, i64)], shift: i64) {
    let first_missing = weather.local_start_s[gaps[0].0 - 1] + weather.interval_s + shift;
    let intervals: i64 = gaps.iter().map(|g| g.1).sum();
    fill_gaps(weather, gaps);
    weather.warnings.push(WeatherWarning::FilledGaps {
        gaps: gaps.len(),
        intervals: intervals as usize,
        first_missing: LocalTime(first_missing).format(),
    });
}

/// Warns when some calendar months have no row.
fn warn_missing_months(weather: &mut Weather) {
    let covered = weather.months_covered();
    if covered.iter().any(|c| !c) {
        let missing = (1..=12u32).filter(|m| !covered[*m as usize - 1]).collect();
        weather
            .warnings
            .push(WeatherWarning::MonthsMissing { missing });
    }
}

/// Checks an `interval_min` header value.
///
/// # Errors
/// A lower-case reason when `minutes` does not divide 60.
pub fn check_interval_min(minutes: i64) -> Result<(), String> {
    if ACCEPTED_INTERVALS_MIN.contains(&minutes) {
        Ok(())
    } else {
        Err("must divide 60: one of 1, 2, 3, 4, 5, 6, 10, 12, 15, 20, 30, 60".to_string())
    }
}

fn check_finite(file: &str, line: usize, column: &str, value: f64) -> Result<(), WeatherError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(WeatherError::NotFinite {
            file: file.to_string(),
            line,
            column: column.to_string(),
            value: value.to_string(),
        })
    }
}

fn check_range(file: &str, line: usize, rule: &RangeRule, value: f64) -> Result<(), WeatherError> {
    check_finite(file, line, rule.column, value)?;
    if (rule.lo..=rule.hi).contains(&value) {
        Ok(())
    } else {
        Err(WeatherError::OutOfRange {
            file: file.to_string(),
            line,
            column: rule.column.to_string(),
            value,
            range: format!("{} to {}", rule.lo, rule.hi),
            hint: rule.hint.to_string(),
        })
    }
}

/// Inserts the missing rows of each gap and fills them (rules in
/// [`UncheckedWeather::validate`]). `gaps` holds (index of the row after the gap, count)
/// in the unfilled series.
fn fill_gaps(w: &mut Weather, gaps: &[(usize, i64)]) {
    let (starts, lines, source_row) = rows_with_gaps(w, gaps);
    let n_new = starts.len();
    let bounds = gap_bounds(&source_row);

    // Same clock time on the neighbouring days, only where that row is a real one.
    let day_neighbours = |j: usize| -> Vec<usize> {
        [starts[j] - SECONDS_PER_DAY, starts[j] + SECONDS_PER_DAY]
            .iter()
            .filter_map(|t| starts.binary_search(t).ok())
            .filter(|&m| source_row[m].is_some())
            .collect()
    };
    let neighbours: Vec<Vec<usize>> = (0..n_new)
        .map(|j| {
            if source_row[j].is_none() {
                day_neighbours(j)
            } else {
                Vec::new()
            }
        })
        .collect();

    let spread = |old: &[f64]| -> Vec<f64> {
        source_row
            .iter()
            .map(|r| r.map_or(f64::NAN, |k| old[k]))
            .collect()
    };
    let fill_linear = |values: &mut Vec<f64>| {
        for (j, b) in bounds.iter().enumerate() {
            if let Some((lo, hi, frac)) = *b {
                values[j] = values[lo] + (values[hi] - values[lo]) * frac;
            }
        }
    };
    let fill_irradiance = |values: &mut Vec<f64>| {
        for (j, b) in bounds.iter().enumerate() {
            if let Some((lo, hi, frac)) = *b {
                let near = &neighbours[j];
                values[j] = if near.is_empty() {
                    values[lo] + (values[hi] - values[lo]) * frac
                } else {
                    near.iter().map(|&m| values[m]).sum::<f64>() / near.len() as f64
                };
            }
        }
    };
    let irradiance = |old: &[f64]| {
        let mut v = spread(old);
        fill_irradiance(&mut v);
        v
    };
    let linear = |old: &[f64]| {
        let mut v = spread(old);
        fill_linear(&mut v);
        v
    };

    w.ghi_w_m2 = irradiance(&w.ghi_w_m2);
    w.dni_w_m2 = w.dni_w_m2.as_deref().map(irradiance);
    w.dhi_w_m2 = w.dhi_w_m2.as_deref().map(irradiance);
    w.air_temp_c = linear(&w.air_temp_c);
    w.wind_m_s = w.wind_m_s.as_deref().map(linear);
    w.albedo_frac = w.albedo_frac.as_deref().map(linear);
    w.pressure_hpa = w.pressure_hpa.as_deref().map(linear);
    w.local_start_s = starts;
    w.source_line = lines;
}

/// The filled series' stamps, file lines (0 for an inserted row) and, per row, the row of
/// the unfilled series it comes from (`None` for an inserted row).
fn rows_with_gaps(
    w: &Weather,
    gaps: &[(usize, i64)],
) -> (Vec<i64>, Vec<usize>, Vec<Option<usize>>) {
    let n_old = w.len();
    let added: i64 = gaps.iter().map(|g| g.1).sum();
    let n_new = n_old + added as usize;
    let mut starts = Vec::with_capacity(n_new);
    let mut lines = Vec::with_capacity(n_new);
    let mut source_row: Vec<Option<usize>> = Vec::with_capacity(n_new);
    let mut gap_iter = gaps.iter().peekable();
    for k in 0..n_old {
        if let Some(&&(after, missing)) = gap_iter.peek() {
            if after == k {
                for j in 1..=missing {
                    starts.push(w.local_start_s[k - 1] + j * w.interval_s);
                    lines.push(0);
                    source_row.push(None);
                }
                gap_iter.next();
            }
        }
        starts.push(w.local_start_s[k]);
        lines.push(w.source_line[k]);
        source_row.push(Some(k));
    }
    (starts, lines, source_row)
}

/// For each inserted row, the real rows bounding its gap and its fraction of the way from
/// the first to the second; `None` for real rows.
fn gap_bounds(source_row: &[Option<usize>]) -> Vec<Option<(usize, usize, f64)>> {
    let n_new = source_row.len();
    let mut bounds: Vec<Option<(usize, usize, f64)>> = vec![None; n_new];
    let mut i = 0;
    while i < n_new {
        if source_row[i].is_none() {
            let lo = i - 1;
            let mut hi = i;
            while source_row[hi].is_none() {
                hi += 1;
            }
            let span = (hi - lo) as f64;
            for (j, b) in bounds.iter_mut().enumerate().take(hi).skip(i) {
                *b = Some((lo, hi, (j - lo) as f64 / span));
            }
            i = hi;
        }
        i += 1;
    }
    bounds
}

/// Mean extraterrestrial irradiance on a horizontal surface over one interval, W/m².
///
/// # Formula
/// (1/N) Σⱼ G_on(n) · max(cos zⱼ, 0), sub-step midpoints tⱼ = t₀ + (j + ½) Δt / N; see
/// [`cos_zenith_textbook`].
///
/// # Source
/// Duffie & Beckman 4th ed. eqs. 1.4.1b, 1.5.2, 1.5.3, 1.6.1b, 1.6.5 (numerical mean
/// instead of the closed form of eq. 1.10.4 so that sunrise and sunset need no case split).
pub(crate) fn mean_extraterrestrial_horizontal_w_m2(
    local_start_s: i64,
    interval_s: i64,
    substeps: i64,
    latitude_deg: f64,
    longitude_deg: f64,
    utc_offset_h: f64,
) -> f64 {
    let dt = interval_s as f64 / substeps as f64;
    let mut sum = 0.0;
    for j in 0..substeps {
        let t = local_start_s as f64 + (j as f64 + 0.5) * dt;
        let day_of_year = LocalTime(t.floor() as i64).day_of_year() as f64;
        let cos_z = cos_zenith_textbook(t, latitude_deg, longitude_deg, utc_offset_h);
        sum += extraterrestrial_normal_w_m2(day_of_year) * cos_z.max(0.0);
    }
    sum / substeps as f64
}

/// Cosine of the solar zenith angle from the textbook (Spencer / Duffie & Beckman)
/// formulas, at a local standard time given as naive seconds since 1970-01-01T00:00.
///
/// # Formula
/// n = local day of year; solar time [h] = clock [h] + (4 · (λ − 15 · offset_h) + E(n)) / 60
/// with λ east-positive; ω = 15 · (solar time − 12) degrees; then
/// [`cos_zenith_from_angles`] with δ = δ(n).
///
/// # Source
/// Duffie & Beckman 4th ed. eq. 1.5.2 (solar time, here with east-positive longitudes),
/// eq. 1.5.3 (E, Spencer 1971), eq. 1.6.1b (δ, Spencer 1971).
///
/// # Validity
/// About 0.5° in zenith (no refraction, no parallax, integer day number); for sanity limits
/// and the demo generator, not for the simulation.
pub(crate) fn cos_zenith_textbook(
    local_s: f64,
    latitude_deg: f64,
    longitude_deg: f64,
    utc_offset_h: f64,
) -> f64 {
    let whole_s = local_s.floor() as i64;
    let day_of_year = LocalTime(whole_s).day_of_year() as f64;
    let clock_h =
        (whole_s.rem_euclid(SECONDS_PER_DAY) as f64 + (local_s - whole_s as f64)) / 3600.0;
    let solar_h = solar_time_h(clock_h, day_of_year, longitude_deg, utc_offset_h);
    let hour_angle_deg = 15.0 * (solar_h - 12.0);
    cos_zenith_from_angles(
        latitude_deg,
        declination_spencer_deg(day_of_year),
        hour_angle_deg,
    )
}

/// Apparent solar time in hours from local standard clock time in hours.
///
/// # Formula
/// solar = clock + (4 min/° · (λ − 15° · offset_h) + E(n)) / 60, λ east-positive.
///
/// # Source
/// Duffie & Beckman 4th ed. eq. 1.5.2 (written there with west-positive longitudes).
pub(crate) fn solar_time_h(
    clock_h: f64,
    day_of_year: f64,
    longitude_deg: f64,
    utc_offset_h: f64,
) -> f64 {
    clock_h
        + (4.0 * (longitude_deg - 15.0 * utc_offset_h) + equation_of_time_min(day_of_year)) / 60.0
}

/// Cosine of the zenith angle from latitude, declination and hour angle.
///
/// # Formula
/// cos z = cos φ cos δ cos ω + sin φ sin δ
///
/// # Source
/// Duffie & Beckman 4th ed. eq. 1.6.5.
pub(crate) fn cos_zenith_from_angles(
    latitude_deg: f64,
    declination_deg: f64,
    hour_angle_deg: f64,
) -> f64 {
    let (phi, delta, omega) = (
        latitude_deg.to_radians(),
        declination_deg.to_radians(),
        hour_angle_deg.to_radians(),
    );
    phi.cos() * delta.cos() * omega.cos() + phi.sin() * delta.sin()
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::NaiveDate;

    fn local_s(y: i32, mo: u32, d: u32, h: u32, mi: u32) -> i64 {
        NaiveDate::from_ymd_opt(y, mo, d)
            .unwrap()
            .and_hms_opt(h, mi, 0)
            .unwrap()
            .and_utc()
            .timestamp()
    }

    /// Hourly series of `n` rows from `start`, GHI/temperature given by closures.
    fn unchecked(
        start: i64,
        n: usize,
        ghi: impl Fn(usize) -> f64,
        temp: impl Fn(usize) -> f64,
    ) -> UncheckedWeather {
        UncheckedWeather {
            source: "t.csv".to_string(),
            site: WeatherSite::default(),
            interval_s: 3600,
            stamp: StampConvention::Start,
            stamp_s: (0..n).map(|k| start + 3600 * k as i64).collect(),
            line: (0..n).map(|k| k + 10).collect(),
            ghi_w_m2: (0..n).map(&ghi).collect(),
            dni_w_m2: None,
            dhi_w_m2: None,
            air_temp_c: (0..n).map(&temp).collect(),
            wind_m_s: None,
            albedo_frac: None,
            pressure_hpa: None,
        }
    }

    fn check_zenith_deg(lat: f64, decl: f64, omega: f64, expected_deg: f64) {
        let z = cos_zenith_from_angles(lat, decl, omega).acos().to_degrees();
        assert!(
            (z - expected_deg).abs() <= 0.05,
            "zenith {z} expected {expected_deg}"
        );
    }

    #[test]
    fn zenith_matches_duffie_beckman_example_1_6_2() {
        // Source: Duffie & Beckman 4th ed., Example 1.6.2 (printed to 0.1°).
        check_zenith_deg(43.0, -14.0, -37.5, 66.5);
        // Source: Duffie & Beckman 4th ed., Example 1.6.2 (printed to 0.1°).
        check_zenith_deg(43.0, 23.1, 97.5, 79.6);
    }

    #[test]
    fn solar_time_matches_duffie_beckman_example_1_5_1() {
        // Source: Duffie & Beckman 4th ed., Example 1.5.1: Madison 89.4° W, standard
        // meridian 90° W (UTC−6), 3 February (n = 34), 10:30 standard time → 10:19 solar
        // time (printed to the minute: tolerance 0.5 min).
        let solar = solar_time_h(10.5, 34.0, -89.4, -6.0);
        let expected = 10.0 + 19.0 / 60.0;
        assert!(
            (solar - expected).abs() * 60.0 <= 0.5,
            "solar time {solar} h"
        );
    }

    #[test]
    fn extraterrestrial_horizontal_is_zero_at_night_and_g_on_cos_z_at_noon() {
        // Source: recomputed from the formula (regression guard): at the equator on the
        // equinox-like day the noon sub-steps are within 0.3° of overhead, so the hourly
        // mean 11:30–12:30 solar time is G_on·mean(cos ω) with ω within ±7.5°: ≥ 0.99·G_on.
        let lon = 0.0;
        let day = local_s(2025, 3, 21, 0, 0);
        let e_min = equation_of_time_min(80.0);
        // Start so that the interval is centred on solar noon.
        let start = day + (11.5 * 3600.0 - e_min * 60.0).round() as i64;
        let mean = mean_extraterrestrial_horizontal_w_m2(start, 3600, 12, 0.0, lon, 0.0);
        let g_on = extraterrestrial_normal_w_m2(80.0);
        assert!(mean > 0.99 * g_on && mean <= g_on, "{mean} vs {g_on}");
        // Source: common practice, no source: midnight at 47 °N has no sun at all.
        let night = mean_extraterrestrial_horizontal_w_m2(day, 3600, 12, 47.0, 9.6, 1.0);
        assert_eq!(night, 0.0);
    }

    #[test]
    fn validate_accepts_clean_series_and_converts_end_stamps() {
        let start = local_s(2025, 1, 1, 1, 0);
        let mut u = unchecked(start, 48, |_| 0.0, |_| -5.0);
        u.stamp = StampConvention::End;
        let w = u.validate().unwrap();
        // Source: the stamp convention's definition (notebooks-free-docs/weather-format.md): start = end stamp − interval.
        assert_eq!(w.len(), 48);
        assert_eq!(w.local_start_s[0], local_s(2025, 1, 1, 0, 0));
        assert_eq!(w.local_hour(0), 0);
        assert_eq!(w.stamp_text(0), "2025-01-01T01:00");
        assert!(matches!(
            w.warnings.as_slice(),
            [WeatherWarning::MonthsMissing { missing }] if missing.len() == 11
        ));
    }

    #[test]
    fn end_stamp_at_new_year_counts_in_december() {
        let mut u = unchecked(local_s(2026, 1, 1, 0, 0), 1, |_| 0.0, |_| 0.0);
        u.stamp = StampConvention::End;
        let w = u.validate().unwrap();
        // Source: common practice, no source (calendar): 31 December is day 365 of 2025.
        assert_eq!(w.local_month(0), 12);
        assert_eq!(w.local_day_of_year(0), 365);
        assert_eq!(w.local_hour(0), 23);
    }

    #[test]
    fn small_negatives_are_clamped_and_counted_large_ones_rejected() {
        let start = local_s(2025, 1, 1, 0, 0);
        let w = unchecked(start, 24, |k| if k < 3 { -2.5 } else { 0.0 }, |_| 0.0)
            .validate()
            .unwrap();
        assert!(w.ghi_w_m2.iter().all(|&g| g == 0.0));
        assert!(w.warnings.iter().any(|x| matches!(x,
            WeatherWarning::ClampedNegativeIrradiance { count: 3, most_negative_w_m2, .. }
                if *most_negative_w_m2 == -2.5)));
        // Source: this crate's documented clamp limit (NEGATIVE_CLAMP_W_M2, common practice):
        // exactly −10 is still clamped, −10.1 is an error.
        let ok = unchecked(start, 2, |k| if k == 1 { -10.0 } else { 0.0 }, |_| 0.0);
        assert!(ok.validate().is_ok());
        let bad = unchecked(start, 2, |k| if k == 1 { -10.1 } else { 0.0 }, |_| 0.0);
        let msg = bad.validate().unwrap_err().to_string();
        assert!(msg.starts_with("t.csv line 11: ghi_w_m2 = -10.1"), "{msg}");
    }

    #[test]
    fn diffuse_above_global_is_clamped_within_tolerance_and_rejected_beyond() {
        let start = local_s(2025, 6, 1, 10, 0);
        // Source: this crate's documented tolerance (DIFFUSE_EXCESS_CLAMP_W_M2 = 5 W/m²,
        // common practice): 4 W/m² over is clamped, 6 W/m² over is an error.
        let mut u = unchecked(start, 2, |_| 300.0, |_| 20.0);
        u.dni_w_m2 = Some(vec![0.0, 0.0]);
        u.dhi_w_m2 = Some(vec![304.0, 300.0]);
        let w = u.clone().validate().unwrap();
        assert_eq!(w.dhi_w_m2.as_ref().unwrap()[0], 300.0);
        assert!(w.warnings.iter().any(|x| matches!(
            x,
            WeatherWarning::ClampedDiffuseAboveGlobal { count: 1, .. }
        )));
        u.dhi_w_m2 = Some(vec![300.0, 306.0]);
        let msg = u.validate().unwrap_err().to_string();
        assert!(msg.starts_with("t.csv line 11: dhi_w_m2 = 306"), "{msg}");
    }

    #[test]
    fn short_gap_is_filled_from_neighbouring_days_and_linear_for_temperature() {
        // Three days hourly; rows 30..=32 (06:00–08:00 on day 2) removed.
        let start = local_s(2025, 6, 1, 0, 0);
        let mut u = unchecked(
            start,
            72,
            |k| (k % 24) as f64 * 10.0 + (k / 24) as f64,
            |k| k as f64 * 0.1,
        );
        for v in [
            &mut u.stamp_s as &mut dyn VecLike,
            &mut u.line,
            &mut u.ghi_w_m2,
            &mut u.air_temp_c,
        ] {
            v.remove_range(30, 33);
        }
        let w = u.validate().unwrap();
        assert_eq!(w.len(), 72);
        assert_eq!(w.source_line[30..33], [0, 0, 0]);
        // Source: recomputed from the rule (regression guard): mean of the same hour on
        // days 1 and 3, e.g. 06:00 → (60 + 0 + 60 + 2) / 2 = 61.
        assert_eq!(w.ghi_w_m2[30], 61.0);
        assert_eq!(w.ghi_w_m2[32], 81.0);
        // Temperature: straight line between rows 29 (2.9) and 33 (3.3).
        assert!((w.air_temp_c[31] - 3.1).abs() < 1e-12);
        assert!(w.warnings.iter().any(|x| matches!(
            x,
            WeatherWarning::FilledGaps { gaps: 1, intervals: 3, first_missing } if first_missing == "2025-06-02T06:00"
        )));
    }

    #[test]
    fn gap_of_four_intervals_is_an_error() {
        let start = local_s(2025, 6, 1, 0, 0);
        // Source: this crate's documented limit (MAX_FILL_INTERVALS = 3).
        let mut u = unchecked(start, 10, |_| 0.0, |_| 0.0);
        u.stamp_s[5..].iter_mut().for_each(|s| *s += 4 * 3600);
        let msg = u.validate().unwrap_err().to_string();
        assert!(
            msg.starts_with("t.csv line 15: 4 intervals are missing"),
            "{msg}"
        );
    }

    #[test]
    fn extraterrestrial_check_names_line_and_stamp() {
        // Source: common practice, no source: at 03:00 local in January at 47 °N the sun is
        // far below the horizon, so 500 W/m² must fail.
        let start = local_s(2025, 1, 1, 0, 0);
        let w = unchecked(start, 24, |k| if k == 3 { 500.0 } else { 0.0 }, |_| 0.0)
            .validate()
            .unwrap();
        let msg = w
            .check_against_extraterrestrial(47.2, 9.6, 1.0)
            .unwrap_err()
            .to_string();
        assert!(
            msg.starts_with("t.csv line 13: ghi_w_m2 = 500 at 2025-01-01T03:00"),
            "{msg}"
        );
        assert!(w.check_against_extraterrestrial(95.0, 9.6, 1.0).is_err());
    }

    trait VecLike {
        fn remove_range(&mut self, a: usize, b: usize);
    }
    impl<T> VecLike for Vec<T> {
        fn remove_range(&mut self, a: usize, b: usize) {
            self.drain(a..b);
        }
    }
}
