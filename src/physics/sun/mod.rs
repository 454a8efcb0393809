//! Where the sun is: NREL SPA topocentric position, the textbook day-of-year formulas,
//! extraterrestrial irradiance, air mass, angle of incidence, and the one sun position
//! that stands for a whole weather interval.
//!
//! Time enters as seconds since 1970-01-01T00:00:00 UTC (`unix_s`, f64). This module does
//! no calendar work with time zones: callers convert local standard time first. It does
//! not know about weather files, orientations or shading; it only answers "where is the
//! sun, seen from here, at this instant (or for this interval)".
//!
//! Conventions (notebooks-free-docs/conventions.md): angles in degrees at the interface, azimuth clockwise from true
//! north (0 = N, 90 = E, 180 = S, 270 = W) for the sun and for surfaces, tilt 0 = horizontal,
//! longitude positive east, latitude positive north. The textbook functions that follow
//! Duffie & Beckman keep the book's south-based angles inside and convert at the boundary.
//! The method is written out in `notebooks-free-docs/method-sun.md`.

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

// =======================================================================================
// NREL Solar Position Algorithm
// =======================================================================================

/// TT − UT1 (ΔT) used when the caller has nothing better, seconds.
///
/// # Formula
/// ΔT = TT − UT1 = 32.184 s + (TAI − UTC) − (UT1 − UTC) = 32.184 + 37 − (UT1 − UTC).
///
/// # Source
/// TT − TAI = 32.184 s by definition (IAU 1991); TAI − UTC = 37 s since the leap second of
/// 2017-01-01 (IERS Bulletin C); UT1 − UTC stayed within about −0.2…+0.1 s during 2020–2025
/// (IERS Bulletin A, from memory). Hence ΔT ≈ 69.1…69.4 s; 69.2 s is used.
///
/// # Validity
/// The 2020s. The sun moves about 0.04″ per second of ΔT along the ecliptic, so an error
/// of a few seconds in ΔT changes the position by well under 0.0001°. The larger effect of
/// the time scale is that [`solar_position`] takes UTC as UT1 (ΔUT1 = 0, as the SPA report
/// allows): |UT1 − UTC| < 0.9 s moves the hour angle by less than 0.004°.
pub const DELTA_T_DEFAULT_S: f64 = 69.2;

/// Standard sea-level pressure, hPa (ISO 2533 / U.S. Standard Atmosphere 1976).
pub const STANDARD_PRESSURE_HPA: f64 = 1013.25;

/// Apparent radius of the sun used by SPA for sunrise/sunset and the refraction switch, deg.
const SUN_RADIUS_DEG: f64 = 0.26667;

/// Atmospheric refraction at the horizon assumed by SPA (its `atmos_refract`), degrees.
const REFRACTION_AT_HORIZON_DEG: f64 = 0.5667;

/// Where an observer stands.
///
/// Latitude −90…90° (north positive), longitude −180…180° (east positive), elevation above
/// mean sea level in metres (SPA allows any value above −6 500 000 m).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Observer {
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub elevation_m: f64,
}

impl Observer {
    /// The observer's time-independent SPA terms, computed once for many instants.
    pub fn prepare(&self) -> PreparedObserver {
        PreparedObserver {
            site: Site::new(self),
            latitude_deg: self.latitude_deg,
        }
    }
}

/// An [`Observer`] with the terms of SPA that do not change with time computed once
/// (sin φ, cos φ and the parallax terms): five trigonometric calls saved per instant.
#[derive(Clone, Copy, Debug)]
pub struct PreparedObserver {
    site: Site,
    latitude_deg: f64,
}

/// Air at the observer, for the refraction correction only.
///
/// `pressure_hpa` is the local (station) pressure, not the sea-level-reduced value;
/// [`pressure_from_elevation_hpa`] gives a standard-atmosphere default.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Atmosphere {
    pub pressure_hpa: f64,
    pub temperature_c: f64,
}

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

/// The sun seen from an observer at one instant.
#[derive(Clone, Copy, Debug)]
pub struct SunPosition {
    /// Topocentric zenith angle with atmospheric refraction (apparent), degrees.
    pub zenith_deg: f64,
    /// Topocentric zenith angle without refraction (geometric), degrees.
    pub zenith_geometric_deg: f64,
    /// Topocentric azimuth, degrees clockwise from true north, 0…360.
    pub azimuth_deg: f64,
    /// Topocentric declination, degrees.
    pub declination_deg: f64,
    /// Equation of time (apparent minus mean solar time), minutes.
    pub equation_of_time_min: f64,
}

impl SunPosition {
    /// Apparent elevation of the sun's centre above the horizon, degrees (90 − apparent zenith).
    pub fn elevation_deg(&self) -> f64 {
        90.0 - self.zenith_deg
    }
}

/// Julian day (UT) of a Unix time.
///
/// # Formula
/// JD = unix_s / 86400 + 2440587.5 (1970-01-01T00:00 UTC is JD 2440587.5).
///
/// # Source
/// Equivalent to SPA report step 3.1 (Meeus's calendar formula) for Gregorian dates; UTC is
/// taken as UT1 (ΔUT1 = 0).
///
/// # Validity
/// Unix time ignores leap seconds, as UT1 does; f64 keeps ~40 µs resolution near 2000.
pub fn julian_day(unix_s: f64) -> f64 {
    unix_s / 86400.0 + 2440587.5
}

/// Unix time of JD 2451545.0 (2000-01-01T12:00 UTC), the epoch of SPA's centuries.
const UNIX_J2000_S: f64 = 946_728_000.0;

/// Sidereal rotation of the mean sidereal time, degrees per day (SPA step 3.8).
const SIDEREAL_DEG_PER_DAY: f64 = 360.98564736629;

/// SPA steps 3.1–3.10 and A.1: everything that does not depend on the observer.
/// Field names follow the symbols of the SPA report. Every intermediate value is kept so
/// that the tests can check it against the report's worked example.
#[derive(Clone, Copy, Debug)]
#[cfg_attr(not(test), allow(dead_code))]
pub(crate) struct Geocentric {
    pub jd: f64,
    pub jde: f64,
    pub jc: f64,
    pub jce: f64,
    pub jme: f64,
    /// Earth heliocentric longitude L, latitude B (degrees), radius vector R (AU).
    pub l_deg: f64,
    pub b_deg: f64,
    pub r_au: f64,
    /// Geocentric longitude Θ and latitude β, degrees.
    pub theta_deg: f64,
    pub beta_deg: f64,
    /// Fundamental arguments X0…X4 of the nutation series, degrees (not reduced).
    pub x_deg: [f64; 5],
    pub delta_psi_deg: f64,
    pub delta_eps_deg: f64,
    pub eps0_arcsec: f64,
    pub eps_deg: f64,
    pub delta_tau_deg: f64,
    pub lambda_deg: f64,
    /// Mean and apparent sidereal time at Greenwich, ν0 and ν, degrees.
    pub nu0_deg: f64,
    pub nu_deg: f64,
    /// Geocentric right ascension α and declination δ, degrees.
    pub alpha_deg: f64,
    pub delta_deg: f64,
    pub eot_min: f64,
}

/// SPA steps 3.11–3.15: what depends on the observer (all intermediate values kept,
/// as for [`Geocentric`]).
#[derive(Clone, Copy, Debug)]
#[cfg_attr(not(test), allow(dead_code))]
pub(crate) struct Topocentric {
    /// Observer local hour angle H (0…360), equatorial horizontal parallax ξ, parallax in
    /// right ascension Δα, topocentric α′, δ′, H′; all degrees.
    pub h_deg: f64,
    pub xi_deg: f64,
    pub delta_alpha_deg: f64,
    pub alpha_prime_deg: f64,
    pub delta_prime_deg: f64,
    pub h_prime_deg: f64,
    /// Elevation without refraction e0, refraction Δe, apparent elevation e; degrees.
    pub e0_deg: f64,
    pub delta_e_deg: f64,
    pub e_deg: f64,
    /// Apparent zenith θ; astronomers' azimuth Γ (from south, westward); azimuth Φ (from
    /// north, eastward); degrees.
    pub zenith_deg: f64,
    pub azimuth_astro_deg: f64,
    pub azimuth_deg: f64,
}

/// All SPA intermediate values for one instant and observer (for tests and diagnostics).
#[derive(Clone, Copy, Debug)]
pub(crate) struct SpaDetail {
    pub geo: Geocentric,
    pub topo: Topocentric,
}

/// One row set of SPA Table A4.2 stored by column (A, B, C), so that the loop over its
/// terms vectorises.
struct Series<const N: usize> {
    a: [f64; N],
    b: [f64; N],
    c: [f64; N],
}

const fn by_column<const N: usize>(rows: &[[f64; 3]; N]) -> Series<N> {
    let mut s = Series {
        a: [0.0; N],
        b: [0.0; N],
        c: [0.0; N],
    };
    let mut i = 0;
    while i < N {
        s.a[i] = rows[i][0];
        s.b[i] = rows[i][1];
        s.c[i] = rows[i][2];
        i += 1;
    }
    s
}

/// Sum of A·cos(B + C·τ) over one row set of SPA Table A4.2 (step 3.2), τ = JME.
#[inline]
fn periodic_sum<const N: usize>(s: &Series<N>, jme: f64) -> f64 {
    let mut terms = [0.0f64; N];
    for (term, ((a, b), c)) in terms.iter_mut().zip(s.a.iter().zip(&s.b).zip(&s.c)) {
        *term = a * cos_periodic(b + c * jme);
    }
    // Smallest terms first (the tables are sorted by decreasing amplitude).
    terms.iter().rev().sum()
}

/// cos x for the periodic-term sums, |x| < 1e6 (SPA's arguments stay below ~1e5 for
/// years −2000…6000): Cody–Waite reduction by π/2 with the two-part constant of fdlibm,
/// then Taylor polynomials on |r| ≤ π/4 carried to r¹⁶ (cos) and r¹⁷ (sin), whose
/// truncation error is below 1e-18. Within 2e-16 of `f64::cos` (tested) and free of calls
/// and branches, so that the loop over the 195 periodic terms — most of the cost of one SPA
/// evaluation — vectorises.
#[inline(always)]
fn cos_periodic(x: f64) -> f64 {
    // π/2 = PIO2_HI + PIO2_LO; PIO2_HI has 33 significant bits, so k·PIO2_HI is exact for
    // |k| < 2^20 and x − k·PIO2_HI is exact near x.
    const PIO2_HI: f64 = f64::from_bits(0x3FF9_21FB_5440_0000); // 1.5707963267341256
    const PIO2_LO: f64 = f64::from_bits(0x3DD0_B461_1A62_6331); // 6.077100506506192e-11
                                                                // Round to nearest by adding 1.5·2^52: the integer k then sits in the low mantissa bits
                                                                // (f64::round would be a libm call on baseline x86-64).
    const ROUNDER: f64 = 6_755_399_441_055_744.0;
    let shifted = x * std::f64::consts::FRAC_2_PI + ROUNDER;
    let q = shifted.to_bits(); // low two bits = k mod 4
    let k = shifted - ROUNDER;
    let r = (x - k * PIO2_HI) - k * PIO2_LO;
    let r2 = r * r;
    let c = 1.0
        + r2 * (-1.0 / 2.0
            + r2 * (1.0 / 24.0
                + r2 * (-1.0 / 720.0
                    + r2 * (1.0 / 40_320.0
                        + r2 * (-1.0 / 3_628_800.0
                            + r2 * (1.0 / 479_001_600.0
                                + r2 * (-1.0 / 87_178_291_200.0 + r2 / 20_922_789_888_000.0)))))));
    let s = r
        * (1.0
            + r2 * (-1.0 / 6.0
                + r2 * (1.0 / 120.0
                    + r2 * (-1.0 / 5_040.0
                        + r2 * (1.0 / 362_880.0
                            + r2 * (-1.0 / 39_916_800.0
                                + r2 * (1.0 / 6_227_020_800.0
                                    + r2 * (-1.0 / 1_307_674_368_000.0
                                        + r2 / 355_687_428_096_000.0))))))));
    // cos(r + kπ/2) = c, −s, −c, s for k mod 4 = 0, 1, 2, 3: pick by bit masks.
    let odd = (q & 1).wrapping_neg();
    let v = (c.to_bits() & !odd) | (s.to_bits() & odd);
    let sign = ((q.wrapping_add(1)) & 2) << 62;
    f64::from_bits(v ^ sign)
}

/// Reduce an angle to 0…360 degrees (SPA's limit_degrees). Truncation by an integer cast
/// instead of `rem_euclid`, which is a libm `fmod` call; exact for |x| < 2^53.
#[inline]
fn limit_deg(x: f64) -> f64 {
    let y = x - 360.0 * ((x / 360.0) as i64 as f64);
    if y < 0.0 {
        y + 360.0
    } else if y >= 360.0 {
        y - 360.0
    } else {
        y
    }
}

/// Wrap an angle difference to −180…180 degrees.
#[inline]
fn wrap180(x: f64) -> f64 {
    let y = (x + 180.0).rem_euclid(360.0) - 180.0;
    if y == -180.0 {
        180.0
    } else {
        y
    }
}

/// Nutation in longitude and obliquity (SPA step 3.4), degrees.
///
/// The 63 arguments Σ Y_ij X_j are integer combinations of five angles, so e^{i·arg} is a
/// product of integer powers of e^{i X_j}: ten trigonometric calls replace 126, with the
/// same result to rounding (about 1e-15 relative).
fn nutation(jce: f64, x_deg: &[f64; 5]) -> (f64, f64) {
    // pow[j][k + 3] = e^{i k X_j} as (cos, sin), k = −3…3.
    let mut pow = [[(1.0f64, 0.0f64); 7]; 5];
    for j in 0..5 {
        let (s, c) = x_deg[j].to_radians().sin_cos();
        let p1 = (c, s);
        let p2 = (c * c - s * s, 2.0 * s * c);
        let p3 = (p2.0 * c - p2.1 * s, p2.0 * s + p2.1 * c);
        pow[j][4] = p1;
        pow[j][5] = p2;
        pow[j][6] = p3;
        pow[j][2] = (p1.0, -p1.1);
        pow[j][1] = (p2.0, -p2.1);
        pow[j][0] = (p3.0, -p3.1);
    }
    let mul = |a: (f64, f64), b: (f64, f64)| (a.0 * b.0 - a.1 * b.1, a.0 * b.1 + a.1 * b.0);
    let mut sum_psi = 0.0;
    let mut sum_eps = 0.0;
    for (y, abcd) in NUT_Y.iter().zip(NUT_ABCD.iter()) {
        let p = |j: usize| pow[j][(y[j] + 3) as usize];
        // Pairwise products: a shorter dependency chain than a running product.
        let (re, im) = mul(mul(mul(p(0), p(1)), mul(p(2), p(3))), p(4));
        sum_psi += (abcd[0] + abcd[1] * jce) * im;
        sum_eps += (abcd[2] + abcd[3] * jce) * re;
    }
    (sum_psi / 36_000_000.0, sum_eps / 36_000_000.0)
}

/// SPA geocentric part for a Unix time (UTC taken as UT1) and ΔT.
pub(crate) fn spa_geocentric(unix_s: f64, delta_t_s: f64) -> Geocentric {
    // 3.1 Julian day, ephemeris day, centuries, millennium. JD − 2451545 is formed from
    // the Unix time directly to keep the digits that JD itself (≈ 2.45e6) would lose.
    let jd = julian_day(unix_s);
    let days = (unix_s - UNIX_J2000_S) / 86400.0;
    let days_e = days + delta_t_s / 86400.0;
    let jde = jd + delta_t_s / 86400.0;
    let jc = days / 36525.0;
    let jce = days_e / 36525.0;
    let jme = jce / 10.0;

    // 3.2 Earth heliocentric longitude, latitude, radius vector.
    let l_rad = (((((periodic_sum(&L5S, jme) * jme + periodic_sum(&L4S, jme)) * jme
        + periodic_sum(&L3S, jme))
        * jme
        + periodic_sum(&L2S, jme))
        * jme
        + periodic_sum(&L1S, jme))
        * jme
        + periodic_sum(&L0S, jme))
        / 1e8;
    let l_deg = limit_deg(l_rad.to_degrees());
    let b_deg = ((periodic_sum(&B1S, jme) * jme + periodic_sum(&B0S, jme)) / 1e8).to_degrees();
    let r_au = ((((periodic_sum(&R4S, jme) * jme + periodic_sum(&R3S, jme)) * jme
        + periodic_sum(&R2S, jme))
        * jme
        + periodic_sum(&R1S, jme))
        * jme
        + periodic_sum(&R0S, jme))
        / 1e8;

    // 3.3 Geocentric longitude and latitude.
    let theta_deg = limit_deg(l_deg + 180.0);
    let beta_deg = -b_deg;

    // 3.4 Nutation.
    let t = jce;
    let x_deg = [
        297.85036 + 445267.111480 * t - 0.0019142 * t * t + t * t * t / 189474.0,
        357.52772 + 35999.050340 * t - 0.0001603 * t * t - t * t * t / 300000.0,
        134.96298 + 477198.867398 * t + 0.0086972 * t * t + t * t * t / 56250.0,
        93.27191 + 483202.017538 * t - 0.0036825 * t * t + t * t * t / 327270.0,
        125.04452 - 1934.136261 * t + 0.0020708 * t * t + t * t * t / 450000.0,
    ];
    let (delta_psi_deg, delta_eps_deg) = nutation(jce, &x_deg);

    // 3.5 True obliquity of the ecliptic (4680.93 as corrected in 2009).
    let u = jme / 10.0;
    let eps0_arcsec = 84381.448
        + u * (-4680.93
            + u * (-1.55
                + u * (1999.25
                    + u * (-51.38
                        + u * (-249.67
                            + u * (-39.05 + u * (7.12 + u * (27.87 + u * (5.79 + u * 2.45)))))))));
    let eps_deg = eps0_arcsec / 3600.0 + delta_eps_deg;

    // 3.6–3.7 Aberration and apparent sun longitude.
    let delta_tau_deg = -20.4898 / (3600.0 * r_au);
    let lambda_deg = theta_deg + delta_psi_deg + delta_tau_deg;

    // 3.8 Apparent sidereal time at Greenwich.
    let nu0_deg = limit_deg(
        280.46061837 + SIDEREAL_DEG_PER_DAY * days + 0.000387933 * jc * jc
            - jc * jc * jc / 38_710_000.0,
    );
    let (sin_eps, cos_eps) = eps_deg.to_radians().sin_cos();
    let nu_deg = nu0_deg + delta_psi_deg * cos_eps;

    // 3.9–3.10 Geocentric right ascension and declination.
    let (sin_lam, cos_lam) = lambda_deg.to_radians().sin_cos();
    let beta = beta_deg.to_radians();
    let alpha_deg = limit_deg(
        (sin_lam * cos_eps - beta.tan() * sin_eps)
            .atan2(cos_lam)
            .to_degrees(),
    );
    let delta_deg = (beta.sin() * cos_eps + beta.cos() * sin_eps * sin_lam)
        .asin()
        .to_degrees();

    // A.1 Equation of time, reduced to −720…720 min (±20 min in practice).
    let m = jme;
    let sun_mean_long = limit_deg(
        280.4664567
            + m * (360007.6982779
                + m * (0.03032028 + m * (1.0 / 49931.0 + m * (-1.0 / 15300.0 - m / 2_000_000.0)))),
    );
    let mut eot_min = (4.0 * (sun_mean_long - 0.0057183 - alpha_deg + delta_psi_deg * cos_eps))
        .rem_euclid(1440.0);
    if eot_min > 720.0 {
        eot_min -= 1440.0;
    }

    Geocentric {
        jd,
        jde,
        jc,
        jce,
        jme,
        l_deg,
        b_deg,
        r_au,
        theta_deg,
        beta_deg,
        x_deg,
        delta_psi_deg,
        delta_eps_deg,
        eps0_arcsec,
        eps_deg,
        delta_tau_deg,
        lambda_deg,
        nu0_deg,
        nu_deg,
        alpha_deg,
        delta_deg,
        eot_min,
    }
}

/// SPA observer part (steps 3.11–3.15) from apparent sidereal time ν, geocentric α, δ and R.
/// The observer terms of SPA that do not change with time: sin φ, cos φ and the parallax
/// terms x, y of step 3.12 (u = atan(0.99664719 tan φ), x = cos u + E/6378140 · cos φ,
/// y = 0.99664719 sin u + E/6378140 · sin φ).
#[derive(Clone, Copy, Debug)]
pub(crate) struct Site {
    longitude_deg: f64,
    sin_phi: f64,
    cos_phi: f64,
    x: f64,
    y: f64,
}

impl Site {
    pub(crate) fn new(obs: &Observer) -> Self {
        let phi = obs.latitude_deg.to_radians();
        let (sin_phi, cos_phi) = phi.sin_cos();
        let u = (0.99664719 * phi.tan()).atan();
        let (sin_u, cos_u) = u.sin_cos();
        Site {
            longitude_deg: obs.longitude_deg,
            sin_phi,
            cos_phi,
            x: cos_u + obs.elevation_m / 6_378_140.0 * cos_phi,
            y: 0.99664719 * sin_u + obs.elevation_m / 6_378_140.0 * sin_phi,
        }
    }
}

/// (sin θ, cos θ) of θ = atan2(y, x), from the ratio alone: (y/r, x/r), r = √(x² + y²);
/// θ = 0 when both are zero (as atan2(0, 0) = 0).
fn unit(y: f64, x: f64) -> (f64, f64) {
    let r = (x * x + y * y).sqrt();
    if r > 0.0 {
        (y / r, x / r)
    } else {
        (0.0, 1.0)
    }
}

/// SPA atmospheric refraction (step 3.14.2) at a geometric elevation, degrees: applied
/// only while the sun's upper limb can still be above the apparent horizon.
fn refraction_deg(e0_deg: f64, atm: &Atmosphere) -> f64 {
    if e0_deg >= -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG) {
        (atm.pressure_hpa / 1010.0) * (283.0 / (273.0 + atm.temperature_c)) * 1.02
            / (60.0 * (e0_deg + 10.3 / (e0_deg + 5.11)).to_radians().tan())
    } else {
        0.0
    }
}

/// Topocentric geometric elevation only (SPA steps 3.11–3.14.1, no refraction, no
/// azimuth): the part of [`spa_topocentric`] that finding a sunrise needs.
fn spa_geometric_elevation_deg(g: &GeoCore, site: &Site) -> f64 {
    let h = limit_deg(g.nu_deg + site.longitude_deg - g.alpha_deg).to_radians();
    let sin_xi = (8.794 / (3600.0 * g.r_au)).to_radians().sin();
    let (sin_d, cos_d) = g.delta_deg.to_radians().sin_cos();
    let (sin_h, cos_h) = h.sin_cos();
    let denom = cos_d - site.x * sin_xi * cos_h;
    let (sin_da, cos_da) = unit(-site.x * sin_xi * sin_h, denom);
    let (sin_dp, cos_dp) = unit((sin_d - site.y * sin_xi) * cos_da, denom);
    let cos_hp = cos_h * cos_da + sin_h * sin_da;
    (site.sin_phi * sin_dp + site.cos_phi * cos_dp * cos_hp)
        .clamp(-1.0, 1.0)
        .asin()
        .to_degrees()
}

/// The geometric elevation at which the apparent elevation reaches `threshold_deg`: the
/// apparent elevation e0 + Δe(e0) rises with e0 above SPA's refraction cut-off and equals
/// e0 below it, so "apparent above the threshold" is exactly "geometric above this value".
/// In the jump at the cut-off (Δe falls from 0.6° to 0 below it) the answer is the
/// cut-off. Found by the Illinois variant of false position until the apparent elevation
/// is within 1e-12° of the threshold (a handful of refraction evaluations).
fn geometric_threshold_deg(threshold_deg: f64, atm: &Atmosphere) -> f64 {
    let cutoff = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);
    let g = |e0: f64| e0 + refraction_deg(e0, atm) - threshold_deg;
    if threshold_deg < cutoff {
        return threshold_deg;
    }
    let g_cut = g(cutoff);
    if g_cut >= 0.0 {
        return cutoff;
    }
    // g(cutoff) < 0 ≤ g(threshold) (refraction ≥ 0), and g rises between them.
    let (mut lo, mut g_lo, mut hi, mut g_hi) = (cutoff, g_cut, threshold_deg, g(threshold_deg));
    let mut kept = 0i8;
    for _ in 0..100 {
        let x = (lo - g_lo * (hi - lo) / (g_hi - g_lo)).clamp(lo, hi);
        let gx = g(x);
        if gx.abs() <= 1e-12 || hi - lo <= 1e-12 {
            return x;
        }
        if gx > 0.0 {
            (hi, g_hi) = (x, gx);
            if kept == -1 {
                g_lo *= 0.5;
            }
            kept = -1;
        } else {
            (lo, g_lo) = (x, gx);
            if kept == 1 {
                g_hi *= 0.5;
            }
            kept = 1;
        }
    }
    0.5 * (lo + hi)
}

pub(crate) fn spa_topocentric(
    nu_deg: f64,
    alpha_deg: f64,
    delta_deg: f64,
    r_au: f64,
    site: &Site,
    atm: &Atmosphere,
) -> Topocentric {
    // 3.11 Observer local hour angle, measured westward from south.
    let h_deg = limit_deg(nu_deg + site.longitude_deg - alpha_deg);
    let h = h_deg.to_radians();

    // 3.12 Parallax in right ascension and topocentric declination.
    let xi_deg = 8.794 / (3600.0 * r_au);
    let sin_xi = xi_deg.to_radians().sin();
    let (sin_phi, cos_phi, x, y) = (site.sin_phi, site.cos_phi, site.x, site.y);
    let (sin_d, cos_d) = delta_deg.to_radians().sin_cos();
    let (sin_h, cos_h) = h.sin_cos();
    let denom = cos_d - x * sin_xi * cos_h;
    let num_alpha = -x * sin_xi * sin_h;
    let delta_alpha = num_alpha.atan2(denom);
    let delta_alpha_deg = delta_alpha.to_degrees();
    let alpha_prime_deg = alpha_deg + delta_alpha_deg;
    let (sin_da, cos_da) = unit(num_alpha, denom);
    let num_delta = (sin_d - y * sin_xi) * cos_da;
    let delta_prime = num_delta.atan2(denom);
    let delta_prime_deg = delta_prime.to_degrees();

    // 3.13 Topocentric local hour angle H' = H − Δα. Its sine and cosine come from the
    // angle-difference identities, and those of δ' = atan2(num, denom) from the same ratio,
    // instead of three more trigonometric calls.
    let h_prime_deg = h_deg - delta_alpha_deg;
    let (sin_hp, cos_hp) = (
        sin_h * cos_da - cos_h * sin_da,
        cos_h * cos_da + sin_h * sin_da,
    );
    let (sin_dp, cos_dp) = unit(num_delta, denom);

    // 3.14 Topocentric zenith angle. The refraction correction is applied only
    // while the sun's upper limb can still be above the apparent horizon, as in SPA.
    let e0_deg = (sin_phi * sin_dp + cos_phi * cos_dp * cos_hp)
        .clamp(-1.0, 1.0)
        .asin()
        .to_degrees();
    let delta_e_deg = refraction_deg(e0_deg, atm);
    let e_deg = e0_deg + delta_e_deg;
    let zenith_deg = 90.0 - e_deg;

    // 3.15 Topocentric azimuth.
    let azimuth_astro_deg = limit_deg(
        sin_hp
            .atan2(cos_hp * sin_phi - (sin_dp / cos_dp) * cos_phi)
            .to_degrees(),
    );
    let azimuth_deg = limit_deg(azimuth_astro_deg + 180.0);

    Topocentric {
        h_deg,
        xi_deg,
        delta_alpha_deg,
        alpha_prime_deg,
        delta_prime_deg,
        h_prime_deg,
        e0_deg,
        delta_e_deg,
        e_deg,
        zenith_deg,
        azimuth_astro_deg,
        azimuth_deg,
    }
}

/// The whole SPA with every intermediate value kept.
pub(crate) fn solar_position_detailed(
    unix_s: f64,
    obs: &Observer,
    atm: &Atmosphere,
    delta_t_s: f64,
) -> SpaDetail {
    let geo = spa_geocentric(unix_s, delta_t_s);
    let topo = spa_topocentric(
        geo.nu_deg,
        geo.alpha_deg,
        geo.delta_deg,
        geo.r_au,
        &Site::new(obs),
        atm,
    );
    SpaDetail { geo, topo }
}

impl SpaDetail {
    fn position(&self) -> SunPosition {
        SunPosition {
            zenith_deg: self.topo.zenith_deg,
            zenith_geometric_deg: 90.0 - self.topo.e0_deg,
            azimuth_deg: self.topo.azimuth_deg,
            declination_deg: self.topo.delta_prime_deg,
            equation_of_time_min: self.geo.eot_min,
        }
    }
}

/// Topocentric position of the sun, with and without refraction (NREL SPA).
///
/// # Formula
/// Reda & Andreas, steps 3.1–3.15 and A.1: Earth heliocentric L, B, R from the periodic
/// terms (Table A4.2); geocentric Θ = L + 180°, β = −B; nutation Δψ, Δε (Table A4.3);
/// true obliquity ε = ε0/3600 + Δε; aberration Δτ = −20.4898″/(3600·R);
/// λ = Θ + Δψ + Δτ; apparent sidereal time ν = ν0 + Δψ·cos ε; geocentric α, δ;
/// hour angle H = ν + σ − α; parallax (ξ = 8.794″/R, observer terms u, x, y) giving α′, δ′,
/// H′; e0 = asin(sin φ sin δ′ + cos φ cos δ′ cos H′);
/// refraction Δe = (P/1010)(283/(273 + T))·1.02 / (60·tan(e0 + 10.3/(e0 + 5.11))), applied
/// only when e0 ≥ −(0.26667° + 0.5667°); zenith θ = 90° − (e0 + Δe);
/// azimuth Φ = 180° + atan2(sin H′, cos H′ sin φ − tan δ′ cos φ).
/// Symbols: `unix_s` → JD (UTC as UT1), `delta_t_s` → ΔT = TT − UT1, `obs` → φ, σ, E,
/// `atm` → P (hPa = mbar), T (°C).
///
/// # Source
/// I. Reda, A. Andreas, "Solar Position Algorithm for Solar Radiation Applications",
/// NREL/TP-560-34302 (2003, revised January 2008), with the 2009 correction of the mean
/// obliquity constant (4680.93″). The nutation sum is evaluated with complex powers of the
/// five fundamental arguments (mathematically identical).
///
/// # Validity
/// Years −2000…6000, uncertainty ±0.0003° (the report's claim) given exact ΔT and UT1.
/// Refraction is an average-atmosphere model: near the horizon real refraction varies by
/// tenths of a degree, and below −0.83° geometric elevation no correction is applied.
///
/// # Example
/// The SPA report's worked example (Denver, 2003-10-17 12:30:30 MST):
/// ```
/// use wirerank::physics::sun::{solar_position, Atmosphere, Observer};
/// let obs = Observer { latitude_deg: 39.742476, longitude_deg: -105.1786, elevation_m: 1830.14 };
/// let atm = Atmosphere { pressure_hpa: 820.0, temperature_c: 11.0 };
/// let p = solar_position(1_066_419_030.0, &obs, &atm, 67.0);
/// assert!((p.zenith_deg - 50.111622).abs() < 5e-6);
/// assert!((p.azimuth_deg - 194.340241).abs() < 5e-6);
/// ```
pub fn solar_position(
    unix_s: f64,
    obs: &Observer,
    atm: &Atmosphere,
    delta_t_s: f64,
) -> SunPosition {
    solar_position_detailed(unix_s, obs, atm, delta_t_s).position()
}

// =======================================================================================
// Angles on surfaces, air mass, textbook geometry
// =======================================================================================

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
pub fn solar_time_offset_min(
    day_of_year: f64,
    longitude_deg: f64,
    standard_meridian_deg: f64,
) -> f64 {
    4.0 * (longitude_deg - standard_meridian_deg) + equation_of_time_min(day_of_year)
}

// =======================================================================================
// One sun position per weather interval
// =======================================================================================

/// The sun position that stands for one weather interval.
#[derive(Clone, Copy, Debug)]
pub struct IntervalSun {
    /// Instant at which `position` was evaluated (Unix seconds, UTC).
    pub eval_unix_s: f64,
    /// Fraction of the interval during which the sun is up (see [`interval_sun`]), 0…1.
    pub sunlit_frac: f64,
    pub position: SunPosition,
}

/// The observer-independent quantities the topocentric step needs (a subset of
/// [`Geocentric`]), so that they can come from a full SPA run or from interpolation.
#[derive(Clone, Copy, Debug)]
pub(crate) struct GeoCore {
    pub nu_deg: f64,
    pub alpha_deg: f64,
    pub delta_deg: f64,
    pub r_au: f64,
    pub eot_min: f64,
}

impl Geocentric {
    fn core(&self) -> GeoCore {
        GeoCore {
            nu_deg: self.nu_deg,
            alpha_deg: self.alpha_deg,
            delta_deg: self.delta_deg,
            r_au: self.r_au,
            eot_min: self.eot_min,
        }
    }
}

impl GeoCore {
    fn topocentric(&self, site: &Site, atm: &Atmosphere) -> Topocentric {
        spa_topocentric(
            self.nu_deg,
            self.alpha_deg,
            self.delta_deg,
            self.r_au,
            site,
            atm,
        )
    }

    fn position(&self, site: &Site, atm: &Atmosphere) -> SunPosition {
        let topo = self.topocentric(site, atm);
        SunPosition {
            zenith_deg: topo.zenith_deg,
            zenith_geometric_deg: 90.0 - topo.e0_deg,
            azimuth_deg: topo.azimuth_deg,
            declination_deg: topo.delta_prime_deg,
            equation_of_time_min: self.eot_min,
        }
    }

    /// Geocentric geometric elevation (no parallax, no refraction), degrees: three
    /// trigonometric calls instead of the full topocentric step. Parallax lowers the
    /// topocentric value by at most ξ ≈ 0.0025°.
    fn geocentric_elevation_deg(&self, site: &Site) -> f64 {
        let (sd, cd) = self.delta_deg.to_radians().sin_cos();
        let h = (self.nu_deg + site.longitude_deg - self.alpha_deg).to_radians();
        (site.sin_phi * sd + site.cos_phi * cd * h.cos())
            .clamp(-1.0, 1.0)
            .asin()
            .to_degrees()
    }
}

/// Fastest rate of change of the sun's elevation at a latitude, degrees per hour.
///
/// de/dt = −ω cos φ sin A (A = azimuth, ω = Earth rotation relative to the sun, at most
/// ~15.04°/h with the equation-of-time drift), plus the declination's own motion (at most
/// ~0.017°/h), rounded up.
fn max_elevation_rate_deg_per_h(lat_deg: f64) -> f64 {
    15.1 * lat_deg.to_radians().cos().abs() + 0.02
}

/// Geometric elevation below which SPA adds no refraction, degrees: −(0.26667 + 0.5667).
const NO_REFRACTION_BELOW_DEG: f64 = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);

/// Verdict on an interval from one elevation estimate at its midpoint.
enum Screen {
    /// Apparent elevation > 0 throughout.
    LitThroughout,
    /// Apparent elevation < 0 throughout.
    DarkThroughout,
    Undecided,
}

/// Decide an interval from a geometric elevation `e_mid_deg` at its midpoint known to within
/// `err_deg`. Over the half interval the geometric elevation moves at most `reach`. If it
/// stays above 0, the apparent elevation (≥ geometric) does too; if it stays below
/// −0.8334°, SPA adds no refraction and the apparent elevation equals it, < 0.
fn screen(e_mid_deg: f64, err_deg: f64, lat_deg: f64, len_s: f64) -> Screen {
    let reach = max_elevation_rate_deg_per_h(lat_deg) * (0.5 * len_s / 3600.0) + err_deg + 0.01;
    if e_mid_deg - reach > 0.0 {
        Screen::LitThroughout
    } else if e_mid_deg + reach < NO_REFRACTION_BELOW_DEG - 1e-4 {
        Screen::DarkThroughout
    } else {
        Screen::Undecided
    }
}

/// Low-precision geometric elevation of the sun's centre, degrees, from the Astronomical
/// Almanac's low-precision formulas (n = JD − 2451545: L = 280.460° + 0.9856474° n,
/// g = 357.528° + 0.9856003° n, λ = L + 1.915° sin g + 0.020° sin 2g,
/// ε = 23.439° − 4e-7° n; α, δ from λ, ε) and the SPA mean sidereal time. The Almanac
/// states 0.01° for α and δ over 1950–2050; against SPA (tested, 1900–2100) the elevation
/// stays within [`LOW_PRECISION_ERROR_DEG`]. Only used to skip SPA in intervals that are
/// dark throughout.
fn low_precision_elevation_deg(unix_s: f64, obs: &Observer) -> f64 {
    let n = (unix_s - UNIX_J2000_S) / 86400.0;
    let l = 280.460 + 0.985_647_4 * n;
    let g = (357.528 + 0.985_600_3 * n).to_radians();
    let lambda = (l + 1.915 * g.sin() + 0.020 * (2.0 * g).sin()).to_radians();
    let (se, ce) = (23.439 - 4e-7 * n).to_radians().sin_cos();
    let (sl, cl) = lambda.sin_cos();
    let alpha_deg = (ce * sl).atan2(cl).to_degrees();
    let sin_delta = se * sl;
    let cos_delta = (1.0 - sin_delta * sin_delta).sqrt();
    let h = (280.46061837 + SIDEREAL_DEG_PER_DAY * n + obs.longitude_deg - alpha_deg).to_radians();
    let (sp, cp) = obs.latitude_deg.to_radians().sin_cos();
    (sp * sin_delta + cp * cos_delta * h.cos())
        .clamp(-1.0, 1.0)
        .asin()
        .to_degrees()
}

/// Error allowance of [`low_precision_elevation_deg`] against SPA's topocentric geometric
/// elevation (measured ≤ 0.02° over 1900–2100, see tests), degrees.
const LOW_PRECISION_ERROR_DEG: f64 = 0.1;

/// Unix-time range in which the low-precision screen is trusted: 1900–2100.
const LOW_PRECISION_RANGE_S: (f64, f64) = (-2_208_988_800.0, 4_102_444_800.0);

/// Linear interpolation of [`GeoCore`] between two instants (ν is advanced at the sidereal
/// rate and its small remaining drift interpolated; angles are unwrapped first).
struct GeoLine {
    t0: f64,
    t1: f64,
    g0: GeoCore,
    nu_drift: f64,
    d_alpha: f64,
    d_delta: f64,
    d_r: f64,
}

impl GeoLine {
    fn new(t0: f64, g0: &GeoCore, t1: f64, g1: &GeoCore) -> Self {
        let span_days = (t1 - t0) / 86400.0;
        GeoLine {
            t0,
            t1,
            g0: *g0,
            nu_drift: wrap180(g1.nu_deg - g0.nu_deg - SIDEREAL_DEG_PER_DAY * span_days),
            d_alpha: wrap180(g1.alpha_deg - g0.alpha_deg),
            d_delta: g1.delta_deg - g0.delta_deg,
            d_r: g1.r_au - g0.r_au,
        }
    }

    fn at(&self, t: f64) -> GeoCore {
        let f = (t - self.t0) / (self.t1 - self.t0);
        GeoCore {
            nu_deg: self.g0.nu_deg
                + SIDEREAL_DEG_PER_DAY * (t - self.t0) / 86400.0
                + self.nu_drift * f,
            alpha_deg: self.g0.alpha_deg + self.d_alpha * f,
            delta_deg: self.g0.delta_deg + self.d_delta * f,
            r_au: self.g0.r_au + self.d_r * f,
            eot_min: self.g0.eot_min,
        }
    }
}

/// Longest bracket over which the geocentric quantities are interpolated linearly instead
/// of recomputed, seconds. Over 2 h the interpolation error in α and δ is below 3e-7° (worst case measured 2.45e-7° over 1990–2050).
const MAX_INTERPOLATION_SPAN_S: f64 = 7200.0;

/// Time resolution of the sunrise/sunset search, seconds.
const CROSSING_TOLERANCE_S: f64 = 1.0;

/// Instant at which the geometric elevation of the sun's centre crosses `target_deg`
/// between `t_lo` and `t_hi`, to a bracket of [`CROSSING_TOLERANCE_S`]; the answer is the
/// midpoint of the final bracket. The sign of (elevation − target) must differ at the two
/// ends.
///
/// An apparent threshold is searched as its geometric equivalent
/// ([`geometric_threshold_deg`], computed by the caller once), so the search runs on the
/// smooth geometric elevation (the apparent one has a kink and a jump at SPA's refraction
/// cut-off). While the bracket is longer than [`MAX_INTERPOLATION_SPAN_S`] it is halved
/// with geocentric values from `geo`; then the geocentric values are interpolated linearly
/// and false position, with a probe 0.9 of a tolerance beyond each estimate, closes the
/// bracket (bisection if that stalls).
fn find_crossing(
    mut t_lo: f64,
    mut g_lo: GeoCore,
    mut t_hi: f64,
    mut g_hi: GeoCore,
    site: &Site,
    geo: &impl Fn(f64) -> GeoCore,
    target_deg: f64,
) -> f64 {
    let above = |g: &GeoCore| spa_geometric_elevation_deg(g, site) - target_deg;
    let mut f_lo = above(&g_lo);
    let up_at_lo = f_lo > 0.0;
    while t_hi - t_lo > MAX_INTERPOLATION_SPAN_S {
        let t_mid = 0.5 * (t_lo + t_hi);
        let g = geo(t_mid);
        let f_mid = above(&g);
        if (f_mid > 0.0) == up_at_lo {
            t_lo = t_mid;
            g_lo = g;
            f_lo = f_mid;
        } else {
            t_hi = t_mid;
            g_hi = g;
        }
    }
    let line = GeoLine::new(t_lo, &g_lo, t_hi, &g_hi);
    let f = |t: f64| above(&line.at(t));
    let mut f_hi = f(t_hi);
    let same = |x: f64| (x > 0.0) == up_at_lo;
    let half = 0.5 * CROSSING_TOLERANCE_S;
    let step = 0.9 * CROSSING_TOLERANCE_S;
    let mut rounds = 0;
    while t_hi - t_lo > CROSSING_TOLERANCE_S {
        rounds += 1;
        let straddles = same(f_lo) && !same(f_hi) && f_lo != f_hi;
        if !straddles || rounds > MAX_SECANT_ROUNDS {
            let t_mid = 0.5 * (t_lo + t_hi);
            let f_mid = f(t_mid);
            if same(f_mid) {
                (t_lo, f_lo) = (t_mid, f_mid);
            } else {
                (t_hi, f_hi) = (t_mid, f_mid);
            }
            continue;
        }
        let t = (t_lo + (t_hi - t_lo) * f_lo / (f_lo - f_hi)).clamp(t_lo + half, t_hi - half);
        let f_t = f(t);
        let probe = if same(f_t) {
            (t_lo, f_lo) = (t, f_t);
            t + step
        } else {
            (t_hi, f_hi) = (t, f_t);
            t - step
        };
        if probe > t_lo && probe < t_hi {
            let f_p = f(probe);
            if same(f_p) {
                (t_lo, f_lo) = (probe, f_p);
            } else {
                (t_hi, f_hi) = (probe, f_p);
            }
        }
    }
    0.5 * (t_lo + t_hi)
}

/// False-position rounds before [`find_crossing`] falls back to bisection (the smooth
/// geometric elevation needs one or two).
const MAX_SECANT_ROUNDS: u32 = 12;

/// When the sun's centre crosses an elevation between two instants (full SPA).
#[cfg_attr(not(test), allow(dead_code))]
pub(crate) fn find_sun_crossing(
    t_lo: f64,
    t_hi: f64,
    obs: &Observer,
    atm: &Atmosphere,
    delta_t_s: f64,
    threshold_deg: f64,
    apparent: bool,
) -> f64 {
    let geo = |t: f64| spa_geocentric(t, delta_t_s).core();
    let target = if apparent {
        geometric_threshold_deg(threshold_deg, atm)
    } else {
        threshold_deg
    };
    find_crossing(
        t_lo,
        geo(t_lo),
        t_hi,
        geo(t_hi),
        &Site::new(obs),
        &geo,
        target,
    )
}

/// The interval rule of [`interval_sun`], with the geocentric values taken from `geo`.
fn interval_sun_from(
    start: f64,
    end: f64,
    obs: &PreparedObserver,
    atm: &Atmosphere,
    geo: &impl Fn(f64) -> GeoCore,
) -> Option<IntervalSun> {
    let site = &obs.site;
    if end <= start || end.is_nan() || start.is_nan() {
        let g = geo(start);
        let position = g.position(site, atm);
        return (position.elevation_deg() > 0.0).then_some(IntervalSun {
            eval_unix_s: start,
            sunlit_frac: 1.0,
            position,
        });
    }
    let len = end - start;
    let t_mid = 0.5 * (start + end);
    let g_mid = geo(t_mid);
    // Cheap verdict from the geocentric elevation (parallax ≤ 0.0025° is the error).
    match screen(
        g_mid.geocentric_elevation_deg(site),
        0.003,
        obs.latitude_deg,
        len,
    ) {
        Screen::DarkThroughout => return None,
        Screen::LitThroughout => {
            return Some(IntervalSun {
                eval_unix_s: t_mid,
                sunlit_frac: 1.0,
                position: g_mid.position(site, atm),
            })
        }
        Screen::Undecided => {}
    }

    let g_start = geo(start);
    let g_end = geo(end);
    // "Apparent elevation above 0°" is "geometric elevation above its equivalent", which
    // skips refraction and azimuth at the three sampled instants.
    let target = geometric_threshold_deg(0.0, atm);
    let up = |g: &GeoCore| spa_geometric_elevation_deg(g, site) > target;
    let crossing = |t0: f64, g0: &GeoCore, t1: f64, g1: &GeoCore| {
        find_crossing(t0, *g0, t1, *g1, site, geo, target)
    };
    let (lit_from, lit_to, lit_total) = match (up(&g_start), up(&g_mid), up(&g_end)) {
        (false, false, false) => return None,
        (true, true, true) => {
            return Some(IntervalSun {
                eval_unix_s: t_mid,
                sunlit_frac: 1.0,
                position: g_mid.position(site, atm),
            })
        }
        // Sunrise inside.
        (false, true, true) => {
            let t = crossing(start, &g_start, t_mid, &g_mid);
            (t, end, end - t)
        }
        (false, false, true) => {
            let t = crossing(t_mid, &g_mid, end, &g_end);
            (t, end, end - t)
        }
        // Sunset inside.
        (true, true, false) => {
            let t = crossing(t_mid, &g_mid, end, &g_end);
            (start, t, t - start)
        }
        (true, false, false) => {
            let t = crossing(start, &g_start, t_mid, &g_mid);
            (start, t, t - start)
        }
        // Rise and set inside.
        (false, true, false) => {
            let rise = crossing(start, &g_start, t_mid, &g_mid);
            let set = crossing(t_mid, &g_mid, end, &g_end);
            (rise, set, set - rise)
        }
        // Set, then rise again inside: evaluate in the longer sunlit piece.
        (true, false, true) => {
            let set = crossing(start, &g_start, t_mid, &g_mid);
            let rise = crossing(t_mid, &g_mid, end, &g_end);
            let (first, second) = (set - start, end - rise);
            if first >= second {
                (start, set, first + second)
            } else {
                (rise, end, first + second)
            }
        }
    };
    let eval = 0.5 * (lit_from + lit_to);
    Some(IntervalSun {
        eval_unix_s: eval,
        sunlit_frac: (lit_total / len).clamp(0.0, 1.0),
        position: geo(eval).position(site, atm),
    })
}

/// The sun for one weather interval [start, end): where to evaluate it and how much of the
/// interval is sunlit.
///
/// # Formula
/// "Sunlit" means the apparent topocentric elevation of the sun's centre is above 0°
/// (SPA refraction included: at 1010 hPa and 10 °C the sun counts as up once its geometric
/// centre is 0.57° below the horizon; the upper-limb sunrise of almanacs, at −0.8333°, comes
/// earlier, by 2.1 min in Denver in October). Then:
/// - sunlit throughout: evaluate at the midpoint, `sunlit_frac` = 1;
/// - sunrise (or sunset) inside: find the crossing t_c of the apparent elevation to ~1 s
///   (searched as its geometric equivalent, see `find_crossing`); evaluate at the midpoint of [t_c, end) (or [start, t_c));
/// - rise and set inside (polar day edges, long intervals): midpoint of [t_rise, t_set);
/// - set then rise inside (sun grazing the horizon near midnight at high latitude): the
///   midpoint of the longer sunlit piece, `sunlit_frac` = both pieces together;
/// - dark throughout: `None`.
///
/// The apparent elevation at start, midpoint and end decides the case. Cheaper paths reach
/// the same verdict where the sun cannot cross the horizon within half an interval of the
/// midpoint (elevation bound: 15.1°/h · |cos φ| + 0.02°/h): a low-precision almanac
/// formula (error allowance 0.1°, 1900–2100 only) settles "dark throughout" without SPA,
/// and one SPA call at the midpoint settles "sunlit throughout". Otherwise both ends get a
/// full SPA call too, and the search interpolates the geocentric values linearly between
/// full SPA calls (error < 3e-7° over 2 h), so that only the topocentric step repeats. The
/// evaluation point always gets a full SPA call.
///
/// # Source
/// notebooks-free-docs/method-sun.md (midpoint, or midpoint of the sunlit part at sunrise/sunset — common
/// practice for hourly data); SPA ([`solar_position`]) for every reported position.
///
/// # Validity
/// Intervals from seconds to a day. A rise-and-set pair that fits entirely between the
/// three sampled instants is not seen (the sun would have to graze the horizon for less
/// than half an interval, which happens only within a few days of the start or end of polar
/// night). An empty or reversed interval (`end_unix_s <= start_unix_s`) is treated as the
/// instant `start_unix_s`.
pub fn interval_sun(
    start_unix_s: f64,
    end_unix_s: f64,
    obs: &Observer,
    atm: &Atmosphere,
    delta_t_s: f64,
) -> Option<IntervalSun> {
    let t_mid = 0.5 * (start_unix_s + end_unix_s);
    if end_unix_s > start_unix_s
        && (LOW_PRECISION_RANGE_S.0..LOW_PRECISION_RANGE_S.1).contains(&t_mid)
    {
        let e = low_precision_elevation_deg(t_mid, obs);
        let len = end_unix_s - start_unix_s;
        if let Screen::DarkThroughout = screen(e, LOW_PRECISION_ERROR_DEG, obs.latitude_deg, len) {
            return None;
        }
    }
    let geo = |t: f64| spa_geocentric(t, delta_t_s).core();
    interval_sun_from(start_unix_s, end_unix_s, &obs.prepare(), atm, &geo)
}

// =======================================================================================
// Precomputed geocentric ephemeris (many positions over one span)
// =======================================================================================

/// The sun's geocentric SPA quantities at 00:00 UTC of every day of a time span, for fast
/// positions anywhere inside it.
///
/// A year of hourly weather needs ~9 000 positions; the observer-independent part of SPA
/// (the 195 periodic terms and the nutation series) is over 90 % of each one, and it varies
/// smoothly over days. This table runs the full SPA once per day and interpolates α, δ, R,
/// the nutation term of the sidereal time and the equation of time with a four-point
/// (cubic) Lagrange formula; the mean sidereal time is computed exactly, and the
/// topocentric step (parallax, refraction, azimuth) runs in full for each position.
///
/// # Source
/// SPA (Reda & Andreas 2008) for the nodes; interpolating α and δ between daily values is
/// SPA's own method for sunrise/transit/sunset (its section A.2, three-point form).
///
/// # Validity
/// Within 3e-7° of [`solar_position`] (tested; measured at most 2.5e-7° over 1990–2050).
/// Outside the span given to [`SunEphemeris::new`] the methods fall back to full SPA.
#[derive(Clone, Debug)]
pub struct SunEphemeris {
    /// Unix time of node 0 (00:00 UTC).
    first_node_unix_s: f64,
    delta_t_s: f64,
    nodes: Vec<EphemerisNode>,
}

/// One daily node: α unwrapped so that it is continuous across nodes.
#[derive(Clone, Copy, Debug)]
struct EphemerisNode {
    alpha_deg: f64,
    delta_deg: f64,
    r_au: f64,
    /// Nutation in right ascension Δψ·cos ε (ν − ν0), degrees.
    nu_nutation_deg: f64,
    eot_min: f64,
}

/// Mean sidereal time ν0 at Greenwich (SPA step 3.8), degrees, not reduced.
fn mean_sidereal_time_deg(unix_s: f64) -> f64 {
    let days = (unix_s - UNIX_J2000_S) / 86400.0;
    let jc = days / 36525.0;
    280.46061837 + SIDEREAL_DEG_PER_DAY * days + 0.000387933 * jc * jc - jc * jc * jc / 38_710_000.0
}

impl SunEphemeris {
    /// Run SPA at 00:00 UTC of each day covering [start, end] plus one day either side.
    ///
    /// # Validity
    /// Any span; memory is 40 bytes per day. `delta_t_s` as for [`solar_position`].
    pub fn new(start_unix_s: f64, end_unix_s: f64, delta_t_s: f64) -> Self {
        let first_day = (start_unix_s.min(end_unix_s) / 86400.0).floor() - 1.0;
        let last_day = (start_unix_s.max(end_unix_s) / 86400.0).floor() + 2.0;
        let first_node_unix_s = first_day * 86400.0;
        let count = (last_day - first_day) as usize + 1;
        let mut nodes: Vec<EphemerisNode> = Vec::with_capacity(count);
        for i in 0..count {
            let t = first_node_unix_s + 86400.0 * i as f64;
            let g = spa_geocentric(t, delta_t_s);
            let mut alpha_deg = g.alpha_deg;
            if let Some(prev) = nodes.last() {
                alpha_deg = prev.alpha_deg + wrap180(g.alpha_deg - prev.alpha_deg);
            }
            nodes.push(EphemerisNode {
                alpha_deg,
                delta_deg: g.delta_deg,
                r_au: g.r_au,
                nu_nutation_deg: g.nu_deg - g.nu0_deg,
                eot_min: g.eot_min,
            });
        }
        SunEphemeris {
            first_node_unix_s,
            delta_t_s,
            nodes,
        }
    }

    /// Geocentric values at an instant: interpolated inside the span, full SPA outside.
    pub(crate) fn geo_core(&self, unix_s: f64) -> GeoCore {
        let d = (unix_s - self.first_node_unix_s) / 86400.0;
        let i = d.floor();
        if !(i >= 1.0 && i + 2.0 < self.nodes.len() as f64) {
            return spa_geocentric(unix_s, self.delta_t_s).core();
        }
        let f = d - i;
        let i = i as usize;
        // Lagrange weights on nodes i−1, i, i+1, i+2 at offset f from node i.
        let w = [
            -f * (f - 1.0) * (f - 2.0) / 6.0,
            (f + 1.0) * (f - 1.0) * (f - 2.0) / 2.0,
            -(f + 1.0) * f * (f - 2.0) / 2.0,
            (f + 1.0) * f * (f - 1.0) / 6.0,
        ];
        let n = &self.nodes[i - 1..i + 3];
        let mix = |get: fn(&EphemerisNode) -> f64| {
            w[0] * get(&n[0]) + w[1] * get(&n[1]) + w[2] * get(&n[2]) + w[3] * get(&n[3])
        };
        GeoCore {
            nu_deg: limit_deg(mean_sidereal_time_deg(unix_s)) + mix(|e| e.nu_nutation_deg),
            alpha_deg: limit_deg(mix(|e| e.alpha_deg)),
            delta_deg: mix(|e| e.delta_deg),
            r_au: mix(|e| e.r_au),
            eot_min: mix(|e| e.eot_min),
        }
    }

    /// Topocentric position at an instant, as [`solar_position`] (to 3e-7°).
    pub fn position(&self, unix_s: f64, obs: &Observer, atm: &Atmosphere) -> SunPosition {
        self.geo_core(unix_s).position(&Site::new(obs), atm)
    }

    /// The interval rule of [`interval_sun`] on this ephemeris (to 3e-7° and ~1 s).
    pub fn interval_sun(
        &self,
        start_unix_s: f64,
        end_unix_s: f64,
        obs: &Observer,
        atm: &Atmosphere,
    ) -> Option<IntervalSun> {
        self.interval_sun_prepared(start_unix_s, end_unix_s, &obs.prepare(), atm)
    }

    /// [`SunEphemeris::interval_sun`] for an observer prepared once
    /// ([`Observer::prepare`]): the same result, cheaper over many intervals.
    pub fn interval_sun_prepared(
        &self,
        start_unix_s: f64,
        end_unix_s: f64,
        obs: &PreparedObserver,
        atm: &Atmosphere,
    ) -> Option<IntervalSun> {
        interval_sun_from(start_unix_s, end_unix_s, obs, atm, &|t| self.geo_core(t))
    }
}

// ---------------------------------------------------------------------------------------
// Periodic terms of the SPA report, Table A4.2 (Earth heliocentric longitude L, latitude B,
// radius vector R; each row A, B, C for A·cos(B + C·JME)), and Table A4.3 (nutation in
// longitude and obliquity). The SPA report takes them from Meeus, Astronomical Algorithms
// (1998), which abridges VSOP87 and the IAU 1980 nutation series. (Phases such as 3.142
// and 3.14 are the tables' values, not approximations of π.)
// ---------------------------------------------------------------------------------------

const L0: [[f64; 3]; 64] = [
    [175347046.0, 0.0, 0.0],
    [3341656.0, 4.6692568, 6283.07585],
    [34894.0, 4.6261, 12566.1517],
    [3497.0, 2.7441, 5753.3849],
    [3418.0, 2.8289, 3.5231],
    [3136.0, 3.6277, 77713.7715],
    [2676.0, 4.4181, 7860.4194],
    [2343.0, 6.1352, 3930.2097],
    [1324.0, 0.7425, 11506.7698],
    [1273.0, 2.0371, 529.691],
    [1199.0, 1.1096, 1577.3435],
    [990.0, 5.233, 5884.927],
    [902.0, 2.045, 26.298],
    [857.0, 3.508, 398.149],
    [780.0, 1.179, 5223.694],
    [753.0, 2.533, 5507.553],
    [505.0, 4.583, 18849.228],
    [492.0, 4.205, 775.523],
    [357.0, 2.92, 0.067],
    [317.0, 5.849, 11790.629],
    [284.0, 1.899, 796.298],
    [271.0, 0.315, 10977.079],
    [243.0, 0.345, 5486.778],
    [206.0, 4.806, 2544.314],
    [205.0, 1.869, 5573.143],
    [202.0, 2.458, 6069.777],
    [156.0, 0.833, 213.299],
    [132.0, 3.411, 2942.463],
    [126.0, 1.083, 20.775],
    [115.0, 0.645, 0.98],
    [103.0, 0.636, 4694.003],
    [102.0, 0.976, 15720.839],
    [102.0, 4.267, 7.114],
    [99.0, 6.21, 2146.17],
    [98.0, 0.68, 155.42],
    [86.0, 5.98, 161000.69],
    [85.0, 1.3, 6275.96],
    [85.0, 3.67, 71430.7],
    [80.0, 1.81, 17260.15],
    [79.0, 3.04, 12036.46],
    [75.0, 1.76, 5088.63],
    [74.0, 3.5, 3154.69],
    [74.0, 4.68, 801.82],
    [70.0, 0.83, 9437.76],
    [62.0, 3.98, 8827.39],
    [61.0, 1.82, 7084.9],
    [57.0, 2.78, 6286.6],
    [56.0, 4.39, 14143.5],
    [56.0, 3.47, 6279.55],
    [52.0, 0.19, 12139.55],
    [52.0, 1.33, 1748.02],
    [51.0, 0.28, 5856.48],
    [49.0, 0.49, 1194.45],
    [41.0, 5.37, 8429.24],
    [41.0, 2.4, 19651.05],
    [39.0, 6.17, 10447.39],
    [37.0, 6.04, 10213.29],
    [37.0, 2.57, 1059.38],
    [36.0, 1.71, 2352.87],
    [36.0, 1.78, 6812.77],
    [33.0, 0.59, 17789.85],
    [30.0, 0.44, 83996.85],
    [30.0, 2.74, 1349.87],
    [25.0, 3.16, 4690.48],
];

const L1: [[f64; 3]; 34] = [
    [628331966747.0, 0.0, 0.0],
    [206059.0, 2.678235, 6283.07585],
    [4303.0, 2.6351, 12566.1517],
    [425.0, 1.59, 3.523],
    [119.0, 5.796, 26.298],
    [109.0, 2.966, 1577.344],
    [93.0, 2.59, 18849.23],
    [72.0, 1.14, 529.69],
    [68.0, 1.87, 398.15],
    [67.0, 4.41, 5507.55],
    [59.0, 2.89, 5223.69],
    [56.0, 2.17, 155.42],
    [45.0, 0.4, 796.3],
    [36.0, 0.47, 775.52],
    [29.0, 2.65, 7.11],
    [21.0, 5.34, 0.98],
    [19.0, 1.85, 5486.78],
    [19.0, 4.97, 213.3],
    [17.0, 2.99, 6275.96],
    [16.0, 0.03, 2544.31],
    [16.0, 1.43, 2146.17],
    [15.0, 1.21, 10977.08],
    [12.0, 2.83, 1748.02],
    [12.0, 3.26, 5088.63],
    [12.0, 5.27, 1194.45],
    [12.0, 2.08, 4694.0],
    [11.0, 0.77, 553.57],
    [10.0, 1.3, 6286.6],
    [10.0, 4.24, 1349.87],
    [9.0, 2.7, 242.73],
    [9.0, 5.64, 951.72],
    [8.0, 5.3, 2352.87],
    [6.0, 2.65, 9437.76],
    [6.0, 4.67, 4690.48],
];

const L2: [[f64; 3]; 20] = [
    [52919.0, 0.0, 0.0],
    [8720.0, 1.0721, 6283.0758],
    [309.0, 0.867, 12566.152],
    [27.0, 0.05, 3.52],
    [16.0, 5.19, 26.3],
    [16.0, 3.68, 155.42],
    [10.0, 0.76, 18849.23],
    [9.0, 2.06, 77713.77],
    [7.0, 0.83, 775.52],
    [5.0, 4.66, 1577.34],
    [4.0, 1.03, 7.11],
    [4.0, 3.44, 5573.14],
    [3.0, 5.14, 796.3],
    [3.0, 6.05, 5507.55],
    [3.0, 1.19, 242.73],
    [3.0, 6.12, 529.69],
    [3.0, 0.31, 398.15],
    [3.0, 2.28, 553.57],
    [2.0, 4.38, 5223.69],
    [2.0, 3.75, 0.98],
];

const L3: [[f64; 3]; 7] = [
    [289.0, 5.844, 6283.076],
    [35.0, 0.0, 0.0],
    [17.0, 5.49, 12566.15],
    [3.0, 5.2, 155.42],
    [1.0, 4.72, 3.52],
    [1.0, 5.3, 18849.23],
    [1.0, 5.97, 242.73],
];

#[allow(clippy::approx_constant)]
const L4: [[f64; 3]; 3] = [
    [114.0, 3.142, 0.0],
    [8.0, 4.13, 6283.08],
    [1.0, 3.84, 12566.15],
];

#[allow(clippy::approx_constant)]
const L5: [[f64; 3]; 1] = [[1.0, 3.14, 0.0]];

const B0: [[f64; 3]; 5] = [
    [280.0, 3.199, 84334.662],
    [102.0, 5.422, 5507.553],
    [80.0, 3.88, 5223.69],
    [44.0, 3.7, 2352.87],
    [32.0, 4.0, 1577.34],
];

const B1: [[f64; 3]; 2] = [[9.0, 3.9, 5507.55], [6.0, 1.73, 5223.69]];

const R0: [[f64; 3]; 40] = [
    [100013989.0, 0.0, 0.0],
    [1670700.0, 3.0984635, 6283.07585],
    [13956.0, 3.05525, 12566.1517],
    [3084.0, 5.1985, 77713.7715],
    [1628.0, 1.1739, 5753.3849],
    [1576.0, 2.8469, 7860.4194],
    [925.0, 5.453, 11506.77],
    [542.0, 4.564, 3930.21],
    [472.0, 3.661, 5884.927],
    [346.0, 0.964, 5507.553],
    [329.0, 5.9, 5223.694],
    [307.0, 0.299, 5573.143],
    [243.0, 4.273, 11790.629],
    [212.0, 5.847, 1577.344],
    [186.0, 5.022, 10977.079],
    [175.0, 3.012, 18849.228],
    [110.0, 5.055, 5486.778],
    [98.0, 0.89, 6069.78],
    [86.0, 5.69, 15720.84],
    [86.0, 1.27, 161000.69],
    [65.0, 0.27, 17260.15],
    [63.0, 0.92, 529.69],
    [57.0, 2.01, 83996.85],
    [56.0, 5.24, 71430.7],
    [49.0, 3.25, 2544.31],
    [47.0, 2.58, 775.52],
    [45.0, 5.54, 9437.76],
    [43.0, 6.01, 6275.96],
    [39.0, 5.36, 4694.0],
    [38.0, 2.39, 8827.39],
    [37.0, 0.83, 19651.05],
    [37.0, 4.9, 12139.55],
    [36.0, 1.67, 12036.46],
    [35.0, 1.84, 2942.46],
    [33.0, 0.24, 7084.9],
    [32.0, 0.18, 5088.63],
    [32.0, 1.78, 398.15],
    [28.0, 1.21, 6286.6],
    [28.0, 1.9, 6279.55],
    [26.0, 4.59, 10447.39],
];

#[allow(clippy::approx_constant)]
const R1: [[f64; 3]; 10] = [
    [103019.0, 1.10749, 6283.07585],
    [1721.0, 1.0644, 12566.1517],
    [702.0, 3.142, 0.0],
    [32.0, 1.02, 18849.23],
    [31.0, 2.84, 5507.55],
    [25.0, 1.32, 5223.69],
    [18.0, 1.42, 1577.34],
    [10.0, 5.91, 10977.08],
    [9.0, 1.42, 6275.96],
    [9.0, 0.27, 5486.78],
];

#[allow(clippy::approx_constant)]
const R2: [[f64; 3]; 6] = [
    [4359.0, 5.7846, 6283.0758],
    [124.0, 5.579, 12566.152],
    [12.0, 3.14, 0.0],
    [9.0, 3.63, 77713.77],
    [6.0, 1.87, 5573.14],
    [3.0, 5.47, 18849.23],
];

const R3: [[f64; 3]; 2] = [[145.0, 4.273, 6283.076], [7.0, 3.92, 12566.15]];

const R4: [[f64; 3]; 1] = [[4.0, 2.56, 6283.08]];

const L0S: Series<64> = by_column(&L0);
const L1S: Series<34> = by_column(&L1);
const L2S: Series<20> = by_column(&L2);
const L3S: Series<7> = by_column(&L3);
const L4S: Series<3> = by_column(&L4);
const L5S: Series<1> = by_column(&L5);
const B0S: Series<5> = by_column(&B0);
const B1S: Series<2> = by_column(&B1);
const R0S: Series<40> = by_column(&R0);
const R1S: Series<10> = by_column(&R1);
const R2S: Series<6> = by_column(&R2);
const R3S: Series<2> = by_column(&R3);
const R4S: Series<1> = by_column(&R4);

/// Nutation arguments: multipliers of X0 (D), X1 (M), X2 (M'), X3 (F), X4 (Ω) per row.
const NUT_Y: [[i8; 5]; 63] = [
    [0, 0, 0, 0, 1],
    [-2, 0, 0, 2, 2],
    [0, 0, 0, 2, 2],
    [0, 0, 0, 0, 2],
    [0, 1, 0, 0, 0],
    [0, 0, 1, 0, 0],
    [-2, 1, 0, 2, 2],
    [0, 0, 0, 2, 1],
    [0, 0, 1, 2, 2],
    [-2, -1, 0, 2, 2],
    [-2, 0, 1, 0, 0],
    [-2, 0, 0, 2, 1],
    [0, 0, -1, 2, 2],
    [2, 0, 0, 0, 0],
    [0, 0, 1, 0, 1],
    [2, 0, -1, 2, 2],
    [0, 0, -1, 0, 1],
    [0, 0, 1, 2, 1],
    [-2, 0, 2, 0, 0],
    [0, 0, -2, 2, 1],
    [2, 0, 0, 2, 2],
    [0, 0, 2, 2, 2],
    [0, 0, 2, 0, 0],
    [-2, 0, 1, 2, 2],
    [0, 0, 0, 2, 0],
    [-2, 0, 0, 2, 0],
    [0, 0, -1, 2, 1],
    [0, 2, 0, 0, 0],
    [2, 0, -1, 0, 1],
    [-2, 2, 0, 2, 2],
    [0, 1, 0, 0, 1],
    [-2, 0, 1, 0, 1],
    [0, -1, 0, 0, 1],
    [0, 0, 2, -2, 0],
    [2, 0, -1, 2, 1],
    [2, 0, 1, 2, 2],
    [0, 1, 0, 2, 2],
    [-2, 1, 1, 0, 0],
    [0, -1, 0, 2, 2],
    [2, 0, 0, 2, 1],
    [2, 0, 1, 0, 0],
    [-2, 0, 2, 2, 2],
    [-2, 0, 1, 2, 1],
    [2, 0, -2, 0, 1],
    [2, 0, 0, 0, 1],
    [0, -1, 1, 0, 0],
    [-2, -1, 0, 2, 1],
    [-2, 0, 0, 0, 1],
    [0, 0, 2, 2, 1],
    [-2, 0, 2, 0, 1],
    [-2, 1, 0, 2, 1],
    [0, 0, 1, -2, 0],
    [-1, 0, 1, 0, 0],
    [-2, 1, 0, 0, 0],
    [1, 0, 0, 0, 0],
    [0, 0, 1, 2, 0],
    [0, 0, -2, 2, 2],
    [-1, -1, 1, 0, 0],
    [0, 1, 1, 0, 0],
    [0, -1, 1, 2, 2],
    [2, -1, -1, 2, 2],
    [0, 0, 3, 2, 2],
    [2, -1, 0, 2, 2],
];

/// Nutation coefficients a, b (longitude, 0.0001″ and 0.0001″ per Julian century) and
/// c, d (obliquity, same units), one row per row of [`NUT_Y`].
const NUT_ABCD: [[f64; 4]; 63] = [
    [-171996.0, -174.2, 92025.0, 8.9],
    [-13187.0, -1.6, 5736.0, -3.1],
    [-2274.0, -0.2, 977.0, -0.5],
    [2062.0, 0.2, -895.0, 0.5],
    [1426.0, -3.4, 54.0, -0.1],
    [712.0, 0.1, -7.0, 0.0],
    [-517.0, 1.2, 224.0, -0.6],
    [-386.0, -0.4, 200.0, 0.0],
    [-301.0, 0.0, 129.0, -0.1],
    [217.0, -0.5, -95.0, 0.3],
    [-158.0, 0.0, 0.0, 0.0],
    [129.0, 0.1, -70.0, 0.0],
    [123.0, 0.0, -53.0, 0.0],
    [63.0, 0.0, 0.0, 0.0],
    [63.0, 0.1, -33.0, 0.0],
    [-59.0, 0.0, 26.0, 0.0],
    [-58.0, -0.1, 32.0, 0.0],
    [-51.0, 0.0, 27.0, 0.0],
    [48.0, 0.0, 0.0, 0.0],
    [46.0, 0.0, -24.0, 0.0],
    [-38.0, 0.0, 16.0, 0.0],
    [-31.0, 0.0, 13.0, 0.0],
    [29.0, 0.0, 0.0, 0.0],
    [29.0, 0.0, -12.0, 0.0],
    [26.0, 0.0, 0.0, 0.0],
    [-22.0, 0.0, 0.0, 0.0],
    [21.0, 0.0, -10.0, 0.0],
    [17.0, -0.1, 0.0, 0.0],
    [16.0, 0.0, -8.0, 0.0],
    [-16.0, 0.1, 7.0, 0.0],
    [-15.0, 0.0, 9.0, 0.0],
    [-13.0, 0.0, 7.0, 0.0],
    [-12.0, 0.0, 6.0, 0.0],
    [11.0, 0.0, 0.0, 0.0],
    [-10.0, 0.0, 5.0, 0.0],
    [-8.0, 0.0, 3.0, 0.0],
    [7.0, 0.0, -3.0, 0.0],
    [-7.0, 0.0, 0.0, 0.0],
    [-7.0, 0.0, 3.0, 0.0],
    [-7.0, 0.0, 3.0, 0.0],
    [6.0, 0.0, 0.0, 0.0],
    [6.0, 0.0, -3.0, 0.0],
    [6.0, 0.0, -3.0, 0.0],
    [-6.0, 0.0, 3.0, 0.0],
    [-6.0, 0.0, 3.0, 0.0],
    [5.0, 0.0, 0.0, 0.0],
    [-5.0, 0.0, 3.0, 0.0],
    [-5.0, 0.0, 3.0, 0.0],
    [-5.0, 0.0, 3.0, 0.0],
    [4.0, 0.0, 0.0, 0.0],
    [4.0, 0.0, 0.0, 0.0],
    [4.0, 0.0, 0.0, 0.0],
    [-4.0, 0.0, 0.0, 0.0],
    [-4.0, 0.0, 0.0, 0.0],
    [-4.0, 0.0, 0.0, 0.0],
    [3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
    [-3.0, 0.0, 0.0, 0.0],
];

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    // Source: SPA report (Reda & Andreas, NREL/TP-560-34302), worked example inputs:
    // 2003-10-17 12:30:30 MST (UTC−7) = 19:30:30 UTC, ΔUT1 0, ΔT 67 s.
    const SPA_EXAMPLE_UNIX_S: f64 = 1_066_419_030.0;
    const SPA_EXAMPLE_DELTA_T_S: f64 = 67.0;
    const DENVER: Observer = Observer {
        latitude_deg: 39.742476,
        longitude_deg: -105.1786,
        elevation_m: 1830.14,
    };
    const DENVER_AIR: Atmosphere = Atmosphere {
        pressure_hpa: 820.0,
        temperature_c: 11.0,
    };

    /// Unix time of a UTC calendar instant (proleptic Gregorian; days from civil).
    fn unix(y: i64, mo: i64, d: i64, h: i64, mi: i64, s: i64) -> f64 {
        let (y, mo) = if mo <= 2 { (y - 1, mo + 12) } else { (y, mo) };
        let era_days = 365 * y + y / 4 - y / 100 + y / 400 + (153 * (mo - 3) + 2) / 5 + d - 719469;
        (era_days * 86400 + h * 3600 + mi * 60 + s) as f64
    }

    fn check(name: &str, got: f64, expected: f64, tol: f64) {
        assert!(
            (got - expected).abs() <= tol,
            "{name}: got {got:.10}, expected {expected:.10} ± {tol:e} (off by {:e})",
            (got - expected).abs()
        );
    }

    fn spa_example() -> SpaDetail {
        solar_position_detailed(
            SPA_EXAMPLE_UNIX_S,
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
        )
    }

    #[test]
    fn unix_helper_matches_known_instants() {
        // Source: common practice (POSIX time definition).
        assert_eq!(unix(1970, 1, 1, 0, 0, 0), 0.0);
        assert_eq!(unix(2000, 1, 1, 12, 0, 0), UNIX_J2000_S);
        assert_eq!(unix(2003, 10, 17, 19, 30, 30), SPA_EXAMPLE_UNIX_S);
    }

    // ---------------------------------------------------------------- SPA worked example

    #[test]
    fn spa_example_time_and_earth_position() {
        let g = spa_example().geo;
        // Source: SPA report, worked example (text); tolerances are half a
        // unit of the last printed digit.
        check("JD", g.jd, 2452930.312847, 5e-7);
        check("L", g.l_deg, 24.01826, 5e-6);
        check("B", g.b_deg, -0.0001011219, 5e-11);
        check("R", g.r_au, 0.996542, 5e-7);
        check("Δψ", g.delta_psi_deg, -0.003998404, 5e-10);
        check("Δε", g.delta_eps_deg, 0.001666568, 5e-10);
        check("ε", g.eps_deg, 23.440465, 5e-7);
        // Source: from memory (SPA report Table A5.1, ten-digit values); a check of every
        // row of the periodic-term tables that a transcription slip would disturb.
        check("L (10 digits)", g.l_deg, 24.0182616917, 5e-11);
        check("R (10 digits)", g.r_au, 0.9965422974, 5e-11);
        check("X0", g.x_deg[0], 17185.861179, 5e-7);
        check("X1", g.x_deg[1], 1722.893218, 5e-7);
        check("X2", g.x_deg[2], 18234.075703, 5e-7);
        check("X3", g.x_deg[3], 18420.071012, 5e-7);
        check("X4", g.x_deg[4], 51.686951, 5e-7);
        check("ε0 (arcsec)", g.eps0_arcsec, 84379.672625, 5e-7);
        check("JDE", g.jde, 2452930.313623, 5e-7);
        check("JC", g.jc, 0.037928, 5e-7);
        check("JCE", g.jce, 0.037928, 5e-7);
        check("JME", g.jme, 0.003793, 5e-7);
        check("Θ", g.theta_deg, 204.0182616917, 5e-10);
        check("β", g.beta_deg, 0.0001011219, 5e-11);
        check("Δτ", g.delta_tau_deg, -0.005711, 5e-7);
        check("λ", g.lambda_deg, 204.0085519281, 5e-10);
        check("α", g.alpha_deg, 202.22741, 5e-6);
        check("δ", g.delta_deg, -9.31434, 5e-6);
        check("E (min)", g.eot_min, 14.641503, 1e-5);
    }

    #[test]
    fn spa_example_topocentric() {
        let d = spa_example();
        // Source: SPA report, worked example (text).
        check("H", d.topo.h_deg, 11.105902, 5e-7);
        check("e0", d.topo.e0_deg, 39.872046, 5e-7);
        // The task demands 0.0005°; the report prints six decimals and we match those too.
        check("zenith (task)", d.topo.zenith_deg, 50.111622, 5e-4);
        check("azimuth (task)", d.topo.azimuth_deg, 194.340241, 5e-4);
        check("zenith", d.topo.zenith_deg, 50.111622, 5e-7);
        check("azimuth", d.topo.azimuth_deg, 194.340241, 5e-7);
        // Source: from memory (SPA report Table A5.1).
        check("ξ", d.topo.xi_deg, 0.002451, 5e-7);
        check("Δα", d.topo.delta_alpha_deg, -0.000369, 5e-7);
        check("α′", d.topo.alpha_prime_deg, 202.22704, 5e-6);
        check("δ′", d.topo.delta_prime_deg, -9.316179, 5e-7);
        check("H′", d.topo.h_prime_deg, 11.10627, 5e-6);
        check("Δe", d.topo.delta_e_deg, 0.016332, 5e-7);
        // Source: the same table's e0 + Δe (39.872046° + 0.016332°), both to 5e-7°.
        check("e", d.topo.e_deg, 39.888378, 1e-6);
        check("Γ", d.topo.azimuth_astro_deg, 14.340241, 5e-7);

        let p = solar_position(
            SPA_EXAMPLE_UNIX_S,
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
        );
        assert_eq!(p.zenith_deg, d.topo.zenith_deg);
        check(
            "geometric zenith",
            p.zenith_geometric_deg,
            90.0 - 39.872046,
            5e-7,
        );
        check("elevation", p.elevation_deg(), 39.888378, 5e-7);
        assert_eq!(p.declination_deg, d.topo.delta_prime_deg);
    }

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

    #[test]
    fn spa_example_sunrise_and_sunset() {
        // Source: SPA report, worked example: sunrise 06:12:43, sunset 17:20:19 MST (text).
        // SPA defines them as the sun's geometric (geocentric) elevation reaching
        // −(0.26667° + 0.5667°), found by interpolating α, δ over three days; the topocentric
        // crossing differs by the solar parallax (< 1 s) and SPA's interpolation (seconds).
        // SPA works on the UT day 2003-10-17, so its "sunset" is the one at 00:20:19 UTC on
        // 17 October, i.e. the evening of 16 October local time (17 October's is 88 s
        // earlier).
        let h0 = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);
        let rise = find_sun_crossing(
            unix(2003, 10, 17, 12, 0, 0),
            unix(2003, 10, 17, 14, 0, 0),
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
            h0,
            false,
        );
        let set = find_sun_crossing(
            unix(2003, 10, 17, 0, 0, 0),
            unix(2003, 10, 17, 1, 0, 0),
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
            h0,
            false,
        );
        check("sunrise (s)", rise, unix(2003, 10, 17, 13, 12, 43), 5.0);
        check("sunset (s)", set, unix(2003, 10, 17, 0, 20, 19), 5.0);
    }

    #[test]
    fn julian_day_of_epochs() {
        // Source: common practice (JD 2440587.5 = 1970-01-01T00:00 UTC; JD 2451545.0 =
        // 2000-01-01T12:00).
        assert_eq!(julian_day(0.0), 2440587.5);
        assert_eq!(julian_day(UNIX_J2000_S), 2451545.0);
    }

    #[test]
    fn nutation_products_match_direct_sums() {
        // Source: SPA report step 3.4 sums evaluated directly (the closed form we replace).
        for &jce in &[-0.1, 0.0, 0.0379, 0.25] {
            let t: f64 = jce;
            let x = [
                297.85036 + 445267.111480 * t - 0.0019142 * t * t + t * t * t / 189474.0,
                357.52772 + 35999.050340 * t - 0.0001603 * t * t - t * t * t / 300000.0,
                134.96298 + 477198.867398 * t + 0.0086972 * t * t + t * t * t / 56250.0,
                93.27191 + 483202.017538 * t - 0.0036825 * t * t + t * t * t / 327270.0,
                125.04452 - 1934.136261 * t + 0.0020708 * t * t + t * t * t / 450000.0,
            ];
            let (mut psi, mut eps) = (0.0, 0.0);
            for (y, c) in NUT_Y.iter().zip(NUT_ABCD.iter()) {
                let arg: f64 = (0..5)
                    .map(|j| f64::from(y[j]) * x[j])
                    .sum::<f64>()
                    .to_radians();
                psi += (c[0] + c[1] * t) * arg.sin();
                eps += (c[2] + c[3] * t) * arg.cos();
            }
            let (p, e) = nutation(t, &x);
            check("Δψ", p, psi / 36e6, 1e-12);
            check("Δε", e, eps / 36e6, 1e-12);
        }
    }

    #[test]
    fn periodic_cosine_matches_std() {
        // Source: f64::cos (the platform libm) as the reference; the reduction constants
        // must add up to π/2.
        let split = f64::from_bits(0x3FF9_21FB_5440_0000) + f64::from_bits(0x3DD0_B461_1A62_6331);
        check("π/2 split", split, std::f64::consts::FRAC_PI_2, 0.0);
        let mut worst = 0.0f64;
        let mut x = -7000.0f64;
        while x < 170_000.0 {
            worst = worst.max((cos_periodic(x) - x.cos()).abs());
            x += 0.123_456_789;
        }
        for k in -8..=8 {
            let x = f64::from(k) * std::f64::consts::FRAC_PI_4;
            worst = worst.max((cos_periodic(x) - x.cos()).abs());
        }
        assert_eq!(cos_periodic(0.0), 1.0);
        assert!(worst <= 2e-16, "worst {worst:e}");
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

    #[test]
    fn azimuth_conventions() {
        // Source: notebooks-free-docs/conventions.md: azimuth clockwise from north. Morning sun is east,
        // noon sun is south in the north's mid latitudes and north in the south's.
        let air = Atmosphere {
            pressure_hpa: 1013.25,
            temperature_c: 12.0,
        };
        let north = Observer {
            latitude_deg: 45.0,
            longitude_deg: 0.0,
            elevation_m: 0.0,
        };
        let south = Observer {
            latitude_deg: -45.0,
            longitude_deg: 0.0,
            elevation_m: 0.0,
        };
        let noon = unix(2021, 6, 21, 12, 0, 0);
        let morning = unix(2021, 6, 21, 7, 0, 0);
        let az = |o: &Observer, t| solar_position(t, o, &air, DELTA_T_DEFAULT_S).azimuth_deg;
        assert!((az(&north, noon) - 180.0).abs() < 2.0);
        assert!(wrap180(az(&south, noon)).abs() < 2.0);
        assert!((45.0..135.0).contains(&az(&north, morning)));
        assert!((0.0..90.0).contains(&az(&south, morning)));
    }

    // ----------------------------------------------------------- oracle: PyEphem

    struct EphemRow {
        unix_s: f64,
        obs: Observer,
        atm: Atmosphere,
        delta_t_s: f64,
        zenith_deg: f64,
        zenith_geometric_deg: f64,
        azimuth_deg: f64,
    }

    fn ephem_rows() -> Vec<EphemRow> {
        let text = include_str!("../../../tests/reference/sun_ephem.csv");
        let mut lines = text.lines().filter(|l| !l.starts_with('#'));
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let col = |name: &str| {
            header
                .iter()
                .position(|h| *h == name)
                .unwrap_or_else(|| panic!("no column {name}"))
        };
        let (c_t, c_lat, c_lon, c_el, c_p, c_tc, c_dt, c_z, c_zg, c_az) = (
            col("unix_s"),
            col("latitude_deg"),
            col("longitude_deg"),
            col("elevation_m"),
            col("pressure_hpa"),
            col("temperature_c"),
            col("delta_t_s"),
            col("zenith_deg"),
            col("zenith_geometric_deg"),
            col("azimuth_deg"),
        );
        lines
            .filter(|l| !l.trim().is_empty())
            .map(|l| {
                let v: Vec<f64> = l.split(',').map(|x| x.trim().parse().unwrap()).collect();
                EphemRow {
                    unix_s: v[c_t],
                    obs: Observer {
                        latitude_deg: v[c_lat],
                        longitude_deg: v[c_lon],
                        elevation_m: v[c_el],
                    },
                    atm: Atmosphere {
                        pressure_hpa: v[c_p],
                        temperature_c: v[c_tc],
                    },
                    delta_t_s: v[c_dt],
                    zenith_deg: v[c_z],
                    zenith_geometric_deg: v[c_zg],
                    azimuth_deg: v[c_az],
                }
            })
            .collect()
    }

    #[test]
    fn matches_pyephem_oracle() {
        // Source: PyEphem 4.2.1 (libastro), apparent topocentric alt/az with and without
        // refraction; generated once by tests/reference/sun_ephem.py. Accuracy target from
        // notebooks-free-docs/method-sun.md: 0.01° where the sun is more than 5° up (zenith and, away from the
        // zenith, azimuth). The geometric (unrefracted) position is compared at every row,
        // day or night, at the same 0.01°.
        // Near the horizon the two refraction formulas differ (SPA's Bennett-type formula vs
        // libastro's): while SPA applies refraction (geometric elevation ≥ −0.8333°) and the
        // sun is below 5°, the measured gap is about 0.02°; bound 0.03° (a regression guard —
        // the real atmosphere varies by tenths of a degree there). Below −0.8333° SPA stops
        // refracting by design and ephem does not: not compared.
        let rows = ephem_rows();
        assert!(rows.len() >= 200, "only {} rows", rows.len());
        let (mut n_high, mut max_z_high, mut max_az_high, mut max_geo) =
            (0, 0.0f64, 0.0f64, 0.0f64);
        let (mut n_low, mut max_z_low) = (0, 0.0f64);
        for r in &rows {
            let p = solar_position(r.unix_s, &r.obs, &r.atm, r.delta_t_s);
            let dz_geo = (p.zenith_geometric_deg - r.zenith_geometric_deg).abs();
            max_geo = max_geo.max(dz_geo);
            assert!(
                dz_geo <= 0.01,
                "geometric zenith off by {dz_geo} at t={} {:?}",
                r.unix_s,
                r.obs
            );
            let elev = 90.0 - r.zenith_deg;
            let dz = (p.zenith_deg - r.zenith_deg).abs();
            if elev > 5.0 {
                n_high += 1;
                max_z_high = max_z_high.max(dz);
                assert!(
                    dz <= 0.01,
                    "zenith off by {dz} at t={} {:?}",
                    r.unix_s,
                    r.obs
                );
                if r.zenith_deg > 5.0 {
                    let daz = wrap180(p.azimuth_deg - r.azimuth_deg).abs();
                    max_az_high = max_az_high.max(daz);
                    assert!(
                        daz <= 0.01,
                        "azimuth off by {daz} at t={} {:?}",
                        r.unix_s,
                        r.obs
                    );
                }
            } else if 90.0 - p.zenith_geometric_deg >= -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG)
            {
                n_low += 1;
                max_z_low = max_z_low.max(dz);
                assert!(
                    dz <= 0.03,
                    "near-horizon zenith off by {dz} at t={} {:?}",
                    r.unix_s,
                    r.obs
                );
            }
        }
        eprintln!(
            "vs PyEphem: {} rows; geometric zenith max {max_geo:.5}°; elevation > 5° ({n_high} rows): \
             zenith max {max_z_high:.5}°, azimuth max {max_az_high:.5}°; \
             refracted, below 5° ({n_low} rows): apparent zenith max {max_z_low:.4}°",
            rows.len()
        );
        assert!(
            n_high >= 100 && n_low >= 20,
            "too few rows in a band: {n_high} / {n_low}"
        );
    }

    #[test]
    fn spa_example_vs_pyephem_value() {
        // Source: PyEphem (general-purpose astronomy library) on the SPA case gives zenith 50.112334°, azimuth
        // 194.340233° with refraction (its refraction model differs): 0.002° / 0.001°.
        let p = solar_position(
            SPA_EXAMPLE_UNIX_S,
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
        );
        check("zenith", p.zenith_deg, 50.112334, 0.002);
        check("azimuth", p.azimuth_deg, 194.340233, 0.001);
    }

    // ------------------------------------------------------------------- interval_sun

    #[test]
    fn interval_mid_day_uses_midpoint() {
        // Source: notebooks-free-docs/method-sun.md (midpoint rule).
        let (a, b) = (unix(2003, 10, 17, 19, 0, 0), unix(2003, 10, 17, 20, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, SPA_EXAMPLE_DELTA_T_S).unwrap();
        assert_eq!(s.eval_unix_s, 0.5 * (a + b));
        assert_eq!(s.sunlit_frac, 1.0);
        let p = solar_position(0.5 * (a + b), &DENVER, &DENVER_AIR, SPA_EXAMPLE_DELTA_T_S);
        assert_eq!(s.position.zenith_deg, p.zenith_deg);
    }

    /// Apparent elevation at an instant.
    fn elev(t: f64, obs: &Observer, atm: &Atmosphere) -> f64 {
        solar_position(t, obs, atm, DELTA_T_DEFAULT_S).elevation_deg()
    }

    #[test]
    fn interval_sunrise_hour_uses_sunlit_part() {
        // Source: notebooks-free-docs/method-sun.md (midpoint of the sunlit part). Denver sunrise (upper limb) is
        // 06:12:43 MST = 13:12:43 UTC (SPA report); the centre clears the apparent horizon
        // about 2 min later (at 820 hPa that is at −0.45° geometric instead of −0.83°).
        let (a, b) = (unix(2003, 10, 17, 13, 0, 0), unix(2003, 10, 17, 14, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        assert!(
            s.sunlit_frac > 0.0 && s.sunlit_frac < 1.0,
            "frac {}",
            s.sunlit_frac
        );
        let rise = b - s.sunlit_frac * (b - a);
        check(
            "eval = midpoint of sunlit part",
            s.eval_unix_s,
            0.5 * (rise + b),
            1e-6,
        );
        assert!(s.eval_unix_s > rise && s.eval_unix_s > 0.5 * (a + b));
        assert!(
            elev(rise - 1.0, &DENVER, &DENVER_AIR) < 0.0
                && elev(rise + 1.0, &DENVER, &DENVER_AIR) > 0.0
        );
        assert!(rise > unix(2003, 10, 17, 13, 12, 43) && rise < unix(2003, 10, 17, 13, 17, 0));
        assert!(s.position.elevation_deg() > 0.0);
    }

    #[test]
    fn interval_sunset_hour_uses_sunlit_part() {
        // Source: notebooks-free-docs/method-sun.md. Denver sunset (upper limb) on 17 October is about 17:18:51 MST
        // = 00:18:51 UTC (see spa_example_sunrise_and_sunset); the centre sets ~2 min earlier.
        let (a, b) = (unix(2003, 10, 18, 0, 0, 0), unix(2003, 10, 18, 1, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        let set = a + s.sunlit_frac * (b - a);
        check("eval", s.eval_unix_s, 0.5 * (a + set), 1e-6);
        assert!(
            elev(set - 1.0, &DENVER, &DENVER_AIR) > 0.0
                && elev(set + 1.0, &DENVER, &DENVER_AIR) < 0.0
        );
        assert!(set < unix(2003, 10, 18, 0, 18, 51) && set > unix(2003, 10, 18, 0, 15, 0));
    }

    #[test]
    fn interval_night_and_polar_night_are_none() {
        // Source: common practice (no sun in polar night; midnight in Denver).
        let tromso = Observer {
            latitude_deg: 69.65,
            longitude_deg: 18.96,
            elevation_m: 10.0,
        };
        let svalbard = Observer {
            latitude_deg: 78.22,
            longitude_deg: 15.65,
            elevation_m: 10.0,
        };
        let cold = Atmosphere {
            pressure_hpa: 1010.0,
            temperature_c: -10.0,
        };
        for obs in [&tromso, &svalbard] {
            let (a, b) = (unix(2021, 12, 21, 11, 0, 0), unix(2021, 12, 21, 12, 0, 0));
            assert!(interval_sun(a, b, obs, &cold, DELTA_T_DEFAULT_S).is_none());
        }
        let (a, b) = (unix(2003, 10, 17, 6, 0, 0), unix(2003, 10, 17, 7, 0, 0));
        assert!(interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).is_none());
    }

    #[test]
    fn interval_midnight_sun_is_sunlit() {
        // Source: common practice (midnight sun at 78° N on the June solstice).
        let svalbard = Observer {
            latitude_deg: 78.22,
            longitude_deg: 15.65,
            elevation_m: 10.0,
        };
        let air = Atmosphere {
            pressure_hpa: 1010.0,
            temperature_c: 5.0,
        };
        let (a, b) = (unix(2021, 6, 21, 22, 30, 0), unix(2021, 6, 21, 23, 30, 0));
        let s = interval_sun(a, b, &svalbard, &air, DELTA_T_DEFAULT_S).unwrap();
        assert_eq!(s.sunlit_frac, 1.0);
        assert_eq!(s.eval_unix_s, 0.5 * (a + b));
    }

    #[test]
    fn interval_of_a_whole_day_finds_rise_and_set() {
        // Source: notebooks-free-docs/method-sun.md rule applied to a 24 h interval (both crossings inside),
        // against sampling every 30 s.
        let (a, b) = (unix(2003, 10, 17, 7, 0, 0), unix(2003, 10, 18, 7, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        let (frac, span) = brute_force(a, b, &DENVER, &DENVER_AIR, 30.0);
        let (first, last) = span.unwrap();
        check("sunlit fraction", s.sunlit_frac, frac, 2.0 * 30.0 / 86400.0);
        check("eval", s.eval_unix_s, 0.5 * (first + last), 30.0);
        // Upper-limb day (SPA: rise 06:12:43, set ≈ 17:18:51 MST) = 11.102 h; the centre
        // with refraction is up about 2 × 2.1 min less (2.1 min measured at sunrise).
        check(
            "day length (h)",
            s.sunlit_frac * 24.0,
            11.102 - 2.0 * 2.1 / 60.0,
            0.01,
        );
        // Evaluated near solar noon (about 11:46 MST = 18:46 UTC).
        check(
            "eval near noon (s)",
            s.eval_unix_s,
            unix(2003, 10, 17, 18, 46, 0),
            120.0,
        );
    }

    /// Brute force: sample the interval every `step` seconds.
    fn brute_force(
        a: f64,
        b: f64,
        obs: &Observer,
        atm: &Atmosphere,
        step: f64,
    ) -> (f64, Option<(f64, f64)>) {
        let n = ((b - a) / step).round() as usize;
        let mut lit = 0usize;
        let (mut first, mut last) = (None, None);
        for i in 0..n {
            let t = a + (i as f64 + 0.5) * step;
            if elev(t, obs, atm) > 0.0 {
                lit += 1;
                first.get_or_insert(t);
                last = Some(t);
            }
        }
        (lit as f64 / n as f64, first.zip(last))
    }

    #[test]
    fn geometric_threshold_gives_the_apparent_threshold_and_light_elevation_matches_spa() {
        // Source: definition (the apparent elevation e0 + Δe(e0) of SPA step 3.14 at the
        // returned geometric value equals the threshold), checked over pressures,
        // temperatures and thresholds around the horizon; below SPA's cut-off the two are
        // equal, and a threshold in the jump at the cut-off maps onto the cut-off.
        let cutoff = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);
        for p in [600.0, 800.0, 1013.25, 1050.0] {
            for t in [-40.0, -10.0, 0.0, 15.0, 45.0] {
                let atm = Atmosphere {
                    pressure_hpa: p,
                    temperature_c: t,
                };
                for thr in [-2.0, -0.9, 0.0, 0.3, 1.0, 5.0, 30.0] {
                    let e0 = geometric_threshold_deg(thr, &atm);
                    let apparent_at_cut = cutoff + refraction_deg(cutoff, &atm);
                    if thr < cutoff {
                        assert_eq!(e0, thr);
                    } else if thr <= apparent_at_cut {
                        assert_eq!(e0, cutoff);
                    } else {
                        let back = e0 + refraction_deg(e0, &atm);
                        assert!((back - thr).abs() < 1e-11, "{p} hPa {t} °C {thr}°: {back}");
                    }
                }
            }
        }
        // Source: SPA steps 3.11–3.14.1 as in spa_topocentric (the light path computes the
        // same e0 by the same formulas), random instants and places, to 1e-10°.
        let mut seed: u64 = 0x0bad_cafe_0000_0007;
        let mut rnd = move || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        for _ in 0..500 {
            let obs = Observer {
                latitude_deg: -89.0 + 178.0 * rnd(),
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 4000.0 * rnd(),
            };
            let t = unix(1990, 1, 1, 0, 0, 0) + rnd() * 50.0 * 365.25 * 86400.0;
            let g = spa_geocentric(t, DELTA_T_DEFAULT_S).core();
            let site = Site::new(&obs);
            let full = g.topocentric(&site, &DENVER_AIR).e0_deg;
            let light = spa_geometric_elevation_deg(&g, &site);
            assert!((full - light).abs() < 1e-10, "{full} vs {light}");
        }
    }

    #[test]
    fn interval_sun_agrees_with_brute_force_near_horizon() {
        // Source: the rule itself, sampled every 15 s (independent of the bisection and of
        // the one-call shortcut). Random places (both hemispheres, polar included) and times
        // 1990–2040, hourly and 10-minute intervals placed near sunrise or sunset.
        let mut seed: u64 = 0x5eed_1234_abcd_0001;
        let mut rnd = move || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        let step = 15.0;
        let mut checked = 0;
        for k in 0..160 {
            let lat = -85.0 + 170.0 * rnd();
            let obs = Observer {
                latitude_deg: lat,
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 3000.0 * rnd(),
            };
            let atm = Atmosphere {
                pressure_hpa: 700.0 + 350.0 * rnd(),
                temperature_c: -30.0 + 60.0 * rnd(),
            };
            let len = if k % 2 == 0 { 3600.0 } else { 600.0 };
            // Start at a random instant and walk to the first interval whose sunlit state
            // differs between its ends or whose midpoint is within 8° of the horizon.
            let mut a = (unix(1990, 1, 1, 0, 0, 0) + rnd() * 50.0 * 365.25 * 86400.0).floor();
            for _ in 0..(48 * 3600 / len as usize) {
                if elev(a + 0.5 * len, &obs, &atm).abs() < 8.0 {
                    break;
                }
                a += len;
            }
            let b = a + len;
            let got = interval_sun(a, b, &obs, &atm, DELTA_T_DEFAULT_S);
            let (frac, span) = brute_force(a, b, &obs, &atm, step);
            match got {
                None => assert_eq!(
                    frac, 0.0,
                    "interval {a}–{b} at {obs:?}: None but brute force {frac}"
                ),
                Some(s) => {
                    let tol = 1.5 * step / len + 1e-9;
                    assert!(
                        (s.sunlit_frac - frac).abs() <= tol,
                        "interval {a}–{b} at {obs:?}: frac {} vs brute force {frac}",
                        s.sunlit_frac
                    );
                    if let Some((first, last)) = span {
                        if s.sunlit_frac < 1.0 && (last - first) < s.sunlit_frac * len + 2.0 * step
                        {
                            // One sunlit piece: the evaluation point is its midpoint.
                            check("eval", s.eval_unix_s, 0.5 * (first + last), step);
                        }
                    }
                    checked += 1;
                }
            }
        }
        assert!(checked > 40, "only {checked} sunlit intervals checked");
    }

    #[test]
    fn interval_reversed_is_an_instant() {
        // Source: documented behaviour of interval_sun.
        let t = unix(2003, 10, 17, 19, 30, 30);
        let s = interval_sun(t, t, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        assert_eq!(s.eval_unix_s, t);
        assert!(interval_sun(t + 43200.0, t, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).is_none());
    }

    fn lcg(seed: u64) -> impl FnMut() -> f64 {
        let mut state = seed;
        move || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    #[test]
    fn low_precision_screen_is_within_its_allowance() {
        // Source: SPA (this module) as the reference for the Astronomical Almanac's
        // low-precision formulas (stated 0.01° in α, δ over 1950–2050; from memory), over
        // 1900–2100, any place: must stay well inside the 0.1° allowance used by the screen.
        let mut rnd = lcg(7);
        let air = Atmosphere {
            pressure_hpa: 1013.25,
            temperature_c: 12.0,
        };
        let mut worst = 0.0f64;
        for _ in 0..4000 {
            let t = LOW_PRECISION_RANGE_S.0
                + rnd() * (LOW_PRECISION_RANGE_S.1 - LOW_PRECISION_RANGE_S.0);
            let obs = Observer {
                latitude_deg: (2.0 * rnd() - 1.0).asin().to_degrees(),
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 2000.0 * rnd(),
            };
            let spa = 90.0 - solar_position(t, &obs, &air, DELTA_T_DEFAULT_S).zenith_geometric_deg;
            worst = worst.max((low_precision_elevation_deg(t, &obs) - spa).abs());
        }
        eprintln!("low-precision elevation vs SPA, 1900–2100: max {worst:.4}°");
        assert!(worst <= 0.05, "worst {worst}");
    }

    #[test]
    fn ephemeris_matches_full_spa() {
        // Source: SPA (this module) as the reference; the interpolation error itself.
        // Measured (dense scans, not in this test): the direction error |Δh|·cos δ ⊕ Δδ is at
        // most 2.23e-7° over 2031–2032 (every 60 s) and 2.45e-7° over 1990–2050 (every
        // 20 min); E at most 9.9e-7 min. This test's 3000 samples reach 2.1e-7°. Bound:
        // 3e-7° (E: 3e-7° / 0.25 °/min), a ~20 % margin over the worst case found.
        let (a, b) = (unix(2031, 1, 1, 0, 0, 0), unix(2032, 12, 31, 23, 0, 0));
        let eph = SunEphemeris::new(a, b, DELTA_T_DEFAULT_S);
        let mut rnd = lcg(11);
        let (mut wz, mut wa, mut wd, mut we) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
        for _ in 0..3000 {
            let t = a + rnd() * (b - a);
            let obs = Observer {
                latitude_deg: -89.0 + 178.0 * rnd(),
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 3000.0 * rnd(),
            };
            let air = Atmosphere {
                pressure_hpa: 700.0 + 330.0 * rnd(),
                temperature_c: -30.0 + 60.0 * rnd(),
            };
            let p = solar_position(t, &obs, &air, DELTA_T_DEFAULT_S);
            let q = eph.position(t, &obs, &air);
            wz = wz
                .max((p.zenith_deg - q.zenith_deg).abs())
                .max((p.zenith_geometric_deg - q.zenith_geometric_deg).abs());
            if p.zenith_geometric_deg > 1.0 {
                wa = wa.max(
                    wrap180(p.azimuth_deg - q.azimuth_deg).abs()
                        * p.zenith_geometric_deg.to_radians().sin(),
                );
            }
            wd = wd.max((p.declination_deg - q.declination_deg).abs());
            we = we.max((p.equation_of_time_min - q.equation_of_time_min).abs());
        }
        eprintln!("ephemeris vs SPA: zenith {wz:.1e}°, azimuth·sin z {wa:.1e}°, δ′ {wd:.1e}°, E {we:.1e} min");
        assert!(wz <= 3e-7 && wa <= 3e-7 && wd <= 3e-7 && we <= 3e-7 / 0.25);
        // Outside the span: the full SPA itself.
        let obs = DENVER;
        let t = unix(2040, 6, 1, 18, 0, 0);
        assert_eq!(
            eph.position(t, &obs, &DENVER_AIR).zenith_deg,
            solar_position(t, &obs, &DENVER_AIR, DELTA_T_DEFAULT_S).zenith_deg
        );
    }

    #[test]
    fn ephemeris_interval_sun_matches_exact() {
        // Source: interval_sun (exact path) as the reference; crossing times agree to the
        // 1 s search tolerance, positions to 1e-4°.
        let (a, b) = (unix(2022, 1, 1, 0, 0, 0), unix(2023, 1, 1, 0, 0, 0));
        let eph = SunEphemeris::new(a, b, DELTA_T_DEFAULT_S);
        for obs in [
            DENVER,
            Observer {
                latitude_deg: -33.9,
                longitude_deg: 18.4,
                elevation_m: 10.0,
            },
            Observer {
                latitude_deg: 78.2,
                longitude_deg: 15.6,
                elevation_m: 10.0,
            },
        ] {
            let mut t = a;
            while t < b {
                let x = interval_sun(t, t + 3600.0, &obs, &DENVER_AIR, DELTA_T_DEFAULT_S);
                let y = eph.interval_sun(t, t + 3600.0, &obs, &DENVER_AIR);
                match (x, y) {
                    (None, None) => {}
                    (Some(x), Some(y)) => {
                        check("eval", y.eval_unix_s, x.eval_unix_s, 1.0);
                        check("frac", y.sunlit_frac, x.sunlit_frac, 2.0 / 3600.0);
                        // Up to 1 s apart: the sun moves at most 0.0042°/s.
                        check(
                            "zenith",
                            y.position.zenith_deg,
                            x.position.zenith_deg,
                            1e-4 + 0.0042 * (y.eval_unix_s - x.eval_unix_s).abs(),
                        );
                    }
                    (x, y) => panic!("{obs:?} at {t}: exact {x:?}, ephemeris {y:?}"),
                }
                t += 3600.0;
            }
        }
    }

    // ------------------------------------------------------------------- performance

    #[test]
    #[ignore = "timing; run with --release -- --ignored --nocapture"]
    fn timing() {
        let air = Atmosphere {
            pressure_hpa: 1013.25,
            temperature_c: 12.0,
        };
        let obs = Observer {
            latitude_deg: 45.0,
            longitude_deg: 7.0,
            elevation_m: 300.0,
        };
        let t0 = unix(2021, 1, 1, 0, 0, 0);
        let n = 8760;
        let mut acc = 0.0;
        let mut lit = 0;
        // Best of five runs: the shortest time is the least disturbed by other processes.
        let best = |f: &mut dyn FnMut()| {
            (0..5)
                .map(|_| {
                    let start = std::time::Instant::now();
                    f();
                    start.elapsed()
                })
                .min()
                .unwrap()
        };
        let spa = best(&mut || {
            for i in 0..n {
                acc += solar_position(
                    t0 + 3600.0 * i as f64 + 1800.0,
                    &obs,
                    &air,
                    DELTA_T_DEFAULT_S,
                )
                .zenith_deg;
            }
        });
        let intervals = best(&mut || {
            lit = 0;
            for i in 0..n {
                let a = t0 + 3600.0 * i as f64;
                if let Some(s) = interval_sun(a, a + 3600.0, &obs, &air, DELTA_T_DEFAULT_S) {
                    acc += s.position.zenith_deg;
                    lit += 1;
                }
            }
        });
        let with_eph = best(&mut || {
            let eph = SunEphemeris::new(t0, t0 + 3600.0 * n as f64, DELTA_T_DEFAULT_S);
            for i in 0..n {
                let a = t0 + 3600.0 * i as f64;
                if let Some(s) = eph.interval_sun(a, a + 3600.0, &obs, &air) {
                    acc += s.position.zenith_deg;
                }
            }
        });
        eprintln!(
            "solar_position: {:.2} µs/call ({:.1} ms per 8760); interval_sun: {:.1} ms per hourly year \
             ({lit} sunlit); SunEphemeris (incl. building it): {:.1} ms [{acc:.0}]",
            spa.as_secs_f64() * 1e6 / n as f64,
            spa.as_secs_f64() * 1e3,
            intervals.as_secs_f64() * 1e3,
            with_eph.as_secs_f64() * 1e3
        );
    }
}
