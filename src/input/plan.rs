//! The validated plan: what the owner has (site, modules, controllers, battery, cables) and
//! which wirings to compare.
//!
//! Values here have passed every range and consistency check in `io::plan_toml`; the physics
//! code downstream trusts them and cannot fail on them. This module knows no file format and
//! no serde: the TOML mirror lives in `io::plan_toml`.

use std::path::PathBuf;

use crate::physics::battery::{BatterySpec, LoadProfile};
use crate::physics::controller::ControllerModel;
use crate::physics::diode::{Datasheet, ReferenceParams};
use crate::physics::shade::{HorizonProfile, ModulePlacement, Obstacle};
use crate::physics::sky::{GlassCover, SkyModel};
use crate::physics::thermal::CellTemperatureModel;
use crate::physics::wiring::Conductor;

/// The site as the plan states it; any of it may instead come from the weather file's header.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct SiteSpec {
    pub name: Option<String>,
    pub latitude_deg: Option<f64>,
    pub longitude_deg: Option<f64>,
    pub elevation_m: Option<f64>,
    pub utc_offset_h: Option<f64>,
    /// Design minimum air temperature for the cold-voltage check, °C.
    pub design_min_air_c: Option<f64>,
    /// Design maximum air temperature for the hot-voltage check, °C.
    pub design_max_air_c: Option<f64>,
    /// The plan line that gave each site key (`latitude_deg`, …), for messages.
    pub key_lines: Vec<(&'static str, usize)>,
}

/// Ground reflectance: one value, or one per month (January first).
#[derive(Clone, Debug, PartialEq)]
pub enum Albedo {
    Constant(f64),
    Monthly([f64; 12]),
}

impl Albedo {
    /// Albedo for a month 1..=12.
    pub fn for_month(&self, month: u32) -> f64 {
        match self {
            Albedo::Constant(a) => *a,
            Albedo::Monthly(m) => m[(month.clamp(1, 12) - 1) as usize],
        }
    }
}

/// Modelling choices that apply to the whole run.
#[derive(Clone, Debug)]
pub struct ModelOptions {
    pub sky: SkyModel,
    pub glass: GlassCover,
    /// Intervals with the sun above 0° and below this elevation count as "low sun".
    pub low_sun_elevation_deg: f64,
    /// TT − UT1 for the solar position, s.
    pub delta_t_s: f64,
    /// Albedo used when the weather file has no albedo column.
    pub albedo: Albedo,
    /// Year-to-year variability of the resource and model uncertainty (P50/P90).
    pub uncertainty: crate::input::uncertainty::P90Inputs,
    /// With a battery model: how many passing layouts, best first by the screening at the
    /// fixed charging voltage, get the year coupled to the battery
    /// (notebooks-free-docs/method-battery.md, "Screening").
    pub coupled_layouts: usize,
}

/// Default of [`ModelOptions::coupled_layouts`].
pub const COUPLED_LAYOUTS_DEFAULT: usize = 40;

/// One module type from its datasheet, with the single-diode parameters fitted once.
#[derive(Clone, Debug)]
pub struct ModuleType {
    pub id: String,
    pub pmax_w: f64,
    pub datasheet: Datasheet,
    /// Temperature coefficient of Pmax, fraction per K (negative); reported, not modelled.
    pub gamma_pmax_frac_k: f64,
    pub bypass_diodes: u32,
    pub bypass_drop_v: f64,
    pub noct_c: f64,
    pub length_m: f64,
    pub width_m: f64,
    pub max_system_v: f64,
    pub max_series_fuse_a: f64,
    /// De Soto 2006 reference parameters of the whole module.
    pub reference: ReferenceParams,
    /// The same for one bypass-diode substring.
    pub substring: ReferenceParams,
}

impl ModuleType {
    /// Module area, m².
    pub fn area_m2(&self) -> f64 {
        self.length_m * self.width_m
    }

    /// STC efficiency, fraction.
    pub fn stc_efficiency_frac(&self) -> f64 {
        self.pmax_w / (1000.0 * self.area_m2())
    }
}

/// Modules sharing a tilt, an azimuth, a type and a mounting.
#[derive(Clone, Debug)]
pub struct Group {
    pub id: String,
    pub module_type: usize,
    pub count: usize,
    pub tilt_deg: f64,
    pub azimuth_deg: f64,
    pub thermal: CellTemperatureModel,
    /// Soiling/snow loss per month, fraction of the plane-of-array light (January first).
    pub soiling_frac: [f64; 12],
}

/// One physical module, named `<group>-<n>` (n from 1).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Module {
    pub id: String,
    pub group: usize,
    pub module_type: usize,
}

/// One controller input (a multi-input controller is several of these).
#[derive(Clone, Debug)]
pub struct ControllerInput {
    pub id: String,
    /// Behaviour and ratings (window, limits, wake-up, efficiency).
    pub model: ControllerModel,
    /// Absolute maximum input voltage (array Voc above it damages the controller), V.
    pub max_input_v: f64,
    /// The array short-circuit current the input withstands, A: a hard limit that
    /// 1.25 × the summed Isc must not exceed (NEC 690.8(A)(1)). The current the controller
    /// draws (a simulated limit) is `model.max_input_a()`.
    pub max_array_isc_a: f64,
    /// Which of the two current ratings the plan left out and was assumed from the other.
    pub current_assumed: Option<CurrentAssumed>,
    /// Main run from the combiner to this input.
    pub main_run: CableRun,
}

/// A controller current rating the plan did not give, taken from the one it gave.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CurrentAssumed {
    /// Only `max_input_a` given: the array short-circuit rating is taken equal to it (the
    /// safe reading of a single current rating).
    ArrayIscFromInput,
    /// Only `max_array_isc_a` given: the controller is taken to use any current up to it (no
    /// input limit binds on a layout that passes the short-circuit check).
    InputFromArrayIsc,
}

/// The battery as the controller sees it.
#[derive(Clone, Debug, PartialEq)]
pub struct Battery {
    pub nominal_v: f64,
    /// Voltage the controller charges at when no battery model is given, V.
    pub charge_v: f64,
    /// State of charge, stages and acceptance (when the plan gives `capacity_ah`): the
    /// charging voltage then follows the battery (notebooks-free-docs/method-battery.md).
    pub model: Option<BatterySpec>,
}

/// Days the battery alone runs the load in the sizing answer when the plan does not say.
/// Common practice, no source: off-grid sizing guidance commonly asks for about 3 to 5 days
/// for a system used all year without a generator; 3 is the low end.
pub const DEFAULT_AUTONOMY_DAYS: f64 = 3.0;

/// The owner's daily use and what the sizing helper aims for.
#[derive(Clone, Debug, PartialEq)]
pub struct Consumption {
    pub load: LoadProfile,
    /// Battery sizes are searched in steps of this, Ah.
    pub battery_step_ah: f64,
    /// Unmet load the sizing helper accepts per year, Wh.
    pub unmet_target_wh: f64,
    /// Days the battery alone must run the load (no harvest) for the battery sizing.
    pub autonomy_days: f64,
}

/// A cable: one-way length, cross-section and conductor.
#[derive(Clone, Debug, PartialEq)]
pub struct CableRun {
    /// One-way length, m (the resistance counts the round trip).
    pub length_m: f64,
    pub cross_section_mm2: f64,
    /// The gauge when the plan gave one (the ampacity table then uses the AWG column).
    pub awg: Option<i32>,
    pub conductor: Conductor,
    /// Ampacity the plan states, A; `None` uses the documented table.
    pub ampacity_a: Option<f64>,
}

/// Cable rules common to the whole array.
#[derive(Clone, Debug)]
pub struct Cables {
    /// Per-string lead (module jumpers included) to the combiner.
    pub string_lead: CableRun,
    /// Conductor temperature above air temperature, K.
    pub conductor_rise_dk: f64,
    /// Largest acceptable voltage drop at STC, fraction.
    pub voltage_drop_target_frac: f64,
    /// Forward drop of an optional blocking diode per string, V.
    pub blocking_diode_v: Option<f64>,
}

/// Direct light blocked on some substrings of a module at stated months and hours.
#[derive(Clone, Debug, PartialEq)]
pub struct ShadeRule {
    pub module: usize,
    /// Substring indices, 0-based.
    pub substrings: Vec<usize>,
    /// Months 1..=12 in which the rule applies.
    pub months: Vec<u32>,
    /// Local hours of day 0..=23 (of the interval's start) in which the rule applies.
    pub hours: Vec<u32>,
    /// Fraction of the direct (beam and circumsolar) light blocked.
    pub beam_blocked_frac: f64,
}

/// A wiring written out in the plan: per controller input, parallel strings of module indices.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LayoutSpec {
    pub name: Option<String>,
    /// (controller input index, strings of module indices).
    pub inputs: Vec<(usize, Vec<Vec<usize>>)>,
}

/// The site's geometry for shading: horizon profiles and near obstacles (notebooks-free-docs/method-shade.md).
#[derive(Clone, Debug, Default)]
pub struct Geometry {
    /// Horizon seen by every module without a more specific one.
    pub site_horizon: Option<HorizonProfile>,
    /// Per group (index = group), overriding the site's.
    pub group_horizon: Vec<Option<HorizonProfile>>,
    /// Per module (index = module), overriding the group's.
    pub module_horizon: Vec<Option<HorizonProfile>>,
    /// Where each module sits (index = module); `None` for groups without a placement.
    pub placements: Vec<Option<ModulePlacement>>,
    /// Near obstacles with their names (for reports).
    pub obstacles: Vec<(String, Obstacle)>,
}

impl Geometry {
    /// True when nothing shades anything geometrically.
    pub fn is_empty(&self) -> bool {
        self.site_horizon.is_none()
            && self.group_horizon.iter().all(Option::is_none)
            && self.module_horizon.iter().all(Option::is_none)
            && self.obstacles.is_empty()
    }
}

/// Everything wirerank needs from the plan file, validated.
#[derive(Clone, Debug)]
pub struct Plan {
    /// The plan file as given (for messages and provenance).
    pub source: PathBuf,
    pub site: SiteSpec,
    /// Weather file, resolved relative to the plan's folder.
    pub weather_path: PathBuf,
    pub model: ModelOptions,
    pub module_types: Vec<ModuleType>,
    pub groups: Vec<Group>,
    pub modules: Vec<Module>,
    pub controllers: Vec<ControllerInput>,
    pub battery: Battery,
    /// The load, when the plan gives one (`[load]`).
    pub consumption: Option<Consumption>,
    pub cables: Cables,
    pub shade: Vec<ShadeRule>,
    /// Horizon profiles, obstacles and module placements.
    pub geometry: Geometry,
    pub layouts: Vec<LayoutSpec>,
    /// `layouts = "all"`: also enumerate every regular wiring.
    pub enumerate_all: bool,
    /// What enumeration may do (`[enumerate]`).
    pub enumerate: EnumerateOptions,
    /// What the reader accepted but the user should change (an old spelling of a value),
    /// each naming the file, line and key; printed on stderr as warnings.
    pub warnings: Vec<String>,
}

impl ControllerInput {
    /// Same behaviour, ratings and main run (the id aside): swapping the strings of two such
    /// inputs changes nothing electrically.
    pub fn same_hardware(&self, other: &ControllerInput) -> bool {
        self.model == other.model
            && self.max_input_v == other.max_input_v
            && self.max_array_isc_a == other.max_array_isc_a
            && self.main_run == other.main_run
    }
}

/// Which of the plan's horizon profiles applies to a module.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum HorizonRef {
    Site,
    Group(usize),
    Module(usize),
}

impl Plan {
    /// Which modules some candidate layout may wire: every module when the plan enumerates
    /// (`layouts = "all"`), otherwise those of the listed layouts. The per-interval shade and
    /// curve data are kept for these only, so a module no layout uses costs no memory per
    /// interval (notebooks-free-docs/limits-and-file-safety.md).
    pub fn wired_modules(&self) -> Vec<bool> {
        if self.enumerate_all {
            return vec![true; self.modules.len()];
        }
        let mut wired = vec![false; self.modules.len()];
        for l in &self.layouts {
            for (_, strings) in &l.inputs {
                for &m in strings.iter().flatten() {
                    wired[m] = true;
                }
            }
        }
        wired
    }

    /// The most specific horizon for a module: its own, its group's, or the site's.
    pub fn horizon_ref(&self, module: usize, group: usize) -> Option<HorizonRef> {
        let g = &self.geometry;
        if g.module_horizon.get(module).is_some_and(Option::is_some) {
            Some(HorizonRef::Module(module))
        } else if g.group_horizon.get(group).is_some_and(Option::is_some) {
            Some(HorizonRef::Group(group))
        } else {
            g.site_horizon.as_ref().map(|_| HorizonRef::Site)
        }
    }

    /// The profile a [`HorizonRef`] points at.
    pub fn geometry_horizon(&self, r: HorizonRef) -> Option<&HorizonProfile> {
        let g = &self.geometry;
        match r {
            HorizonRef::Site => g.site_horizon.as_ref(),
            HorizonRef::Group(i) => g.group_horizon.get(i).and_then(Option::as_ref),
            HorizonRef::Module(i) => g.module_horizon.get(i).and_then(Option::as_ref),
        }
    }

    /// The index of a module by its id.
    pub fn module_index(&self, id: &str) -> Option<usize> {
        self.modules.iter().position(|m| m.id == id)
    }
}

/// What enumeration may do beyond the plain rule (each input p parallel strings of s modules,
/// every module used, strings within one orientation group).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct EnumerateOptions {
    /// Leave some modules unwired.
    pub allow_unused_modules: bool,
    /// Strings that combine modules of several orientation groups.
    pub allow_mixed_orientation: bool,
}
