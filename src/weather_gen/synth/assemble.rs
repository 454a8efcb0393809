//! [`synthesize`]: the steps in order, each quantity from its own random stream: daily
//! clearness, hourly irradiance, the Erbs split (step 4), temperature and wind; every value
//! rounded as the CSV carries it; the year validated like a file read from disk and checked
//! against the inputs.
//!
//! Assembly only: the models are in the other files of this module, and it writes no file.

use rand::rngs::StdRng;
use rand::SeedableRng;

use super::daily::daily_clearness;
use super::hourly::hourly_ghi;
use super::inputs::{MonthlyClimate, SynthError};
use super::temperature::synthesize_temperature;
use super::textbook_sun::HourSun;
use super::wind::synthesize_wind;
use crate::input::weather::{StampConvention, UncheckedWeather, Weather, WeatherSite};
use crate::physics::sky::erbs_split;

/// Seeds of the independent random streams (xor-ed with the user's seed).
const STREAM_CLEARNESS: u64 = 0x9E37_79B9_7F4A_7C15;
const STREAM_HOURLY: u64 = 0xC2B2_AE3D_27D4_EB4F;
const STREAM_TEMPERATURE: u64 = 0x1656_67B1_9E37_79F9;
const STREAM_WIND: u64 = 0x27D4_EB2F_1656_67C5;

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
///
/// [`aguiar_month_sequence`]: super::aguiar_month_sequence
/// [`fit_to_total`]: super::fit_to_total
/// [`CLEAR_SKY_MARGIN_FRAC`]: super::CLEAR_SKY_MARGIN_FRAC
/// [`AIR_ANOMALY_LAG1`]: super::AIR_ANOMALY_LAG1
/// [`parton_logan_c`]: super::parton_logan_c
pub fn synthesize(
    climate: &MonthlyClimate,
    seed: u64,
    source: &str,
) -> Result<Synthesis, SynthError> {
    let clearness = climate.clearness_frac();
    let month_days = month_day_counts(&climate.day_month);
    let day_h0_wh = day_extraterrestrial_wh(&climate.hours, climate.days);

    // 1. Daily clearness.
    let daily_kt = daily_clearness(
        &clearness,
        &climate.ghi_kwh_m2_day,
        &month_days,
        &day_h0_wh,
        &mut StdRng::seed_from_u64(seed ^ STREAM_CLEARNESS),
    );

    // 2.–3. Hourly global irradiance.
    let mut ghi = hourly_ghi(
        &climate.hours,
        &daily_kt,
        &day_h0_wh,
        &month_days,
        &climate.ghi_kwh_m2_day,
        &mut StdRng::seed_from_u64(seed ^ STREAM_HOURLY),
    );

    // 4. Rounding and the Erbs split.
    let (dni, dhi) = round_and_split(&mut ghi, &climate.hours);

    // 5. Temperature.
    let temp = synthesize_temperature(
        climate,
        &daily_kt,
        &clearness,
        &mut StdRng::seed_from_u64(seed ^ STREAM_TEMPERATURE),
    )
    .iter()
    .map(|&t| round1(t))
    .collect();

    // 6. Wind.
    let wind = climate.wind_m_s.map(|w| {
        synthesize_wind(
            climate,
            &w,
            &month_days,
            &mut StdRng::seed_from_u64(seed ^ STREAM_WIND),
        )
        .iter()
        .map(|&v| round1(v))
        .collect()
    });

    let weather = unchecked_weather(climate, source, ghi, dni, dhi, temp, wind).validate()?;
    check_reproduced(climate, &weather, &month_days)?;
    let daily_clearness_frac = written_daily_clearness(&weather, &day_h0_wh);
    Ok(Synthesis {
        weather,
        daily_clearness_frac,
    })
}

/// Number of days in each month of the year (index 0 = January).
fn month_day_counts(day_month: &[usize]) -> [usize; 12] {
    let mut c = [0usize; 12];
    day_month.iter().for_each(|&m| c[m] += 1);
    c
}

/// Each day's sum of the hourly extraterrestrial irradiance H0_d, Wh/m².
fn day_extraterrestrial_wh(hours: &[HourSun], days: usize) -> Vec<f64> {
    (0..days)
        .map(|d| {
            hours[d * 24..(d + 1) * 24]
                .iter()
                .map(|h| h.extraterrestrial_w_m2)
                .sum()
        })
        .collect()
}

/// Step 4 of [`synthesize`]: GHI rounded to 0.1 W/m² in place; DNI and DHI from the Erbs
/// split at the hour's sunlit-mean zenith, rounded, DHI ≤ GHI (all diffuse when the hour's
/// sun stays down). Returns (DNI, DHI).
fn round_and_split(ghi: &mut [f64], hours: &[HourSun]) -> (Vec<f64>, Vec<f64>) {
    let n = ghi.len();
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
    (dni, dhi)
}

/// The synthesized series as a weather year to validate like a file: hourly, stamped at the
/// start of each hour from midnight of 1 January, the site from the inputs.
fn unchecked_weather(
    climate: &MonthlyClimate,
    source: &str,
    ghi: Vec<f64>,
    dni: Vec<f64>,
    dhi: Vec<f64>,
    temp: Vec<f64>,
    wind: Option<Vec<f64>>,
) -> UncheckedWeather {
    let n = climate.days * 24;
    let stamp_s: Vec<i64> = (0..n)
        .map(|k| climate.year_start_s + 3600 * k as i64)
        .collect();
    UncheckedWeather {
        source: source.to_string(),
        site: WeatherSite {
            name: Some(climate.name.clone()),
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
        dni_w_m2: Some(dni),
        dhi_w_m2: Some(dhi),
        air_temp_c: temp,
        wind_m_s: wind,
        albedo_frac: None,
        pressure_hpa: None,
    }
}

/// Each day's clearness index as written: Σ GHI / H0 of the day (0 when H0 = 0).
fn written_daily_clearness(weather: &Weather, day_h0_wh: &[f64]) -> Vec<f64> {
    (0..day_h0_wh.len())
        .map(|d| {
            if day_h0_wh[d] > 0.0 {
                weather.ghi_w_m2[d * 24..(d + 1) * 24].iter().sum::<f64>() / day_h0_wh[d]
            } else {
                0.0
            }
        })
        .collect()
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
    use crate::weather_gen::synth::hourly::CLEAR_SKY_MARGIN_FRAC;
    use crate::weather_gen::synth::test_support::{base_inputs, stationary};
    use crate::weather_gen::synth::textbook_sun::monthly_extraterrestrial_kwh_m2_day;

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
    #[ignore = "timing, run by hand: cargo test --release --lib synth::assemble::tests::time -- --ignored --nocapture"]
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
