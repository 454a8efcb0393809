//! Where the shading fractions meet irradiance: one function that scales a substring's
//! plane-of-array parts by its beam factor (horizon and shadows) and its sky factor (the
//! sky view left by the horizon and the obstacles).
//!
//! It computes no geometry (the other files of this module do) and no irradiance (the sky
//! stage, `physics::sky`, does).

use super::geometry::unit_clamp;
use crate::physics::sky::PoaParts;

/// Applies shade factors to one substring's plane-of-array parts.
///
/// `beam_frac` multiplies the beam and circumsolar parts: 0 when the horizon hides the sun,
/// otherwise 1 − the substring's shaded fraction. `sky_frac` multiplies the isotropic sky and
/// the Perez horizon band (the band is treated as part of the dome, notebooks-free-docs/conventions.md):
/// [`sky_view_ratio`] or [`SkyViewLoss::isotropic_factor`]. The ground-reflected part and the
/// angle of incidence are unchanged. Both factors are clamped to 0..=1.
///
/// [`sky_view_ratio`]: super::sky_view_ratio
/// [`SkyViewLoss::isotropic_factor`]: super::SkyViewLoss::isotropic_factor
pub fn shade_poa(parts: &PoaParts, beam_frac: f64, sky_frac: f64) -> PoaParts {
    let b = unit_clamp(beam_frac);
    let d = unit_clamp(sky_frac);
    PoaParts {
        beam_w_m2: parts.beam_w_m2 * b,
        circumsolar_w_m2: parts.circumsolar_w_m2 * b,
        isotropic_w_m2: parts.isotropic_w_m2 * d,
        horizon_w_m2: parts.horizon_w_m2 * d,
        ground_w_m2: parts.ground_w_m2,
        aoi_deg: parts.aoi_deg,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shade_poa_scales_each_part_as_documented() {
        let p = PoaParts {
            beam_w_m2: 500.0,
            circumsolar_w_m2: 100.0,
            isotropic_w_m2: 80.0,
            horizon_w_m2: -10.0,
            ground_w_m2: 20.0,
            aoi_deg: 30.0,
        };
        let s = shade_poa(&p, 0.25, 0.5);
        // Source: definition (notebooks-free-docs/method-shade.md and its conventions)
        assert_eq!(
            s,
            PoaParts {
                beam_w_m2: 125.0,
                circumsolar_w_m2: 25.0,
                isotropic_w_m2: 40.0,
                horizon_w_m2: -5.0,
                ground_w_m2: 20.0,
                aoi_deg: 30.0,
            }
        );
        assert_eq!(shade_poa(&p, f64::NAN, 2.0).beam_w_m2, 0.0);
        assert_eq!(shade_poa(&p, f64::NAN, 2.0).isotropic_w_m2, 80.0);
    }
}
