//! Why one layout gets less than another: the difference in energy split by cause, so that
//! the report explains a ranking in the terms the user decides on (the wiring, the
//! controller, the battery), not only as one layout's loss steps.

use crate::sim::energy::{LayoutEnergy, Step};

/// Why one layout's energy differs from another's: the causes of the difference, kWh a year
/// (positive when the compared layout gets more). They add up to the difference in delivered
/// energy; all but [`Cause::Curtailment`] add up to the difference in offered energy.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Cause {
    /// Light reaching the wired modules' cells: more or fewer modules, other orientations
    /// (incidence angle and soiling included).
    Light,
    /// Shade on the strings (horizon, obstacles, schedule).
    Shade,
    /// Cell temperature and weak light.
    HeatLowLight,
    /// Mismatch between modules, strings and orientations wired together.
    Mismatch,
    /// Cable (Joule) loss.
    Cables,
    /// An MPPT controller's start-up threshold and voltage window.
    StartupWindow,
    /// A PWM controller holding the array at battery voltage.
    PwmClamp,
    /// The controller's input-current limit.
    InputLimit,
    /// The controller's output (charge current) limit.
    Clipping,
    /// Conversion in the controller.
    Conversion,
    /// What a full battery turned away.
    Curtailment,
}

impl Cause {
    pub const ALL: [Cause; 11] = [
        Cause::Light,
        Cause::Shade,
        Cause::HeatLowLight,
        Cause::Mismatch,
        Cause::Cables,
        Cause::StartupWindow,
        Cause::PwmClamp,
        Cause::InputLimit,
        Cause::Clipping,
        Cause::Conversion,
        Cause::Curtailment,
    ];

    /// Key in JSON and CSV.
    pub fn key(self) -> &'static str {
        match self {
            Cause::Light => "light_on_wired_modules",
            Cause::Shade => "shade",
            Cause::HeatLowLight => "heat_and_low_light",
            Cause::Mismatch => "mismatch",
            Cause::Cables => "cables",
            Cause::StartupWindow => "startup_and_window",
            Cause::PwmClamp => "pwm_clamp",
            Cause::InputLimit => "input_current_limit",
            Cause::Clipping => "output_clipping",
            Cause::Conversion => "conversion",
            Cause::Curtailment => "full_battery",
        }
    }

    /// Words for the explanation line.
    pub fn words(self) -> &'static str {
        match self {
            Cause::Light => "light on the wired modules",
            Cause::Shade => "shade on the strings",
            Cause::HeatLowLight => "heat and weak light",
            Cause::Mismatch => "mismatch between strings and orientations",
            Cause::Cables => "cables",
            Cause::StartupWindow => "controller start-up and voltage window",
            Cause::PwmClamp => "PWM holding strings at battery voltage",
            Cause::InputLimit => "controller input-current limit",
            Cause::Clipping => "output clipping",
            Cause::Conversion => "conversion",
            Cause::Curtailment => "a full battery turning energy away",
        }
    }

    /// This cause's share of a layout's delivered energy over the year, Wh (light counted
    /// positive, every loss negative), so that differences of shares are differences of
    /// delivered energy.
    fn share_wh(self, e: &LayoutEnergy) -> f64 {
        let total = |s: Step| e.step_total_wh(s);
        let pwm: f64 = e.pwm_clamp_wh.iter().sum();
        match self {
            Cause::Light => {
                e.potential_wh.iter().sum::<f64>() - total(Step::Incidence) - total(Step::Soiling)
            }
            Cause::Shade => -total(Step::Shading),
            Cause::HeatLowLight => -total(Step::TemperatureLowLight),
            Cause::Mismatch => -total(Step::Mismatch),
            Cause::Cables => -total(Step::Cables),
            Cause::StartupWindow => -(total(Step::WindowStartup) - pwm),
            Cause::PwmClamp => -pwm,
            Cause::InputLimit => -total(Step::InputLimit),
            Cause::Clipping => -total(Step::Clipping),
            Cause::Conversion => -total(Step::Conversion),
            Cause::Curtailment => -total(Step::Curtailed),
        }
    }
}

/// `b` − `a` by cause, kWh a year, in [`Cause::ALL`] order.
pub fn difference_by_cause(a: &LayoutEnergy, b: &LayoutEnergy) -> Vec<(Cause, f64)> {
    Cause::ALL
        .iter()
        .map(|&c| (c, (c.share_wh(b) - c.share_wh(a)) / 1000.0))
        .collect()
}

/// The totals a difference by cause adds up to: (offered, delivered), kWh a year. Every
/// cause counts towards delivered energy; all but the full battery towards offered energy.
pub fn totals(diff: &[(Cause, f64)]) -> (f64, f64) {
    let offered = diff
        .iter()
        .filter(|(c, _)| *c != Cause::Curtailment)
        .map(|(_, v)| v)
        .sum();
    let delivered = diff.iter().map(|(_, v)| v).sum();
    (offered, delivered)
}

/// The difference as one line a person reads, e.g. `−41.0 kWh offered a year: 39.0 more lost
/// to PWM holding strings at battery voltage, 4.0 more to cables, 2.0 less to mismatch`.
/// Causes below 0.05 kWh are left out; the largest come first.
pub fn difference_line(diff: &[(Cause, f64)]) -> String {
    let (offered, delivered) = totals(diff);
    let mut parts: Vec<&(Cause, f64)> = diff.iter().filter(|(_, v)| v.abs() >= 0.05).collect();
    parts.sort_by(|x, y| y.1.abs().total_cmp(&x.1.abs()));
    let words: Vec<String> = parts
        .iter()
        .map(|(c, v)| match c {
            Cause::Light if *v < 0.0 => format!("{:.1} less {}", -v, c.words()),
            Cause::Light => format!("{v:.1} more {}", c.words()),
            _ if *v < 0.0 => format!("{:.1} more lost to {}", -v, c.words()),
            _ => format!("{v:.1} less lost to {}", c.words()),
        })
        .collect();
    let head = format!("{offered:+.1} kWh offered, {delivered:+.1} kWh delivered a year");
    if words.is_empty() {
        head
    } else {
        format!("{head}: {}", words.join(", "))
    }
}
