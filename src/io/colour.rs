//! Colours by their CIELAB coordinates: the charts and the wiring diagram choose their colours
//! by lightness and hue, and this converts them to the sRGB the pictures are drawn in.

use plotters::style::RGBColor;

/// CIELAB (D65) to 8-bit sRGB, and whether the colour was inside the gamut before clamping.
///
/// # Formula
/// f_y = (L* + 16)/116, f_x = f_y + a*/500, f_z = f_y − b*/200; X,Y,Z = white · f⁻¹(f), with
/// f⁻¹(t) = t³ above 6/29, else 3·(6/29)²·(t − 4/29); linear sRGB = M·XYZ; then the sRGB
/// transfer curve (12.92·c below 0.0031308, else 1.055·c^(1/2.4) − 0.055).
///
/// # Source
/// CIE 15:2004 (CIELAB); IEC 61966-2-1:1999 (sRGB matrix and transfer curve), from memory.
///
/// # Validity
/// Any input; out-of-gamut channels are clamped to 0..=255.
pub fn lab_to_srgb(l: f64, a: f64, b: f64) -> (RGBColor, bool) {
    const D: f64 = 6.0 / 29.0;
    let finv = |t: f64| {
        if t > D {
            t * t * t
        } else {
            3.0 * D * D * (t - 4.0 / 29.0)
        }
    };
    let fy = (l + 16.0) / 116.0;
    let x = 0.950_47 * finv(fy + a / 500.0);
    let y = finv(fy);
    let z = 1.088_83 * finv(fy - b / 200.0);
    let lin = [
        3.2406 * x - 1.5372 * y - 0.4986 * z,
        -0.9689 * x + 1.8758 * y + 0.0415 * z,
        0.0557 * x - 0.2040 * y + 1.0570 * z,
    ];
    let mut inside = true;
    let c = lin.map(|c| {
        let g = if c <= 0.003_130_8 {
            12.92 * c
        } else {
            1.055 * c.powf(1.0 / 2.4) - 0.055
        };
        // A hair of tolerance for rounding in the matrix.
        inside &= (-1e-3..=1.0 + 1e-3).contains(&g);
        (g.clamp(0.0, 1.0) * 255.0).round() as u8
    });
    (RGBColor(c[0], c[1], c[2]), inside)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_lab(lab: (f64, f64, f64), rgb: (u8, u8, u8)) {
        let (c, _) = lab_to_srgb(lab.0, lab.1, lab.2);
        for (got, want) in [(c.0, rgb.0), (c.1, rgb.1), (c.2, rgb.2)] {
            assert!(
                (got as i32 - want as i32).abs() <= 1,
                "{lab:?} → {c:?}, expected {rgb:?}"
            );
        }
    }

    #[test]
    fn lab_to_srgb_reproduces_reference_colours() {
        // Source: common practice, no source — the sRGB white point and black are the ends
        // of the scale by definition (tolerance ±1 of 255 for 8-bit rounding).
        check_lab((100.0, 0.0, 0.0), (255, 255, 255));
        check_lab((0.0, 0.0, 0.0), (0, 0, 0));
        // Source: from memory (widely quoted conversion tables): sRGB mid grey #777777 is
        // L* = 50.0 (±1 of 255 for the two decimals the tables print).
        check_lab((50.0, 0.0, 0.0), (119, 119, 119));
        // Source: from memory (widely quoted): pure sRGB red #FF0000 is
        // L*a*b* = (53.24, 80.09, 67.20) to two decimals.
        check_lab((53.24, 80.09, 67.20), (255, 0, 0));
    }
}
