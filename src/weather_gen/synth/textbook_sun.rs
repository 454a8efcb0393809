//! The textbook sun of the synthesized year (Spencer 1971 / Duffie & Beckman, about 0.5°):
//! the calendar's days and months, the daily and monthly mean extraterrestrial irradiation
//! on the horizontal, and each hour's mean extraterrestrial and Haurwitz clear-sky
//! irradiance and sunlit-mean zenith, from 5-minute sub-steps as in the weather sanity
//! check.
//!
//! Good enough for daily and hourly clearness; it deliberately is not the simulation's sun
//! (NREL SPA in `physics::sun`), and it draws nothing at random.

use std::f64::consts::PI;

use chrono::NaiveDate;

use crate::input::weather::{cos_zenith_from_angles, solar_time_h};
use crate::physics::sun::{declination_spencer_deg, extraterrestrial_normal_w_m2};
use crate::time::{is_leap_year, LocalTime};
use crate::weather_gen::sample::haurwitz_ghi_w_m2;

/// Sub-steps per hour for the hourly sun (extraterrestrial and clear-sky means): the same
/// 5-minute steps as the weather sanity check, so the two agree.
const SUBSTEPS: usize = 12;

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

pub(super) fn monthly_extraterrestrial_from_days(
    latitude_deg: f64,
    day_month: &[usize],
) -> [f64; 12] {
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
pub(super) fn year_calendar(year: i32) -> Option<(i64, Vec<usize>)> {
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

/// [`hour_sun`] for every hour of a year of `days` days starting at midnight of 1 January,
/// `year_start_s` (naive local seconds): hour k starts k hours later.
pub(super) fn year_hours_sun(
    year_start_s: i64,
    days: usize,
    latitude_deg: f64,
    longitude_deg: f64,
    utc_offset_h: f64,
) -> Vec<HourSun> {
    let mut hours = vec![HourSun::default(); days * 24];
    for (d, day) in hours.chunks_mut(24).enumerate() {
        day_hours_sun(
            year_start_s + 86_400 * d as i64,
            0..24,
            latitude_deg,
            longitude_deg,
            utc_offset_h,
            day,
        );
    }
    hours
}

#[cfg(test)]
mod tests {
    use super::*;

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
}
