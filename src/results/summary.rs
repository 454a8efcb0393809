//! The figures of one simulated layout that every report shows, computed once here so that
//! no writer works one out again: energy *offered* by the controllers and energy *delivered*
//! to the battery and the load (kept apart everywhere), what a full battery turned away,
//! the low-sun share of each, the worst month, unmet load and days short, and the wiring
//! facts the recommendation's tie-breaks use.
//!
//! All energies are per mean year: the simulation's totals were already scaled to one year
//! when the weather file holds several (`LayoutEnergy::scale_to_mean_year`).

use crate::design::rules::{layout_voltage_drop_frac, DesignTemperatures};
use crate::input::layout::Layout;
use crate::input::plan::Plan;
use crate::sim::energy::{LayoutEnergy, Step};

/// Parallel strings from which string fuses are needed: with three or more strings in
/// parallel a faulted string can be fed more than its own fuse rating by the others (common
/// practice; NEC 690.9, from memory). The `string-fuse` rule uses the same count.
pub const FUSED_FROM_STRINGS: usize = 3;

/// One layout's figures, per mean year (months January first).
#[derive(Clone, Debug, PartialEq)]
pub struct LayoutSummary {
    /// What the controllers offered before a full battery turned any away, kWh.
    pub offered_kwh: [f64; 12],
    /// What reached the battery and the load, kWh.
    pub delivered_kwh: [f64; 12],
    /// What a full battery turned away (offered − delivered), kWh.
    pub curtailed_kwh: [f64; 12],
    /// Offered while the sun was low, kWh (≤ `offered_kwh` every month).
    pub low_sun_offered_kwh: [f64; 12],
    /// Delivered while the sun was low, kWh (≤ `delivered_kwh` every month).
    pub low_sun_delivered_kwh: [f64; 12],
    /// The load (served and unmet), kWh (zero without a load).
    pub load_kwh: [f64; 12],
    /// Load the battery could not serve, kWh (zero without a load).
    pub unmet_kwh: [f64; 12],
    /// Days with some unmet load (a mean per year for several years of weather).
    pub days_short: [f64; 12],
    /// The month with the least offered energy among the months the weather covers.
    pub worst_month: Option<usize>,
    /// Offered energy in the winter months (the three darkest of the weather file), kWh.
    pub winter_offered_kwh: f64,
    /// Days short in the winter months.
    pub winter_days_short: f64,
    /// Controller inputs with enough parallel strings to need string fuses.
    pub fused_inputs: usize,
    /// The highest cable voltage drop at STC of the layout's inputs, fraction.
    pub voltage_drop_frac: f64,
    /// Controller inputs the layout uses.
    pub controllers_used: usize,
}

fn sum(a: &[f64; 12]) -> f64 {
    a.iter().sum()
}

impl LayoutSummary {
    /// Computes the figures of one simulated layout.
    pub fn new(
        plan: &Plan,
        layout: &Layout,
        e: &LayoutEnergy,
        temps: &DesignTemperatures,
        months_present: &[bool; 12],
        winter_months: &[usize],
    ) -> Self {
        let kwh = |wh: f64| wh / 1000.0;
        let offered_kwh: [f64; 12] = std::array::from_fn(|m| kwh(e.offered_wh(m)));
        debug_assert!(
            offered_kwh.iter().all(|x| x.is_finite()) && e.all_finite(),
            "layout {}: a figure of its summary is not finite",
            layout.id
        );
        let worst_month = (0..12)
            .filter(|&m| months_present[m])
            .min_by(|&a, &b| offered_kwh[a].total_cmp(&offered_kwh[b]).then(a.cmp(&b)));
        LayoutSummary {
            offered_kwh,
            delivered_kwh: e.delivered_wh.map(kwh),
            curtailed_kwh: e.losses_wh[Step::Curtailed].map(kwh),
            low_sun_offered_kwh: e.low_sun_offered_wh.map(kwh),
            low_sun_delivered_kwh: e.low_sun_delivered_wh.map(kwh),
            load_kwh: std::array::from_fn(|m| kwh(e.load_served_wh[m] + e.unmet_wh[m])),
            unmet_kwh: e.unmet_wh.map(kwh),
            days_short: e.unmet_days_mean,
            worst_month,
            winter_offered_kwh: winter_months.iter().map(|&m| offered_kwh[m]).sum(),
            winter_days_short: winter_months.iter().map(|&m| e.unmet_days_mean[m]).sum(),
            fused_inputs: layout
                .inputs
                .iter()
                .filter(|w| w.parallel() >= FUSED_FROM_STRINGS)
                .count(),
            voltage_drop_frac: layout_voltage_drop_frac(plan, layout, temps),
            controllers_used: layout.inputs.len(),
        }
    }

    pub fn annual_offered_kwh(&self) -> f64 {
        sum(&self.offered_kwh)
    }

    pub fn annual_delivered_kwh(&self) -> f64 {
        sum(&self.delivered_kwh)
    }

    pub fn annual_curtailed_kwh(&self) -> f64 {
        sum(&self.curtailed_kwh)
    }

    pub fn annual_low_sun_offered_kwh(&self) -> f64 {
        sum(&self.low_sun_offered_kwh)
    }

    pub fn annual_low_sun_delivered_kwh(&self) -> f64 {
        sum(&self.low_sun_delivered_kwh)
    }

    pub fn annual_load_kwh(&self) -> f64 {
        sum(&self.load_kwh)
    }

    pub fn annual_unmet_kwh(&self) -> f64 {
        sum(&self.unmet_kwh)
    }

    pub fn annual_days_short(&self) -> f64 {
        sum(&self.days_short)
    }

    /// Offered energy in the worst month, kWh (0 without any month).
    pub fn worst_month_kwh(&self) -> f64 {
        self.worst_month.map_or(0.0, |m| self.offered_kwh[m])
    }
}
