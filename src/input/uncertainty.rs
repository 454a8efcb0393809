//! The uncertainty inputs of P50/P90, as the plan gives them (validated); the P50/P90
//! arithmetic itself is in `results::uncertainty` (notebooks-free-docs/method-p90.md).

/// One-year standard deviation of annual global irradiation, as a fraction of the mean, used
/// when nothing better is known.
///
/// # Source
/// From memory: the year-to-year standard deviation of annual global horizontal irradiation
/// is typically 4–6 % in temperate climates and 2–3 % in deserts (long satellite-era and
/// station records); 4.5 % is a temperate middle value. Replace it with a site value, or
/// with the empirical spread of a multi-year weather file (`results::uncertainty`).
pub const DEFAULT_VARIABILITY_FRAC: f64 = 0.045;

/// Model-chain uncertainty of the simulated annual energy, as a fraction, used when nothing
/// better is known.
///
/// # Source
/// From memory: energy-yield assessments commonly carry 3–6 % for the combined uncertainty of
/// the resource data's long-term mean, transposition, temperature and electrical models
/// (one standard deviation); 5 % is used here for small off-grid systems modelled from a
/// typical year.
pub const DEFAULT_MODEL_FRAC: f64 = 0.05;

/// Accepted range of either uncertainty fraction: beyond 50 % the normal approximation
/// would put real probability on negative energy.
pub const FRACTION_RANGE: (f64, f64) = (0.0, 0.5);

/// The two uncertainties, validated.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct P90Inputs {
    /// One-year standard deviation of the solar resource, fraction of the mean.
    pub variability_frac: f64,
    /// Standard uncertainty of the model chain, fraction of the result.
    pub model_frac: f64,
}

impl P90Inputs {
    /// The documented defaults ([`DEFAULT_VARIABILITY_FRAC`], [`DEFAULT_MODEL_FRAC`]).
    pub const TYPICAL: P90Inputs = P90Inputs {
        variability_frac: DEFAULT_VARIABILITY_FRAC,
        model_frac: DEFAULT_MODEL_FRAC,
    };

    /// Checks both fractions.
    ///
    /// # Errors
    /// A lower-case message naming the value outside [`FRACTION_RANGE`].
    pub fn new(variability_frac: f64, model_frac: f64) -> Result<P90Inputs, String> {
        for (name, v) in [
            ("variability_frac", variability_frac),
            ("model_frac", model_frac),
        ] {
            if !(v.is_finite() && (FRACTION_RANGE.0..=FRACTION_RANGE.1).contains(&v)) {
                return Err(format!(
                    "{name} = {v} is outside {} to {} (a fraction: 0.05 is 5 %)",
                    FRACTION_RANGE.0, FRACTION_RANGE.1
                ));
            }
        }
        Ok(P90Inputs {
            variability_frac,
            model_frac,
        })
    }

    /// Combined one-year standard deviation, fraction.
    ///
    /// # Formula
    /// σ₁ = √(σ_var² + σ_model²)
    pub fn sigma_1y_frac(&self) -> f64 {
        self.variability_frac.hypot(self.model_frac)
    }

    /// Combined standard deviation of a ten-year mean, fraction.
    ///
    /// # Formula
    /// σ₁₀ = √(σ_var²/10 + σ_model²): the years' resource deviations average out, the
    /// model's bias does not.
    pub fn sigma_10y_frac(&self) -> f64 {
        (self.variability_frac.powi(2) / 10.0 + self.model_frac.powi(2)).sqrt()
    }
}
