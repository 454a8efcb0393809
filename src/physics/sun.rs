//! Where the sun is: NREL SPA topocentric position, the textbook day-of-year formulas,
//! extraterrestrial irradiance and air mass.
//!
//! Time enters as seconds since 1970-01-01T00:00:00 UTC (`unix_s`, f64). This module does
//! no calendar work with time zones: callers convert local standard time first.

/// Solar constant, W/m².
///
/// # Source
/// Kopp & Lean 2011 (Geophys. Res. Lett. 38): 1360.8 ± 0.5 W/m², rounded as MODEL.md §2 asks.
pub const SOLAR_CONSTANT_W_M2: f64 = 1361.0;

/// Day angle Γ of the Spencer 1971 series, radians.
///
/// # Formula
/// Γ = 2π (n − 1) / 365, n = day of year (1 = 1 January).
///
/// # Source
/// Spencer 1971, "Fourier series representation of the position of the sun", Search 2(5);
/// as printed in Duffie & Beckman 4th ed. eq. 1.4.2.
pub fn day_angle_rad(day_of_year: f64) -> f64 {
    2.0 * std::f64::consts::PI * (day_of_year - 1.0) / 365.0
}

/// Earth–sun distance factor (R_mean / R)², dimensionless.
///
/// # Formula
/// 1.000110 + 0.034221 cos Γ + 0.001280 sin Γ + 0.000719 cos 2Γ + 0.000077 sin 2Γ
///
/// # Source
/// Spencer 1971; Duffie & Beckman 4th ed. eq. 1.4.1b.
///
/// # Validity
/// Any day of year; accurate to about 1e-4.
pub fn earth_sun_distance_factor(day_of_year: f64) -> f64 {
    let g = day_angle_rad(day_of_year);
    1.000110 + 0.034221 * g.cos() + 0.001280 * g.sin() + 0.000719 * (2.0 * g).cos()
        + 0.000077 * (2.0 * g).sin()
}

/// Extraterrestrial irradiance on a plane normal to the sun, W/m².
///
/// # Formula
/// G_on = G_sc · (R_mean / R)² with G_sc = 1361 W/m².
///
/// # Source
/// Duffie & Beckman 4th ed. eq. 1.4.1b with the Spencer 1971 distance factor.
pub fn extraterrestrial_normal_w_m2(day_of_year: f64) -> f64 {
    SOLAR_CONSTANT_W_M2 * earth_sun_distance_factor(day_of_year)
}

/// Solar declination from the Spencer 1971 series, degrees.
///
/// # Formula
/// δ = (180/π)(0.006918 − 0.399912 cos Γ + 0.070257 sin Γ − 0.006758 cos 2Γ
///      + 0.000907 sin 2Γ − 0.002697 cos 3Γ + 0.00148 sin 3Γ)
///
/// # Source
/// Spencer 1971; Duffie & Beckman 4th ed. eq. 1.6.1b.
///
/// # Validity
/// Error below about 0.035°; use [`solar_position`]-grade code (NREL SPA) where that matters.
pub fn declination_spencer_deg(day_of_year: f64) -> f64 {
    let g = day_angle_rad(day_of_year);
    (0.006918 - 0.399912 * g.cos() + 0.070257 * g.sin() - 0.006758 * (2.0 * g).cos()
        + 0.000907 * (2.0 * g).sin()
        - 0.002697 * (3.0 * g).cos()
        + 0.00148 * (3.0 * g).sin())
    .to_degrees()
}

/// Equation of time, minutes (apparent solar time minus mean solar time).
///
/// # Formula
/// E = 229.2 (0.000075 + 0.001868 cos Γ − 0.032077 sin Γ − 0.014615 cos 2Γ − 0.04089 sin 2Γ)
///
/// # Source
/// Spencer 1971 as printed in Duffie & Beckman 4th ed. eq. 1.5.3.
pub fn equation_of_time_min(day_of_year: f64) -> f64 {
    let g = day_angle_rad(day_of_year);
    229.2
        * (0.000075 + 0.001868 * g.cos() - 0.032077 * g.sin() - 0.014615 * (2.0 * g).cos()
            - 0.04089 * (2.0 * g).sin())
}
