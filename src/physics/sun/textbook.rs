//! The textbook sun: the Spencer 1971 day-of-year series (declination, equation of time,
//! Earth–sun distance) as printed in Duffie & Beckman, the extraterrestrial normal
//! irradiance, the Duffie & Beckman hour-angle geometry and local solar time, the angle of
//! incidence on a tilted surface, relative and absolute air mass (Kasten & Young 1989) and
//! the standard-atmosphere station pressure.
//!
//! Closed formulas of a day number or a few angles: cheap, and good to about 0.5° and a
//! minute. They deliberately do not stand in for SPA where a sun position matters (the
//! simulation takes positions from `spa.rs` through the interval rule); they serve the
//! weather checks, the synthesizer, irradiance on surfaces and the book's examples.

use super::spa::limit_deg;

/// Solar constant, W/m².
///
/// # Source
/// Kopp & Lean 2011 (Geophys. Res. Lett. 38): 1360.8 ± 0.5 W/m², rounded as notebooks-free-docs/method-sun.md asks.
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
/// Any day of year. Against SPA's 1/R² (2020–2023) it is within 1.2e-3 (0.12 %, 1.6 W/m² of
/// G_on): its first harmonic 0.034221 is larger than 2e = 0.0334 for today's orbital
/// eccentricity. Spencer's own claim of 1e-4 (from memory) holds only for his fitted data.
/// Use 1/R² from [`solar_position`]-grade code (NREL SPA) where 0.1 % matters.
///
/// [`solar_position`]: super::solar_position
pub fn earth_sun_distance_factor(day_of_year: f64) -> f64 {
    let g = day_angle_rad(day_of_year);
    1.000110
        + 0.034221 * g.cos()
        + 0.001280 * g.sin()
        + 0.000719 * (2.0 * g).cos()
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
/// Spencer states a maximum error of 0.0006 rad (0.035°) for his fitted year, and that is
/// what SPA shows at the best-matching phase (00:00 UTC in 2020). A calendar day of a real
/// year sits up to ±0.75 day from that phase (time of day, leap-year cycle) and δ moves up
/// to 0.4°/day, so against SPA at a given instant the error reaches about 0.5° near the
/// equinoxes. Use [`solar_position`] (NREL SPA) where that matters.
///
/// [`solar_position`]: super::solar_position
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
///
/// # Validity
/// Within about 0.9 min of SPA's equation of time (2020–2023, tested).
pub fn equation_of_time_min(day_of_year: f64) -> f64 {
    let g = day_angle_rad(day_of_year);
    229.2
        * (0.000075 + 0.001868 * g.cos()
            - 0.032077 * g.sin()
            - 0.014615 * (2.0 * g).cos()
            - 0.04089 * (2.0 * g).sin())
}

/// Standard sea-level pressure, hPa (ISO 2533 / U.S. Standard Atmosphere 1976).
pub const STANDARD_PRESSURE_HPA: f64 = 1013.25;

/// Station pressure of the standard atmosphere at an elevation, hPa.
///
/// # Formula
/// p = p0 · (1 − L·h / T0)^(g0·M / (R*·L)), p0 = 1013.25 hPa, T0 = 288.15 K,
/// L = 0.0065 K/m, g0·M/(R*·L) = 5.25588; h = `elevation_m`.
///
/// # Source
/// ISO 2533:1975 / U.S. Standard Atmosphere 1976, troposphere layer (barometric formula
/// with a constant lapse rate).
///
/// # Validity
/// −500…11 000 m (the troposphere). Above 11 km the real profile is isothermal and this
/// formula runs low; such sites do not host solar arrays. Weather departs from the standard
/// value by a few percent, which changes refraction by the same few percent.
pub fn pressure_from_elevation_hpa(elevation_m: f64) -> f64 {
    STANDARD_PRESSURE_HPA * (1.0 - 0.0065 * elevation_m / 288.15).powf(5.25588)
}

/// Angle of incidence of beam radiation on a tilted surface, degrees (0…180).
///
/// # Formula
/// cos θ = cos θz · cos β + sin θz · sin β · cos(γs − γ), clamped to [−1, 1];
/// θz = `sun_zenith_deg`, γs = `sun_azimuth_deg`, β = `tilt_deg`, γ = `surface_azimuth_deg`.
/// Both azimuths clockwise from north: only their difference enters, so this equals the
/// book's south-based form.
///
/// # Source
/// Duffie & Beckman, Solar Engineering of Thermal Processes, 4th ed., eq. 1.6.3; the same
/// expression is SPA's step 3.16 (with Γ − γ in its south-based angles).
///
/// # Validity
/// Any angles. θ > 90° means the sun is behind the surface; callers clip the beam there.
/// Pass the apparent zenith for irradiance work (SPA does the same).
///
/// # Example
/// SPA report: θz = 50.111622°, Φ = 194.340241°, slope 30°, surface azimuth 170°:
/// ```
/// use wirerank::physics::sun::incidence_angle_deg;
/// let i = incidence_angle_deg(50.111622, 194.340241, 30.0, 170.0);
/// assert!((i - 25.187000).abs() < 5e-6);
/// ```
pub fn incidence_angle_deg(
    sun_zenith_deg: f64,
    sun_azimuth_deg: f64,
    tilt_deg: f64,
    surface_azimuth_deg: f64,
) -> f64 {
    let (sz, cz) = sun_zenith_deg.to_radians().sin_cos();
    let (sb, cb) = tilt_deg.to_radians().sin_cos();
    let c = cz * cb + sz * sb * (sun_azimuth_deg - surface_azimuth_deg).to_radians().cos();
    c.clamp(-1.0, 1.0).acos().to_degrees()
}

/// Relative optical air mass from the apparent zenith angle (Kasten & Young 1989).
///
/// # Formula
/// AM = 1 / (cos z + 0.50572 · (96.07995 − z)^−1.6364), z = `apparent_zenith_deg` in degrees.
///
/// # Source
/// F. Kasten, A. T. Young, "Revised optical air mass tables and approximation formula",
/// Applied Optics 28(22), 4735–4738 (1989).
///
/// # Validity
/// 0 ≤ z < 90°: within 0.5 % of the tabulated air mass up to z = 89.5° (AM ≈ 38 at 90°).
/// Returns `None` for z ≥ 90° (the sun's centre below the apparent horizon) or a NaN input;
/// callers treat that as "no beam".
///
/// # Example
/// ```
/// use wirerank::physics::sun::air_mass_relative;
/// assert!((air_mass_relative(60.0).unwrap() - 1.9943).abs() < 5e-5);
/// ```
pub fn air_mass_relative(apparent_zenith_deg: f64) -> Option<f64> {
    let z = apparent_zenith_deg;
    if z.is_nan() || z >= 90.0 {
        return None;
    }
    Some(1.0 / (z.to_radians().cos() + 0.50572 * (96.07995 - z).powf(-1.6364)))
}

/// Absolute (pressure-corrected) air mass.
///
/// # Formula
/// AM_abs = AM_rel · p / 1013.25 hPa; `relative` = AM_rel, `pressure_hpa` = p.
///
/// # Source
/// Standard practice (e.g. Kasten & Young 1989, sect. 1; Perez et al. 1990 use AM_rel).
///
/// # Validity
/// Any positive pressure; exact for a well-mixed atmosphere.
pub fn air_mass_absolute(relative: f64, pressure_hpa: f64) -> f64 {
    relative * pressure_hpa / STANDARD_PRESSURE_HPA
}

/// Zenith angle and azimuth from latitude, declination and hour angle (textbook geometry).
///
/// Returns `(zenith_deg, azimuth_deg)` with the azimuth clockwise from north (0…360). The
/// book's solar azimuth γs (from south, west positive, east negative) is `azimuth − 180`.
///
/// # Formula
/// cos θz = cos φ cos δ cos ω + sin φ sin δ  (eq. 1.6.5);
/// γs = sign(ω) · |acos((cos θz sin φ − sin δ) / (sin θz cos φ))|  (eq. 1.6.6),
/// evaluated as γs = atan2(cos δ sin ω, cos δ cos ω sin φ − sin δ cos φ), which is the same
/// angle and stays defined at the poles and at the zenith (there it returns 180°, due south).
/// φ = `lat_deg`, δ = `decl_deg`, ω = `hour_angle_deg` (15° per hour, negative in the
/// morning).
///
/// # Source
/// Duffie & Beckman, Solar Engineering of Thermal Processes, 4th ed., eq. 1.6.5 and 1.6.6.
///
/// # Validity
/// Geocentric and without refraction: the textbook approximation, not SPA.
pub fn zenith_azimuth_from_hour_angle_deg(
    lat_deg: f64,
    decl_deg: f64,
    hour_angle_deg: f64,
) -> (f64, f64) {
    let (sp, cp) = lat_deg.to_radians().sin_cos();
    let (sd, cd) = decl_deg.to_radians().sin_cos();
    let (sw, cw) = hour_angle_deg.to_radians().sin_cos();
    let cos_z = (cp * cd * cw + sp * sd).clamp(-1.0, 1.0);
    let zenith_deg = cos_z.acos().to_degrees();
    let num = cd * sw;
    let den = cd * cw * sp - sd * cp;
    let gamma_s_deg = if num == 0.0 && den == 0.0 {
        0.0
    } else {
        num.atan2(den).to_degrees()
    };
    (zenith_deg, limit_deg(gamma_s_deg + 180.0))
}

/// Cosine of the angle of incidence from latitude, declination, hour angle, tilt, azimuth.
///
/// # Formula
/// cos θ = sin δ sin φ cos β − sin δ cos φ sin β cos γ + cos δ cos φ cos β cos ω
///       + cos δ sin φ sin β cos γ cos ω + cos δ sin β sin γ sin ω,
/// with γ = `surface_azimuth_deg` − 180° (the book's surface azimuth, from south, west
/// positive); φ = `lat_deg`, δ = `decl_deg`, ω = `hour_angle_deg`, β = `tilt_deg`.
///
/// # Source
/// Duffie & Beckman, Solar Engineering of Thermal Processes, 4th ed., eq. 1.6.2.
///
/// # Validity
/// Any angles; a negative value means the sun is behind the surface (not clamped).
pub fn cos_incidence_from_hour_angle(
    lat_deg: f64,
    decl_deg: f64,
    hour_angle_deg: f64,
    tilt_deg: f64,
    surface_azimuth_deg: f64,
) -> f64 {
    let (sp, cp) = lat_deg.to_radians().sin_cos();
    let (sd, cd) = decl_deg.to_radians().sin_cos();
    let (sw, cw) = hour_angle_deg.to_radians().sin_cos();
    let (sb, cb) = tilt_deg.to_radians().sin_cos();
    let (sg, cg) = (surface_azimuth_deg - 180.0).to_radians().sin_cos();
    sd * sp * cb - sd * cp * sb * cg
        + cd * cp * cb * cw
        + cd * sp * sb * cg * cw
        + cd * sb * sg * sw
}

/// Local solar time minus local standard time, minutes.
///
/// # Formula
/// solar time − standard time = 4 min/° · (λ − λ_st) + E, with λ = `longitude_deg` and
/// λ_st = `standard_meridian_deg` both positive east, E = [`equation_of_time_min`] of
/// `day_of_year`. (The book writes 4(L_st − L_loc) with longitudes positive west.)
///
/// # Source
/// Duffie & Beckman, Solar Engineering of Thermal Processes, 4th ed., eq. 1.5.2, with the
/// Spencer 1971 equation of time (eq. 1.5.3).
///
/// # Validity
/// Spencer's E is within about ±0.5 min of the SPA value (see the tests); use
/// [`solar_position`] where seconds matter.
///
/// [`solar_position`]: super::solar_position
pub fn solar_time_offset_min(
    day_of_year: f64,
    longitude_deg: f64,
    standard_meridian_deg: f64,
) -> f64 {
    4.0 * (longitude_deg - standard_meridian_deg) + equation_of_time_min(day_of_year)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::sun::spa::{solar_position, spa_geocentric, wrap180, DELTA_T_DEFAULT_S};
    use crate::physics::sun::test_support::{
        check, unix, DENVER, DENVER_AIR, SPA_EXAMPLE_DELTA_T_S, SPA_EXAMPLE_UNIX_S,
    };
    use std::f64::consts::PI;

    #[test]
    fn spa_example_incidence() {
        // Source: SPA report, worked example: slope 30°, azimuth rotation −10° (east of
        // south) = 170° from north; incidence 25.187000° (text).
        let p = solar_position(
            SPA_EXAMPLE_UNIX_S,
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
        );
        let i = incidence_angle_deg(p.zenith_deg, p.azimuth_deg, 30.0, 170.0);
        check("incidence (task)", i, 25.187000, 5e-4);
        check("incidence", i, 25.187000, 5e-7);
    }

    // ------------------------------------------------------------- Duffie & Beckman

    #[test]
    fn db_example_1_5_1_solar_time() {
        // Source: Duffie & Beckman 4th ed., Example 1.5.1: Madison, 89.4° W, standard meridian
        // 90° W, 3 February (n = 34), 10:30 standard time → E = −13.5 min, solar time 10:19.
        check("E", equation_of_time_min(34.0), -13.5, 0.05);
        let solar_min = 10.0 * 60.0 + 30.0 + solar_time_offset_min(34.0, -89.4, -90.0);
        check("solar time (min)", solar_min, 10.0 * 60.0 + 19.0, 0.5);
    }

    #[test]
    fn db_example_1_6_1_incidence() {
        // Source: Duffie & Beckman 4th ed., Example 1.6.1: φ 43°, δ −14°, ω −22.5°, β 45°,
        // γ 15° west of south (195° from north) → cos θ = 0.817, θ = 35°.
        let c = cos_incidence_from_hour_angle(43.0, -14.0, -22.5, 45.0, 195.0);
        check("cos θ", c, 0.817, 5e-4);
        check("θ", c.acos().to_degrees(), 35.0, 0.5);
        // The zenith/azimuth form (eq. 1.6.3) must agree with eq. 1.6.2.
        let (z, az) = zenith_azimuth_from_hour_angle_deg(43.0, -14.0, -22.5);
        check(
            "eq. 1.6.3 vs 1.6.2",
            incidence_angle_deg(z, az, 45.0, 195.0).to_radians().cos(),
            c,
            1e-12,
        );
    }

    #[test]
    fn db_example_1_6_2_zenith_azimuth() {
        // Source: Duffie & Beckman 4th ed., Example 1.6.2, φ 43°: (δ −14°, ω −37.5°) → θz 66.5°,
        // γs −40.0° (south-based, = 140.0° from north); (δ 23.1°, ω 97.5°) → θz 79.6°,
        // γs 112.0° (= 292.0° from north). Book prints 0.1°.
        let (z, az) = zenith_azimuth_from_hour_angle_deg(43.0, -14.0, -37.5);
        check("θz", z, 66.5, 0.1);
        check("azimuth", az, 180.0 - 40.0, 0.1);
        let (z, az) = zenith_azimuth_from_hour_angle_deg(43.0, 23.1, 97.5);
        check("θz", z, 79.6, 0.1);
        check("azimuth", az, 180.0 + 112.0, 0.1);
    }

    #[test]
    fn textbook_geometry_agrees_with_spa_hour_angle_form() {
        // Source: SPA report steps 3.14–3.15 with geocentric δ and H and no parallax are the
        // same spherical triangle as D&B eq. 1.6.5–1.6.6; both hemispheres, poles, noon.
        for &(lat, decl, h) in &[
            (39.7, -9.3, 11.1),
            (-33.9, 23.0, -60.0),
            (-33.9, -23.0, 0.0),
            (89.9, 10.0, 135.0),
            (-89.9, -10.0, -135.0),
            (0.0, 0.0, 45.0),
            (60.0, 20.0, 180.0),
        ] {
            let (z, az) = zenith_azimuth_from_hour_angle_deg(lat, decl, h);
            let (sp, cp) = f64::to_radians(lat).sin_cos();
            let (sd, cd) = f64::to_radians(decl).sin_cos();
            let (sh, ch) = f64::to_radians(h).sin_cos();
            let e0 = (sp * sd + cp * cd * ch).asin().to_degrees();
            let gamma = sh.atan2(ch * sp - sd / cd * cp).to_degrees();
            check("zenith", z, 90.0 - e0, 1e-9);
            check("azimuth", wrap180(az - (gamma + 180.0)), 0.0, 1e-9);
        }
    }

    // ------------------------------------------------------------ Spencer 1971 and friends

    /// D&B Table 1.6.1: mean day of each month and its declination.
    // Source: Duffie & Beckman 4th ed., Table 1.6.1; declinations text,
    // day numbers from memory (17, 47, 75, 105, 135, 162, 198, 228, 258, 288, 318, 344).
    const DB_MEAN_DAYS: [(f64, f64); 12] = [
        (17.0, -20.9),
        (47.0, -13.0),
        (75.0, -2.4),
        (105.0, 9.4),
        (135.0, 18.8),
        (162.0, 23.1),
        (198.0, 21.2),
        (228.0, 13.5),
        (258.0, 2.2),
        (288.0, -9.6),
        (318.0, -18.9),
        (344.0, -23.0),
    ];

    #[test]
    fn db_table_1_6_1_is_coopers_formula() {
        // Source: Duffie & Beckman 4th ed., eq. 1.6.1a (Cooper 1969):
        // δ = 23.45 sin(360 (284 + n)/365); the table prints 0.1°. This pins the day numbers.
        for &(n, decl) in &DB_MEAN_DAYS {
            let cooper = 23.45 * (360.0 * (284.0 + n) / 365.0f64).to_radians().sin();
            check("Cooper", cooper, decl, 0.05);
        }
    }

    #[test]
    fn spencer_declination_vs_db_table_1_6_1() {
        // Source: Duffie & Beckman 4th ed., Table 1.6.1 (text). The table is Cooper's formula
        // (see above), which is itself about 1° from the true declination in autumn
        // (checked against SPA below), while Spencer's series tracks SPA within ~0.5°. So
        // Spencer agrees with the table within 0.5° only in Jan–Aug and Dec; Sep, Oct and
        // Nov differ by 1.14°, 1.38° and 0.86°: tolerance 1.5° there.
        for &(n, decl) in &DB_MEAN_DAYS {
            let tol = if (250.0..330.0).contains(&n) {
                1.5
            } else {
                0.5
            };
            check("Spencer δ vs table", declination_spencer_deg(n), decl, tol);
        }
        // Source: SPA (this module) at 12:00 UTC of the mean days of 2022: the table's
        // autumn values are the ones off, not Spencer's.
        let t0 = unix(2022, 1, 1, 12, 0, 0);
        let mut worst_table = 0.0f64;
        for &(n, decl) in &DB_MEAN_DAYS {
            let spa = spa_geocentric(t0 + 86400.0 * (n - 1.0), DELTA_T_DEFAULT_S).delta_deg;
            check("Spencer δ vs SPA", declination_spencer_deg(n), spa, 0.5);
            worst_table = worst_table.max((decl - spa).abs());
        }
        assert!(worst_table > 0.8, "table vs SPA {worst_table}");
    }

    #[test]
    fn spencer_series_vs_spa() {
        // Source: SPA (this module, validated above) as the reference. Spencer's series fits
        // one mean year; a calendar day n of a real year sits up to about ±0.75 day from it
        // (time of day and the leap-year cycle), and the declination moves up to 0.4°/day.
        // At the best-matching phase (2020, 00:00 UTC) δ agrees within Spencer's stated
        // 0.0006 rad = 0.035° (Spencer 1971, from memory). Over 2020–2023 at 00:00 and
        // 12:00 UTC the measured envelopes are δ 0.52°, E 0.87 min, (R0/R)² 1.14e-3 (the
        // distance factor is systematically off: Spencer's first harmonic 0.034221 exceeds
        // 2e = 0.0334 for today's eccentricity): tolerances 0.55°, 0.9 min, 1.2e-3.
        let stats = |year: i64, hour: i64| {
            let (mut d, mut e, mut f) = (0.0f64, 0.0f64, 0.0f64);
            let t0 = unix(year, 1, 1, hour, 0, 0);
            for n in 1..=365 {
                let g = spa_geocentric(t0 + 86400.0 * f64::from(n - 1), DELTA_T_DEFAULT_S);
                let nn = f64::from(n);
                d = d.max((declination_spencer_deg(nn) - g.delta_deg).abs());
                e = e.max((equation_of_time_min(nn) - g.eot_min).abs());
                f = f.max((earth_sun_distance_factor(nn) - 1.0 / (g.r_au * g.r_au)).abs());
            }
            (d, e, f)
        };
        let (best_d, _, _) = stats(2020, 0);
        assert!(best_d <= 0.035, "best-phase δ off by {best_d}");
        let (mut max_d, mut max_e, mut max_f) = (0.0f64, 0.0f64, 0.0f64);
        for year in 2020..2024 {
            for hour in [0, 12] {
                let (d, e, f) = stats(year, hour);
                max_d = max_d.max(d);
                max_e = max_e.max(e);
                max_f = max_f.max(f);
            }
        }
        eprintln!(
            "Spencer vs SPA 2020–2023: δ {max_d:.3}° (best phase {best_d:.3}°), E {max_e:.3} min, (R0/R)² {max_f:.2e}"
        );
        assert!(max_d <= 0.55, "δ off by {max_d}");
        assert!(max_e <= 0.9, "E off by {max_e}");
        assert!(max_f <= 1.2e-3, "distance factor off by {max_f}");
    }

    #[test]
    fn spencer_regression_values() {
        // Source: recomputed from Spencer's series (D&B 4th ed. eq. 1.4.1b, 1.6.1b, 1.5.3);
        // a regression guard, not an independent check.
        check("Γ(1)", day_angle_rad(1.0), 0.0, 0.0);
        check("Γ(366)", day_angle_rad(366.0), 2.0 * PI, 1e-15);
        check(
            "(R0/R)² n=1",
            earth_sun_distance_factor(1.0),
            1.035050,
            5e-7,
        );
        check(
            "G_on n=1",
            extraterrestrial_normal_w_m2(1.0),
            1361.0 * 1.035050,
            1e-3,
        );
        check("δ n=1", declination_spencer_deg(1.0), -23.0586, 5e-4);
        check("E n=1", equation_of_time_min(1.0), -2.9044, 5e-4);
    }

    #[test]
    fn extraterrestrial_irradiance_range() {
        // Source: Duffie & Beckman 4th ed. §1.4: G_on varies by about ±3.3 % over the year;
        // perihelion in early January, aphelion in early July (text, general knowledge).
        let v: Vec<f64> = (1..=365)
            .map(|n| extraterrestrial_normal_w_m2(f64::from(n)))
            .collect();
        let (imax, max) = v
            .iter()
            .enumerate()
            .fold((0, 0.0f64), |a, (i, &x)| if x > a.1 { (i, x) } else { a });
        let (imin, min) =
            v.iter()
                .enumerate()
                .fold((0, f64::MAX), |a, (i, &x)| if x < a.1 { (i, x) } else { a });
        assert!(imax <= 5 || imax >= 360, "max on day {}", imax + 1);
        assert!((180..=190).contains(&imin), "min on day {}", imin + 1);
        check("max/Gsc", max / SOLAR_CONSTANT_W_M2, 1.0351, 0.001);
        check("min/Gsc", min / SOLAR_CONSTANT_W_M2, 0.9666, 0.001);
    }

    // --------------------------------------------------------------- air mass, pressure

    #[test]
    fn kasten_young_values() {
        // Source: Kasten & Young 1989 formula, values recomputed.
        check("AM(0)", air_mass_relative(0.0).unwrap(), 0.9997, 5e-5);
        check("AM(60)", air_mass_relative(60.0).unwrap(), 1.9943, 5e-5);
        check("AM(80)", air_mass_relative(80.0).unwrap(), 5.5860, 5e-5);
        // Source: Kasten & Young 1989, Table: AM ≈ 38 at the horizon (from memory).
        check("AM(89.999)", air_mass_relative(89.999).unwrap(), 37.9, 0.2);
        assert!(air_mass_relative(90.0).is_none());
        assert!(air_mass_relative(95.0).is_none());
        assert!(air_mass_relative(f64::NAN).is_none());
    }

    #[test]
    fn absolute_air_mass_scales_with_pressure() {
        // Source: common practice (AM_abs = AM · p/p0).
        check("sea level", air_mass_absolute(2.0, 1013.25), 2.0, 1e-12);
        check(
            "820 hPa",
            air_mass_absolute(2.0, 820.0),
            2.0 * 820.0 / 1013.25,
            1e-12,
        );
    }

    #[test]
    fn standard_atmosphere_pressure() {
        // Source: U.S. Standard Atmosphere 1976 table (from memory): 0 m 1013.25 hPa,
        // 1000 m 898.76, 2000 m 795.01, 5000 m 540.48. The formula treats the elevation as
        // geopotential height, 0.3 hPa low at 5 km: tolerance 0.5 hPa.
        check("0 m", pressure_from_elevation_hpa(0.0), 1013.25, 1e-9);
        check("1000 m", pressure_from_elevation_hpa(1000.0), 898.76, 0.5);
        check("2000 m", pressure_from_elevation_hpa(2000.0), 795.01, 0.5);
        check("5000 m", pressure_from_elevation_hpa(5000.0), 540.48, 0.5);
    }

    #[test]
    fn incidence_edge_cases() {
        // Source: geometry (common practice).
        check(
            "horizontal",
            incidence_angle_deg(40.0, 123.0, 0.0, 0.0),
            40.0,
            1e-9,
        );
        check(
            "facing the sun",
            incidence_angle_deg(40.0, 200.0, 40.0, 200.0),
            0.0,
            1e-5,
        );
        check(
            "behind",
            incidence_angle_deg(0.0, 0.0, 90.0, 0.0),
            90.0,
            1e-9,
        );
        check(
            "back to the sun",
            incidence_angle_deg(60.0, 180.0, 30.0, 0.0),
            90.0,
            1e-9,
        );
        let i = incidence_angle_deg(90.0, 180.0, 90.0, 180.0);
        assert!(i.is_finite() && i.abs() < 1e-5);
    }
}
