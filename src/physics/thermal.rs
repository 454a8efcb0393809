//! Cell temperature from plane-of-array irradiance, air temperature and wind speed.
//!
//! Three steady-state models are offered: the module temperature model of King et al. 2004, the Faiman
//! heat-loss model and a NOCT-based linear rise. Inputs are hourly (or shorter) means, so no
//! thermal inertia is modelled. The irradiance is the plane-of-array value BEFORE
//! incidence-angle losses (what the coefficient fits used). This module does not know about
//! mounting geometry, sky temperature, electrical operating point or the module's
//! efficiency: those are folded into the coefficients the user picks.

/// A steady-state cell temperature model with its coefficients.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum CellTemperatureModel {
    /// The module temperature model of King, Boyson & Kratochvil 2004.
    King {
        /// Upper limit of the module temperature rise at low wind, ln(K·m²/W).
        a: f64,
        /// Rate at which the rise falls with wind speed, s/m (negative).
        b: f64,
        /// Cell-to-back-surface temperature difference at 1000 W/m², K.
        delta_t_dk: f64,
    },
    /// Faiman 2008 heat-loss model (the form of IEC 61853-2).
    Faiman {
        /// Constant heat-loss coefficient U0, W/(m²·K).
        u0: f64,
        /// Wind heat-loss coefficient U1, W·s/(m³·K).
        u1: f64,
    },
    /// Linear rise from the datasheet NOCT (or NMOT), wind ignored.
    Noct {
        /// Nominal operating cell temperature from the datasheet, °C.
        noct_c: f64,
    },
}

/// How a module is mounted, in the words of King et al. 2004's coefficient table.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Mounting {
    /// Free air behind the module (a rack or a pole).
    OpenRack,
    /// A few centimetres above a roof, little air behind.
    CloseRoof,
    /// The back thermally insulated (built into a roof or a wall).
    InsulatedBack,
}

/// What the module's back is made of.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Back {
    /// Glass front and glass back (a glass–glass laminate).
    Glass,
    /// Glass front and a polymer back sheet (most framed crystalline modules).
    Polymer,
}

impl Mounting {
    pub const ALL: [Mounting; 3] = [
        Mounting::OpenRack,
        Mounting::CloseRoof,
        Mounting::InsulatedBack,
    ];

    /// The plan's word for it.
    pub fn key(self) -> &'static str {
        match self {
            Mounting::OpenRack => "open-rack",
            Mounting::CloseRoof => "close-roof",
            Mounting::InsulatedBack => "insulated-back",
        }
    }
}

impl Back {
    pub const ALL: [Back; 2] = [Back::Glass, Back::Polymer];

    /// The plan's word for it.
    pub fn key(self) -> &'static str {
        match self {
            Back::Glass => "glass",
            Back::Polymer => "polymer",
        }
    }
}

/// The King et al. 2004 coefficient sets for flat-plate modules with a glass front: the
/// mounting and back combinations the paper gives, with (a, b, ΔT).
///
/// # Source
/// King, Boyson & Kratochvil 2004, SAND2004-3535, Table 1: a and b (text); ΔT from memory.
/// glass/cell/glass open rack −3.47, −0.0594, 3 K; glass/cell/glass close roof mount
/// −2.98, −0.0471, 1 K; glass/cell/polymer sheet open rack −3.56, −0.0750, 3 K;
/// glass/cell/polymer sheet insulated back −2.81, −0.0455, 0 K.
pub const KING_2004_SETS: [(Mounting, Back, f64, f64, f64); 4] = [
    (Mounting::OpenRack, Back::Glass, -3.47, -0.0594, 3.0),
    (Mounting::CloseRoof, Back::Glass, -2.98, -0.0471, 1.0),
    (Mounting::OpenRack, Back::Polymer, -3.56, -0.0750, 3.0),
    (Mounting::InsulatedBack, Back::Polymer, -2.81, -0.0455, 0.0),
];

impl CellTemperatureModel {
    /// King et al. 2004's coefficients for this mounting and back, or `None` when the paper
    /// gives no set for the combination (close roof with a polymer back, insulated back with
    /// a glass back): see [`KING_2004_SETS`].
    pub fn king(mounting: Mounting, back: Back) -> Option<CellTemperatureModel> {
        KING_2004_SETS
            .iter()
            .find(|s| s.0 == mounting && s.1 == back)
            .map(|&(_, _, a, b, delta_t_dk)| CellTemperatureModel::King { a, b, delta_t_dk })
    }

    /// The mounting and back of a King 2004 set, when these are one of the paper's sets.
    pub fn king_set(&self) -> Option<(Mounting, Back)> {
        KING_2004_SETS
            .iter()
            .find(|s| CellTemperatureModel::king(s.0, s.1).as_ref() == Some(self))
            .map(|s| (s.0, s.1))
    }

    /// Faiman's typical coefficients for free-standing modules.
    ///
    /// # Source
    /// Faiman 2008, "Assessing the outdoor operating temperature of photovoltaic modules",
    /// Prog. Photovolt. 16(4): U0 = 25 W/(m²·K), U1 = 6.84 W·s/(m³·K) (text).
    pub const FAIMAN_TYPICAL: CellTemperatureModel =
        CellTemperatureModel::Faiman { u0: 25.0, u1: 6.84 };

    /// Checks that the coefficients describe a module warmer than the air in the sun.
    ///
    /// # Errors
    /// - King 2004: a, b or ΔT not finite; b > 0 (wind would heat the module); ΔT < 0; or a
    ///   rise above 100 K at 1000 W/m² in still air (a > ln 0.1 ≈ −2.30; the published sets
    ///   span −3.56..−2.81).
    /// - Faiman: U0 not above 0, U1 below 0, or either not finite.
    /// - NOCT: not within 20..=100 °C (NOCT is measured at 20 °C air, so it must exceed it).
    pub fn validate(&self) -> Result<(), String> {
        match *self {
            CellTemperatureModel::King { a, b, delta_t_dk } => {
                if !(a.is_finite() && b.is_finite() && delta_t_dk.is_finite()) {
                    return Err(format!(
                        "King 2004 coefficients must be finite numbers (a = {a}, b = {b}, delta_t_dk = {delta_t_dk})"
                    ));
                }
                if b > 0.0 {
                    return Err(format!(
                        "King 2004 b = {b} must be <= 0 (wind cools the module; published values are about -0.05)"
                    ));
                }
                if delta_t_dk < 0.0 {
                    return Err(format!(
                        "King 2004 delta_t_dk = {delta_t_dk} must be >= 0 (the cell is not cooler than the back sheet)"
                    ));
                }
                if 1000.0 * a.exp() > 100.0 {
                    return Err(format!(
                        "King 2004 a = {a} gives a rise above 100 K at 1000 W/m² in still air (published values are about -3.5 to -2.8)"
                    ));
                }
                Ok(())
            }
            CellTemperatureModel::Faiman { u0, u1 } => {
                if !(u0 > 0.0 && u0.is_finite()) {
                    return Err(format!(
                        "faiman u0 = {u0} must be a finite value > 0 (typical 25 W/m²K)"
                    ));
                }
                if !(u1 >= 0.0 && u1.is_finite()) {
                    return Err(format!(
                        "faiman u1 = {u1} must be a finite value >= 0 (typical 6.84 W·s/m³K)"
                    ));
                }
                Ok(())
            }
            CellTemperatureModel::Noct { noct_c } => {
                if !(noct_c > 20.0 && noct_c <= 100.0) {
                    return Err(format!(
                        "noct_c = {noct_c} is outside 20 to 100 °C (datasheets give about 42-50 °C)"
                    ));
                }
                Ok(())
            }
        }
    }

    /// Cell temperature, °C, of a module in steady state.
    ///
    /// # Formula
    /// E = `poa_w_m2` (before incidence-angle losses), T_a = `air_c`, WS = `wind_m_s`.
    /// - King 2004: T_m = E·exp(a + b·WS) + T_a; T_c = T_m + (E/1000)·ΔT.
    /// - Faiman: T_c = T_a + E / (U0 + U1·WS).
    /// - NOCT: T_c = T_a + (NOCT − 20)/800 · E.
    ///
    /// # Source
    /// - King 2004: King, Boyson & Kratochvil 2004, "Photovoltaic Array Performance Model",
    ///   SAND2004-3535, eqs. 11–12 (equation numbers from memory).
    /// - Faiman 2008, Prog. Photovolt. 16(4). Faiman's temperature is the MODULE
    ///   (back-surface) temperature; it is used as the cell temperature here, as
    ///   IEC 61853-2 does when it fits U0 and U1.
    /// - NOCT: the linear rise through the NOCT test point (800 W/m², 20 °C air, 1 m/s);
    ///   the simplified form of Duffie & Beckman 4th ed. eq. 23.3.3 (equation number from
    ///   memory) with the efficiency term dropped.
    ///
    /// # Validity
    /// Hourly or shorter steady-state means; no thermal inertia. Negative irradiance (bad
    /// data) counts as 0, negative wind as 0. The NOCT model ignores wind and mounting: it
    /// assumes NOCT conditions' 1 m/s wind and open back all the time. Coefficients are
    /// assumed checked by [`CellTemperatureModel::validate`].
    pub fn cell_temperature_c(&self, poa_w_m2: f64, air_c: f64, wind_m_s: f64) -> f64 {
        let e = poa_w_m2.max(0.0);
        let ws = wind_m_s.max(0.0);
        match *self {
            CellTemperatureModel::King { a, b, delta_t_dk } => {
                let module_c = e * (a + b * ws).exp() + air_c;
                module_c + e / 1000.0 * delta_t_dk
            }
            CellTemperatureModel::Faiman { u0, u1 } => air_c + e / (u0 + u1 * ws),
            CellTemperatureModel::Noct { noct_c } => air_c + (noct_c - 20.0) / 800.0 * e,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_cell_temperature(
        model: CellTemperatureModel,
        (poa_w_m2, air_c, wind_m_s): (f64, f64, f64),
        expected_c: f64,
        tol_c: f64,
    ) {
        let got = model.cell_temperature_c(poa_w_m2, air_c, wind_m_s);
        assert!(
            (got - expected_c).abs() <= tol_c,
            "{model:?} at {poa_w_m2} W/m², {air_c} °C, {wind_m_s} m/s: got {got}, expected {expected_c} ± {tol_c}"
        );
    }

    /// A King 2004 set the paper gives (the tests name only those).
    fn king(m: Mounting, b: Back) -> CellTemperatureModel {
        CellTemperatureModel::king(m, b).expect("a set King 2004 gives")
    }

    #[test]
    fn king_sets_against_hand_calculation() {
        use Back::*;
        use Mounting::*;
        let stc_like = (1000.0, 25.0, 1.0);
        // Source: recomputed from King et al. 2004 eqs. 11–12 (regression guard):
        // 1000·e^(−3.47 − 0.0594) + 25 + 3 = 57.3225 °C
        check_cell_temperature(king(OpenRack, Glass), stc_like, 57.3225, 1e-4);
        // Source: recomputed, 1000·e^(−2.98 − 0.0471) + 25 + 1 = 74.4560 °C
        check_cell_temperature(king(CloseRoof, Glass), stc_like, 74.4560, 1e-4);
        // Source: recomputed, 1000·e^(−3.56 − 0.0750) + 25 + 3 = 54.3839 °C
        check_cell_temperature(king(OpenRack, Polymer), stc_like, 54.3839, 1e-4);
        // Source: recomputed, 1000·e^(−2.81 − 0.0455) + 25 + 0 = 82.5271 °C
        check_cell_temperature(king(InsulatedBack, Polymer), stc_like, 82.5271, 1e-4);
    }

    #[test]
    fn king_gives_only_the_papers_combinations() {
        // Source: King et al. 2004, Table 1 (text): flat-plate glass-front sets are
        // glass/glass on an open rack and close to a roof, glass/polymer on an open rack and
        // with an insulated back; no close-roof polymer set, no insulated-back glass set.
        let mut given = Vec::new();
        for m in Mounting::ALL {
            for b in Back::ALL {
                if CellTemperatureModel::king(m, b).is_some() {
                    given.push((m, b));
                }
            }
        }
        use Back::*;
        use Mounting::*;
        assert_eq!(
            given,
            vec![
                (OpenRack, Glass),
                (OpenRack, Polymer),
                (CloseRoof, Glass),
                (InsulatedBack, Polymer)
            ]
        );
    }

    #[test]
    fn king_open_rack_in_published_range() {
        // Source: from memory (King et al. 2004: an open-rack glass/glass module runs at
        // roughly 50–56 °C cell temperature at 1000 W/m², 20 °C air, 1 m/s wind)
        let t = king(Mounting::OpenRack, Back::Glass).cell_temperature_c(1000.0, 20.0, 1.0);
        assert!((50.0..=56.0).contains(&t), "got {t}");
    }

    #[test]
    fn king_mountings_order() {
        // Source: common practice, no source (an insulated back runs hotter than a close
        // roof mount, which runs hotter than an open rack; wind cools)
        use Back::*;
        use Mounting::*;
        let t = |m: CellTemperatureModel, ws: f64| m.cell_temperature_c(900.0, 25.0, ws);
        assert!(t(king(InsulatedBack, Polymer), 2.0) > t(king(CloseRoof, Glass), 2.0));
        assert!(t(king(CloseRoof, Glass), 2.0) > t(king(OpenRack, Glass), 2.0));
        assert!(t(king(OpenRack, Glass), 5.0) < t(king(OpenRack, Glass), 1.0));
    }

    #[test]
    fn faiman_example() {
        // Source: recomputed from Faiman 2008 with U0 25, U1 6.84 (text):
        // 20 + 800/(25 + 6.84) = 45.1256 °C
        check_cell_temperature(
            CellTemperatureModel::FAIMAN_TYPICAL,
            (800.0, 20.0, 1.0),
            45.1256,
            1e-4,
        );
        // Source: recomputed, still air: 20 + 800/25 = 52 °C
        check_cell_temperature(
            CellTemperatureModel::FAIMAN_TYPICAL,
            (800.0, 20.0, 0.0),
            52.0,
            1e-9,
        );
    }

    #[test]
    fn noct_identity() {
        // Source: NOCT test conditions (800 W/m², 20 °C air) give the NOCT by definition
        let model = CellTemperatureModel::Noct { noct_c: 45.0 };
        check_cell_temperature(model, (800.0, 20.0, 1.0), 45.0, 1e-9);
        // Source: NOCT model ignores wind (documented)
        check_cell_temperature(model, (800.0, 20.0, 6.0), 45.0, 1e-9);
        // Source: recomputed, 25 + 25/800·1000 = 56.25 °C
        check_cell_temperature(model, (1000.0, 25.0, 1.0), 56.25, 1e-9);
    }

    #[test]
    fn dark_module_is_at_air_temperature() {
        // Source: every model's formula at E = 0 (identity); negative irradiance is bad data
        // treated as 0 (common practice, no source)
        for model in [
            king(Mounting::OpenRack, Back::Glass),
            CellTemperatureModel::FAIMAN_TYPICAL,
            CellTemperatureModel::Noct { noct_c: 45.0 },
        ] {
            check_cell_temperature(model, (0.0, -5.0, 3.0), -5.0, 1e-12);
            check_cell_temperature(model, (-3.0, -5.0, 3.0), -5.0, 1e-12);
        }
        // Source: common practice, no source (negative wind treated as still air)
        let faiman = CellTemperatureModel::FAIMAN_TYPICAL;
        assert_eq!(
            faiman.cell_temperature_c(800.0, 20.0, -2.0),
            faiman.cell_temperature_c(800.0, 20.0, 0.0)
        );
    }

    #[test]
    fn validation() {
        use CellTemperatureModel as M;
        let kings = KING_2004_SETS.map(|s| king(s.0, s.1));
        for ok in kings
            .into_iter()
            .chain([M::FAIMAN_TYPICAL, M::Noct { noct_c: 45.0 }])
        {
            assert!(ok.validate().is_ok(), "{ok:?}");
        }
        let err = |m: M| m.validate().unwrap_err();
        assert!(err(M::King {
            a: -3.5,
            b: 0.1,
            delta_t_dk: 3.0
        })
        .contains("King 2004 b"));
        assert!(err(M::King {
            a: -3.5,
            b: -0.05,
            delta_t_dk: -1.0
        })
        .contains("delta_t_dk"));
        assert!(err(M::King {
            a: 0.0,
            b: -0.05,
            delta_t_dk: 3.0
        })
        .contains("King 2004 a"));
        assert!(err(M::King {
            a: f64::NAN,
            b: -0.05,
            delta_t_dk: 3.0
        })
        .contains("finite"));
        assert!(err(M::Faiman { u0: 0.0, u1: 6.84 }).contains("faiman u0"));
        assert!(err(M::Faiman { u0: 25.0, u1: -1.0 }).contains("faiman u1"));
        assert!(err(M::Noct { noct_c: 15.0 }).contains("noct_c"));
        assert!(err(M::Noct { noct_c: f64::NAN }).contains("noct_c"));
    }
}
