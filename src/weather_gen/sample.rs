//! A small, seeded generator for the bundled demo weather year of an invented site.
//!
//! It exists so that the demo and the tests have a full hourly year whose making is written
//! down: Haurwitz clear-sky GHI at each interval's midpoint, times one random clearness
//! factor per day drawn around invented monthly means; air temperature from invented monthly
//! means and daily ranges with a sinusoid peaking at 15:00 plus a persistent day-to-day
//! anomaly; wind from invented monthly means with small noise. The same seed gives the same
//! series (and so the same CSV bytes) with the locked `rand` version.
//!
//! It is deliberately simple and pure (no file I/O): it produces GHI only (no DNI/DHI, so
//! the demo exercises the Erbs split), no hour-to-hour cloud structure, no correlation
//! between cloud and temperature beyond the daily range, and its climate numbers are
//! invented, not fitted to any station. A stochastic synthesiser can replace it later.

use rand::rngs::StdRng;
use rand::{RngExt, SeedableRng};

use crate::error::WeatherError;
use crate::input::weather::{
    cos_zenith_textbook, StampConvention, UncheckedWeather, Weather, WeatherSite,
};
use crate::time::{days_from_civil, LocalTime};

/// The bundled demo year as CSV text (written by `examples/make_sample_weather.rs`).
pub const LARCHWOOD_2025_CSV: &str = include_str!("../../weather-samples/larchwood-2025.csv");

/// Seed of the bundled demo year.
pub const LARCHWOOD_SEED: u64 = 20_250_101;

/// Invented monthly climate of a site, index 0 = January.
#[derive(Clone, Debug, PartialEq)]
pub struct SampleClimate {
    pub site_name: String,
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub elevation_m: f64,
    pub utc_offset_h: f64,
    /// Calendar year generated (every day of it, hourly, stamps at interval start).
    pub year: i32,
    /// Monthly mean of the daily clearness factor (day GHI / Haurwitz clear-sky GHI), 0.45..=0.925.
    pub clearness_mean_frac: [f64; 12],
    /// Monthly mean air temperature, °C (at mid-month; interpolated between).
    pub air_temp_mean_c: [f64; 12],
    /// Monthly mean daily temperature range (max − min), K.
    pub air_temp_range_dk: [f64; 12],
    /// Half-width of the uniform day-to-day temperature innovation, K (see [`generate`]).
    pub air_temp_noise_dk: [f64; 12],
    /// Change of a day's mean temperature per unit of clearness above the monthly mean, K:
    /// negative in winter (clear nights under an inversion are cold), positive in summer.
    pub air_temp_clearness_coupling_dk: [f64; 12],
    /// Monthly mean wind speed, m/s.
    pub wind_mean_m_s: [f64; 12],
}

/// The invented demo site: Larchwood cabin (invented), 47.20 °N 9.60 °E, 900 m, UTC+1,
/// year 2025. Cold winters (design minimum near −18 °C on January nights), warm summers
/// (about 25–28 °C on clear afternoons), foggy late autumn and early winter.
pub fn larchwood_2025() -> SampleClimate {
    SampleClimate {
        site_name: "Larchwood cabin (invented)".to_string(),
        latitude_deg: 47.20,
        longitude_deg: 9.60,
        elevation_m: 900.0,
        utc_offset_h: 1.0,
        year: 2025,
        clearness_mean_frac: [
            0.50, 0.55, 0.58, 0.60, 0.60, 0.64, 0.68, 0.67, 0.64, 0.56, 0.48, 0.47,
        ],
        air_temp_mean_c: [
            -4.5, -2.0, 3.0, 7.0, 11.5, 15.5, 18.0, 17.5, 13.0, 8.5, 2.5, -2.5,
        ],
        air_temp_range_dk: [
            9.0, 9.5, 10.0, 11.0, 11.5, 12.0, 12.5, 12.0, 11.0, 9.5, 8.0, 8.0,
        ],
        air_temp_noise_dk: [5.5, 5.0, 4.5, 4.0, 3.5, 3.5, 3.5, 3.5, 3.5, 4.0, 4.5, 5.0],
        air_temp_clearness_coupling_dk: [
            -12.0, -9.0, -3.0, 2.0, 5.0, 7.0, 8.0, 7.0, 4.0, 0.0, -6.0, -12.0,
        ],
        wind_mean_m_s: [2.6, 2.8, 3.0, 2.9, 2.5, 2.3, 2.2, 2.1, 2.2, 2.4, 2.5, 2.6],
    }
}

/// Clear-sky global horizontal irradiance after Haurwitz, W/m².
///
/// # Formula
/// GHI_cs = 1098 · cos z · exp(−0.057 / cos z) for cos z > 0, else 0.
///
/// # Source
/// Haurwitz 1945, "Insolation in relation to cloudiness and cloud density", Journal of
/// Meteorology 2; in the form reviewed by Reno, Hansen & Stein 2012 (Sandia report
/// SAND2012-2389), which found it the best of the models that need only the zenith angle.
///
/// # Validity
/// Any cos z; no elevation or turbidity dependence. Zero with the sun below the horizon.
pub fn haurwitz_ghi_w_m2(cos_zenith: f64) -> f64 {
    if cos_zenith > 0.0 {
        1098.0 * cos_zenith * (-0.057 / cos_zenith).exp()
    } else {
        0.0
    }
}

/// Air temperature over the day as a sinusoid with its maximum at 15:00, °C.
///
/// # Formula
/// T(h) = T_mean + (ΔT / 2) · cos(2π (h − 15) / 24), h = local standard hour (fractional).
///
/// # Source
/// Common practice, no source (a single sinusoid with a mid-afternoon maximum; published
/// forms such as Parton & Logan 1981 split day and night, which the demo does not need).
pub fn diurnal_air_temp_c(mean_c: f64, range_dk: f64, hour_h: f64) -> f64 {
    mean_c + 0.5 * range_dk * (2.0 * std::f64::consts::PI * (hour_h - 15.0) / 24.0).cos()
}

/// Generates one hourly calendar year for `climate`, validated like a file read from disk.
///
/// # Formula
/// For day d of month m, with u ~ U(−1, 1) and the day's clearness class drawn first:
/// - clearness f_d ~ U(0.85, 1.0) with probability p_m = (c_m − 0.45) / 0.475, else
///   U(0.15, 0.75), so that the mean of f_d is c_m (`clearness_mean_frac`);
/// - GHI = round₁(f_d · Haurwitz(cos z)), z at the interval midpoint from the textbook sun;
/// - anomaly a_d = 0.6 · a_{d−1} + s_m · u (`air_temp_noise_dk`) + k_m · (f_d − c_m)
///   (`air_temp_clearness_coupling_dk`; the coupling term is added to the day, not carried
///   on), interpolated linearly between noons so that midnight has no step;
/// - daily range R_d = R_m · (0.4 + 0.6 · f_d / c_m) (clear days swing more);
/// - T = round₁(diurnal(T̄(n) + a, R_d, midpoint hour)) with T̄ and R_m interpolated
///   linearly between mid-month days;
/// - wind = round₁(max(0, w̄_m · (1 + 0.35 u_day) + 0.4 u_hour)).
///
/// Draws happen in a fixed order (per day: class, factor, anomaly, wind; then per hour:
/// wind), so a seed fixes the series.
///
/// # Errors
/// [`WeatherError::BadSite`] for a year outside 1901..=2099 or a clearness mean outside
/// 0.45..=0.925; any validation error of the result (none for sensible climates).
pub fn generate(climate: &SampleClimate, seed: u64) -> Result<Weather, WeatherError> {
    let source = format!("generated sample (seed {seed})");
    if !(1901..=2099).contains(&climate.year) {
        return Err(WeatherError::BadSite {
            file: source,
            what: "year".to_string(),
            value: f64::from(climate.year),
            range: "1901 to 2099".to_string(),
        });
    }
    if let Some(bad) = climate
        .clearness_mean_frac
        .iter()
        .find(|c| !(CLOUDY_MEAN..=CLEAR_MEAN).contains(*c))
    {
        return Err(WeatherError::BadSite {
            file: source,
            what: "clearness_mean_frac".to_string(),
            value: *bad,
            range: format!("{CLOUDY_MEAN} to {CLEAR_MEAN}"),
        });
    }

    let start = days_from_civil(i64::from(climate.year), 1, 1) * 86_400;
    let end = days_from_civil(i64::from(climate.year) + 1, 1, 1) * 86_400;
    let n_days = ((end - start) / 86_400) as usize;
    let mut rng = StdRng::seed_from_u64(seed);

    // Per-day draws, with one extra day on each side for the anomaly interpolation.
    let mut clearness = Vec::with_capacity(n_days + 2);
    let mut anomaly = Vec::with_capacity(n_days + 2);
    let mut wind_day = Vec::with_capacity(n_days + 2);
    let mut a = 0.0;
    for d in 0..n_days + 2 {
        let noon = start + (d as i64 - 1) * 86_400 + 43_200;
        let m = month_index(noon);
        let c = climate.clearness_mean_frac[m];
        let p_clear = (c - CLOUDY_MEAN) / (CLEAR_MEAN - CLOUDY_MEAN);
        let clear = rng.random_range(0.0..1.0) < p_clear;
        let f = if clear {
            rng.random_range(0.85..1.0)
        } else {
            rng.random_range(0.15..0.75)
        };
        a = 0.6 * a + climate.air_temp_noise_dk[m] * rng.random_range(-1.0..1.0);
        clearness.push(f);
        anomaly.push(a + climate.air_temp_clearness_coupling_dk[m] * (f - c));
        wind_day.push(rng.random_range(-1.0..1.0));
    }

    let n = n_days * 24;
    let mut stamp_s = Vec::with_capacity(n);
    let mut ghi = Vec::with_capacity(n);
    let mut temp = Vec::with_capacity(n);
    let mut wind = Vec::with_capacity(n);
    for k in 0..n {
        let t0 = start + 3600 * k as i64;
        let mid = t0 as f64 + 1800.0;
        let d = k / 24 + 1; // index into the per-day draws
        let m = month_index(t0);
        let hour_mid = (k % 24) as f64 + 0.5;

        let cos_z = cos_zenith_textbook(
            mid,
            climate.latitude_deg,
            climate.longitude_deg,
            climate.utc_offset_h,
        );
        ghi.push(round1(clearness[d] * haurwitz_ghi_w_m2(cos_z)));

        // Anomaly: straight line between the noons either side of the midpoint.
        let (d0, frac) = if hour_mid < 12.0 {
            (d - 1, (hour_mid + 12.0) / 24.0)
        } else {
            (d, (hour_mid - 12.0) / 24.0)
        };
        let a = anomaly[d0] + (anomaly[d0 + 1] - anomaly[d0]) * frac;
        let day_of_year = f64::from(LocalTime(t0).day_of_year()) + hour_mid / 24.0;
        let mean_c = seasonal(&climate.air_temp_mean_c, day_of_year, n_days as f64);
        let range_m = seasonal(&climate.air_temp_range_dk, day_of_year, n_days as f64);
        let range_d = range_m * (0.4 + 0.6 * clearness[d] / climate.clearness_mean_frac[m]);
        temp.push(round1(diurnal_air_temp_c(mean_c + a, range_d, hour_mid)));

        let w = climate.wind_mean_m_s[m] * (1.0 + 0.35 * wind_day[d])
            + 0.4 * rng.random_range(-1.0..1.0);
        wind.push(round1(w.max(0.0)));
        stamp_s.push(t0);
    }

    UncheckedWeather {
        source,
        site: WeatherSite {
            name: Some(climate.site_name.clone()),
            latitude_deg: Some(climate.latitude_deg),
            longitude_deg: Some(climate.longitude_deg),
            elevation_m: Some(climate.elevation_m),
            utc_offset_h: Some(climate.utc_offset_h),
            key_lines: Vec::new(),
        },
        interval_s: 3600,
        stamp: StampConvention::Start,
        stamp_s,
        line: vec![0; n],
        ghi_w_m2: ghi,
        dni_w_m2: None,
        dhi_w_m2: None,
        air_temp_c: temp,
        wind_m_s: Some(wind),
        albedo_frac: None,
        pressure_hpa: None,
    }
    .validate()
}

/// Mean clearness of the clear and the cloudy class of day (see [`generate`]).
const CLEAR_MEAN: f64 = 0.925;
const CLOUDY_MEAN: f64 = 0.45;

/// Rounds to one decimal, as the CSV carries it (so writing and re-reading is exact).
fn round1(v: f64) -> f64 {
    let r = (v * 10.0).round() / 10.0;
    if r == 0.0 {
        0.0
    } else {
        r
    }
}

fn month_index(local_s: i64) -> usize {
    LocalTime(local_s).civil().1 as usize - 1
}

/// A monthly value interpolated linearly between mid-month days, cyclic over the year.
fn seasonal(monthly: &[f64; 12], day_of_year: f64, days_in_year: f64) -> f64 {
    let month_len = days_in_year / 12.0;
    // Position in months where 0.0 is the middle of January.
    let x = (day_of_year - 1.0) / month_len - 0.5;
    let lo = x.floor();
    let frac = x - lo;
    let i = (lo as i64).rem_euclid(12) as usize;
    let j = (i + 1) % 12;
    monthly[i] + (monthly[j] - monthly[i]) * frac
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::weather_csv::weather_csv_text;

    fn check_haurwitz(cos_zenith: f64, expected_w_m2: f64, tolerance_w_m2: f64) {
        let got = haurwitz_ghi_w_m2(cos_zenith);
        assert!(
            (got - expected_w_m2).abs() <= tolerance_w_m2,
            "haurwitz({cos_zenith}) = {got}, expected {expected_w_m2}"
        );
    }

    #[test]
    fn haurwitz_values() {
        // Source: recomputed from the formula (regression guard): 1098·e^−0.057 = 1037.2.
        check_haurwitz(1.0, 1037.2, 0.05);
        // Source: recomputed from the formula (regression guard): z = 60°,
        // 1098·0.5·e^−0.114 = 489.85.
        check_haurwitz(0.5, 489.85, 0.005);
        // Source: common practice, no source: no sun, no clear-sky irradiance.
        check_haurwitz(0.0, 0.0, 0.0);
        check_haurwitz(-0.3, 0.0, 0.0);
    }

    #[test]
    fn diurnal_temperature_peaks_at_15_and_bottoms_at_3() {
        // Source: recomputed from the formula (regression guard).
        assert!((diurnal_air_temp_c(10.0, 8.0, 15.0) - 14.0).abs() < 1e-12);
        assert!((diurnal_air_temp_c(10.0, 8.0, 3.0) - 6.0).abs() < 1e-12);
    }

    #[test]
    fn seasonal_interpolation_hits_mid_month_values() {
        let monthly = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0, 11.0];
        // Source: recomputed from the rule (regression guard): mid-January (day 16.2) → 0,
        // 1 January halfway between mid-December (11) and mid-January (0) → 5.5.
        assert!(seasonal(&monthly, 1.0 + 365.0 / 24.0, 365.0).abs() < 1e-9);
        assert!((seasonal(&monthly, 1.0, 365.0) - 5.5).abs() < 1e-9);
    }

    #[test]
    fn same_seed_same_bytes_other_seed_other_bytes() {
        let climate = larchwood_2025();
        let a = weather_csv_text(&generate(&climate, 7).unwrap());
        let b = weather_csv_text(&generate(&climate, 7).unwrap());
        let c = weather_csv_text(&generate(&climate, 8).unwrap());
        assert_eq!(a, b);
        assert_ne!(a, c);
    }

    #[test]
    fn demo_year_is_complete_and_plausible() {
        let w = generate(&larchwood_2025(), LARCHWOOD_SEED).unwrap();
        assert_eq!(w.len(), 8760);
        assert!(w.warnings.is_empty(), "{:?}", w.warnings);
        assert!(w.dni_w_m2.is_none() && w.dhi_w_m2.is_none());
        w.check_against_extraterrestrial(47.2, 9.6, 1.0).unwrap();
        let january_min = (0..w.len())
            .filter(|&k| w.local_month(k) == 1)
            .map(|k| w.air_temp_c[k])
            .fold(f64::INFINITY, f64::min);
        // Source: the invented climate's design target (about −18 °C), not a measurement.
        assert!((-22.0..=-14.0).contains(&january_min), "{january_min}");
        let annual_kwh_m2: f64 = w.ghi_w_m2.iter().sum::<f64>() / 1000.0;
        // Source: from memory (central European lowland and foothill sites receive roughly
        // 1000–1300 kWh/m² a year on the horizontal); a plausibility band, not a value.
        assert!(
            (1000.0..=1300.0).contains(&annual_kwh_m2),
            "{annual_kwh_m2}"
        );
    }
}
