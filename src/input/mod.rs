//! Validated inputs: the plan, the weather series, the site they describe together, and
//! layouts as wirings of the plan's modules. Everything here is checked on the way in
//! (by the readers in `io/`), so later stages cannot see an out-of-range value.

pub mod layout;
pub mod plan;
pub mod site;
pub mod uncertainty;
pub mod weather;

use crate::input::plan::Plan;
use crate::input::site::Site;
use crate::input::weather::Weather;

/// A plan with its weather and the merged site, ready to simulate.
#[derive(Clone, Debug)]
pub struct Loaded {
    pub plan: Plan,
    pub weather: Weather,
    pub site: Site,
    /// SHA-256 of the plan and weather files as read (provenance).
    pub plan_sha256: String,
    pub weather_sha256: String,
}

impl Loaded {
    /// The plan's warnings (old spellings it accepted), then the weather file's repair
    /// warnings, as text for stderr.
    pub fn warning_texts(&self) -> Vec<String> {
        let mut w = self.plan.warnings.clone();
        w.extend(self.weather.warnings.iter().map(|w| w.to_string()));
        w
    }
}
