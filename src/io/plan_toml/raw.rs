//! The TOML mirror: one serde struct per plan table, every value wrapped in [`Spanned`] so
//! that an error can point at its line and column.
//!
//! Nothing here checks a value; unknown keys are rejected (`deny_unknown_fields`) so a typo
//! fails at parse time instead of falling back to a default. Only this folder sees these
//! types.

use std::collections::BTreeMap;

use serde::Deserialize;
use toml::Spanned;

pub(super) type S<T> = Spanned<T>;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawPlan {
    pub(super) site: Option<RawSite>,
    pub(super) weather: RawWeather,
    pub(super) model: Option<RawModel>,
    pub(super) module_type: BTreeMap<String, S<RawModuleType>>,
    pub(super) group: BTreeMap<String, S<RawGroup>>,
    pub(super) controller: Option<BTreeMap<String, S<RawController>>>,
    pub(super) battery: Option<RawBattery>,
    pub(super) load: Option<S<RawLoad>>,
    pub(super) cables: Option<RawCables>,
    #[serde(default)]
    pub(super) shade: Vec<S<RawShade>>,
    #[serde(default)]
    pub(super) layout: Vec<S<RawLayout>>,
    pub(super) layouts: Option<S<String>>,
    pub(super) enumerate: Option<RawEnumerate>,
    #[serde(default)]
    pub(super) obstacle: Vec<S<RawObstacle>>,
    #[serde(default)]
    pub(super) module_horizon: Vec<S<RawModuleHorizon>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawObstacle {
    pub(super) name: Option<String>,
    pub(super) kind: S<String>,
    pub(super) east_m: Option<S<f64>>,
    pub(super) north_m: Option<S<f64>>,
    pub(super) radius_m: Option<S<f64>>,
    pub(super) footprint_m: Option<S<Vec<Vec<f64>>>>,
    pub(super) base_m: Option<S<f64>>,
    pub(super) height_m: S<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawModuleHorizon {
    pub(super) module: S<String>,
    pub(super) points: S<Vec<Vec<f64>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawEnumerate {
    pub(super) allow_unused_modules: Option<bool>,
    pub(super) allow_mixed_orientation: Option<bool>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawSite {
    pub(super) name: Option<String>,
    pub(super) latitude_deg: Option<S<f64>>,
    pub(super) longitude_deg: Option<S<f64>>,
    pub(super) elevation_m: Option<S<f64>>,
    pub(super) utc_offset_h: Option<S<f64>>,
    pub(super) albedo_frac: Option<S<OneOrMonthly>>,
    pub(super) design_min_air_c: Option<S<f64>>,
    pub(super) design_max_air_c: Option<S<f64>>,
    pub(super) horizon: Option<S<Vec<Vec<f64>>>>,
}

#[derive(Deserialize, Clone)]
#[serde(untagged)]
pub(super) enum OneOrMonthly {
    One(f64),
    Monthly(Vec<f64>),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawWeather {
    pub(super) file: S<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawModel {
    pub(super) irradiance_variability_pct: Option<S<f64>>,
    pub(super) model_uncertainty_pct: Option<S<f64>>,
    pub(super) sky: Option<S<String>>,
    pub(super) low_sun_elevation_deg: Option<S<f64>>,
    pub(super) delta_t_s: Option<S<f64>>,
    pub(super) coupled_layouts: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawModuleType {
    pub(super) pmax_w: S<f64>,
    pub(super) voc_v: S<f64>,
    pub(super) isc_a: S<f64>,
    pub(super) vmp_v: S<f64>,
    pub(super) imp_a: S<f64>,
    pub(super) alpha_isc_pct_k: S<f64>,
    pub(super) beta_voc_pct_k: S<f64>,
    pub(super) gamma_pmax_pct_k: S<f64>,
    pub(super) cells_in_series: S<i64>,
    pub(super) bypass_diodes: S<i64>,
    pub(super) bypass_drop_v: Option<S<f64>>,
    pub(super) noct_c: S<f64>,
    pub(super) length_m: S<f64>,
    pub(super) width_m: S<f64>,
    pub(super) max_system_v: S<f64>,
    pub(super) max_series_fuse_a: S<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawGroup {
    pub(super) module_type: S<String>,
    pub(super) count: S<i64>,
    pub(super) tilt_deg: S<f64>,
    pub(super) azimuth_deg: S<f64>,
    pub(super) thermal: Option<S<String>>,
    pub(super) mounting: Option<S<String>>,
    pub(super) back: Option<S<String>>,
    pub(super) faiman_u0_w_m2k: Option<S<f64>>,
    pub(super) faiman_u1_w_s_m3k: Option<S<f64>>,
    pub(super) soiling_pct: Option<S<OneOrMonthly>>,
    pub(super) horizon: Option<S<Vec<Vec<f64>>>>,
    pub(super) centre_m: Option<S<Vec<f64>>>,
    pub(super) rows: Option<S<i64>>,
    pub(super) columns: Option<S<i64>>,
    pub(super) row_gap_m: Option<S<f64>>,
    pub(super) column_gap_m: Option<S<f64>>,
    pub(super) landscape: Option<bool>,
    pub(super) substrings_along_long_side: Option<bool>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawController {
    pub(super) kind: S<String>,
    pub(super) max_input_v: S<f64>,
    pub(super) max_input_a: Option<S<f64>>,
    pub(super) max_array_isc_a: Option<S<f64>>,
    pub(super) max_charge_a: S<f64>,
    pub(super) output_derating_from_c: Option<S<f64>>,
    pub(super) output_derating_pct_per_k: Option<S<f64>>,
    pub(super) mppt_min_v: Option<S<f64>>,
    pub(super) mppt_max_v: Option<S<f64>>,
    pub(super) headroom_v: Option<S<f64>>,
    pub(super) start_offset_v: Option<S<f64>>,
    pub(super) stop_offset_v: Option<S<f64>>,
    pub(super) tracking: Option<S<String>>,
    pub(super) efficiency: Option<S<Vec<Vec<f64>>>>,
    pub(super) switch_drop_v: Option<S<f64>>,
    pub(super) main_run_length_m: S<f64>,
    pub(super) main_run_mm2: Option<S<f64>>,
    pub(super) main_run_awg: Option<S<i64>>,
    pub(super) main_run_conductor: Option<S<String>>,
    pub(super) main_run_ampacity_a: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawBattery {
    pub(super) nominal_v: S<f64>,
    pub(super) charge_v: Option<S<f64>>,
    pub(super) capacity_ah: Option<S<f64>>,
    pub(super) chemistry: Option<S<String>>,
    pub(super) usable_dod_pct: Option<S<f64>>,
    pub(super) round_trip_efficiency_pct: Option<S<f64>>,
    pub(super) initial_soc_pct: Option<S<f64>>,
    pub(super) absorption_v: Option<S<f64>>,
    pub(super) float_v: Option<S<f64>>,
    pub(super) max_charge_rate_c: Option<S<f64>>,
    pub(super) max_discharge_rate_c: Option<S<f64>>,
    pub(super) min_charge_air_c: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawLoad {
    pub(super) daily_wh: Option<S<Vec<f64>>>,
    pub(super) monthly_wh: Option<S<Vec<Vec<f64>>>>,
    pub(super) weekend_daily_wh: Option<S<Vec<f64>>>,
    pub(super) battery_step_ah: Option<S<f64>>,
    pub(super) unmet_target_kwh: Option<S<f64>>,
    pub(super) autonomy_days: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawCables {
    pub(super) string_lead_length_m: S<f64>,
    pub(super) string_lead_mm2: Option<S<f64>>,
    pub(super) string_lead_awg: Option<S<i64>>,
    pub(super) conductor: Option<S<String>>,
    pub(super) string_lead_ampacity_a: Option<S<f64>>,
    pub(super) conductor_rise_dk: Option<S<f64>>,
    pub(super) voltage_drop_target_pct: Option<S<f64>>,
    pub(super) blocking_diode_v: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawShade {
    pub(super) module: S<String>,
    pub(super) substrings: Option<S<Vec<i64>>>,
    pub(super) months: Option<S<Vec<i64>>>,
    pub(super) hours: Option<S<Vec<i64>>>,
    pub(super) beam_blocked_pct: S<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RawLayout {
    pub(super) name: Option<String>,
    pub(super) strings: BTreeMap<String, S<Vec<Vec<String>>>>,
}
