//! Numbers in messages: computed values without binary floating-point noise.
//!
//! A value the user typed prints as they typed it (Rust's shortest round-trip form of
//! `25.6` is `25.6`); a value we computed from it (`1.2 × 19.2 = 23.040000000000003`)
//! prints rounded to six significant digits with trailing zeros dropped (`23.04`).

use std::fmt;

/// Six significant digits, trailing zeros dropped: `Num(23.040000000000003)` → `23.04`,
/// `Num(-0.006719999999999999)` → `-0.00672`, `Num(25.0)` → `25`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Num(pub f64);

/// [`Num`] from a reference, for error attributes that see fields by reference.
pub fn num(x: &f64) -> Num {
    Num(*x)
}

/// A number the user typed, as typed in its shortest form: `25.6` → `25.6`, `120` → `120`,
/// but very large or very small magnitudes in exponent form (`1e308`, `5e-324`) instead of
/// hundreds of digits.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Typed(pub f64);

impl fmt::Display for Typed {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let x = self.0;
        if x.is_finite() && x != 0.0 && !(1e-5..1e15).contains(&x.abs()) {
            write!(f, "{x:e}")
        } else {
            write!(f, "{x}")
        }
    }
}

/// [`Typed`] from a reference, for error attributes that see fields by reference.
pub fn typed(x: &f64) -> Typed {
    Typed(*x)
}

impl fmt::Display for Num {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let x = self.0;
        if !x.is_finite() || x == 0.0 {
            return write!(f, "{}", if x == 0.0 { 0.0 } else { x });
        }
        const SIGNIFICANT: i32 = 6;
        let magnitude = x.abs().log10().floor() as i32;
        let decimals = (SIGNIFICANT - 1 - magnitude).clamp(0, 15) as usize;
        let text = format!("{x:.decimals$}");
        let text = if text.contains('.') {
            text.trim_end_matches('0').trim_end_matches('.')
        } else {
            &text
        };
        // "-0" after rounding a tiny negative number
        f.write_str(if text == "-0" { "0" } else { text })
    }
}

#[cfg(test)]
mod tests {
    use super::{Num, Typed};

    /// Worked by hand: Rust's shortest round-trip forms, with exponents outside 1e-5..1e15.
    #[test]
    fn typed_numbers_print_short() {
        assert_eq!(Typed(25.6).to_string(), "25.6");
        assert_eq!(Typed(120.0).to_string(), "120");
        assert_eq!(Typed(1e308).to_string(), "1e308");
        assert_eq!(Typed(-1e308).to_string(), "-1e308");
        assert_eq!(Typed(5e-324).to_string(), "5e-324");
        assert_eq!(Typed(f64::NAN).to_string(), "NaN");
        assert_eq!(Typed(f64::INFINITY).to_string(), "inf");
        assert_eq!(Typed(-0.0).to_string(), "-0");
    }

    #[test]
    fn computed_values_print_without_noise() {
        // Expected strings: common practice, no source (what a person would write).
        assert_eq!(Num(1.2 * 19.2).to_string(), "23.04");
        assert_eq!(Num(16.200000000000003).to_string(), "16.2");
        assert_eq!(Num(-0.03 / 100.0 * 22.4).to_string(), "-0.00672");
        assert_eq!(Num(25.6).to_string(), "25.6");
        assert_eq!(Num(25.0).to_string(), "25");
        assert_eq!(Num(1000.0).to_string(), "1000");
        assert_eq!(Num(123_456_789.0).to_string(), "123456789");
        assert_eq!(Num(-0.0).to_string(), "0");
        assert_eq!(Num(-1e-12).to_string(), "-0.000000000001");
        assert_eq!(Num(f64::NAN).to_string(), "NaN");
        assert_eq!(Num(f64::INFINITY).to_string(), "inf");
    }
}
