//! Weather synthesis: an hourly year in the crate's weather format from twelve monthly means.
//!
//! Users often have only monthly figures for a site (a climate table, a solar atlas): the
//! mean daily global horizontal irradiation of each month, the mean air temperature with the
//! mean daily minimum and maximum (or the mean daily range), perhaps the mean wind speed.
//! [`synthesize`] turns those into an hourly year with published stochastic methods, so that
//! the simulation sees realistic runs of dull and bright days, cloudy hours inside a day and
//! cold clear nights:
//!
//! 1. daily clearness indices Kt from the library of Markov transition matrices of Aguiar,
//!    Collares-Pereira & Conde 1988 (a matrix per class of the monthly mean clearness K̄T);
//! 2. hourly clearness inside each day from the TAG model (time-dependent, autoregressive,
//!    Gaussian) of Aguiar & Collares-Pereira 1992;
//! 3. no hour brighter than the Haurwitz 1945 clear sky plus [`CLEAR_SKY_MARGIN_FRAC`];
//! 4. beam and diffuse parts from the Erbs, Klein & Duffie 1982 split
//!    ([`crate::physics::sky::erbs_split`]);
//! 5. air temperature from daily minima and maxima with the Parton & Logan 1981 daily cycle
//!    (sine by day, exponential decay by night), a first-order autoregressive day-to-day
//!    anomaly and a daily range that follows the day's clearness;
//! 6. wind (when given) from gamma-distributed daily means and an afternoon maximum;
//! 7. each month rescaled so that its means reproduce the inputs (irradiation within 2 %,
//!    temperature within 0.5 °C; in practice much closer).
//!
//! The sun is the textbook one (Spencer / Duffie & Beckman, about 0.5°), as in the weather
//! sanity checks: good enough for daily and hourly clearness, not for the simulation, which
//! recomputes the sun with NREL SPA. The same seed gives the same series (and so the same
//! CSV bytes) with the locked `rand` version; each quantity draws from its own stream.
//!
//! This module is pure (no file I/O; the input file format is read by `io/monthly_toml.rs`
//! for the `weather synth` command). It deliberately does not model humidity, snow, wind
//! direction, year-to-year variability or any correlation between cloud and temperature
//! beyond the daily range; it does not claim that its output is the climate of any real
//! place. The method is written out in `notebooks-free-docs/method-synth.md`.
//!
//! One idea per file; everything public is re-exported here, so callers name
//! `weather_gen::synth::X` and never a file:
//! - `inputs.rs` — [`MonthlyInputs`], its validation into [`MonthlyClimate`], [`SynthError`];
//! - `textbook_sun.rs` — the year's textbook sun: [`HourSun`], daily and monthly
//!   extraterrestrial irradiation;
//! - `aguiar_tables.rs` — the published matrices ([`AGUIAR_MATRICES`]);
//! - `daily.rs` — the daily clearness chain (step 1);
//! - `hourly.rs` — the TAG hourly model and [`fit_to_total`] (steps 2–3);
//! - `temperature.rs` — the Parton & Logan day curve and the year's temperatures (step 5);
//! - `wind.rs` — wind (step 6);
//! - `assemble.rs` — [`synthesize`]: the steps in order, the Erbs split (step 4), rounding,
//!   and the checks of the result.

mod aguiar_tables;
mod assemble;
mod daily;
mod hourly;
mod inputs;
mod temperature;
mod textbook_sun;
mod wind;

pub use aguiar_tables::{AGUIAR_KT_MAX, AGUIAR_KT_MIN, AGUIAR_MATRICES};
pub use assemble::{synthesize, Synthesis};
pub use daily::{aguiar_class, aguiar_month_sequence, aguiar_next_clearness};
pub use hourly::{fit_to_total, tag_params, TagParams, CLEAR_SKY_MARGIN_FRAC};
pub use inputs::{
    MonthlyClimate, MonthlyInputs, SynthError, DEFAULT_AIR_DAY_SD_DK, MONTH_NAMES, YEAR_RANGE,
};
pub use temperature::{parton_logan_c, DayCycle, AIR_ANOMALY_LAG1, PARTON_LOGAN_ABC};
pub use textbook_sun::{
    daily_extraterrestrial_wh_m2, hour_sun, monthly_extraterrestrial_kwh_m2_day, HourSun,
};

#[cfg(test)]
mod test_support;
