//! What a layout's year produced: energy per month, the loss steps (an enum-indexed array),
//! the battery's figures and, when asked, one row per interval.

/// The loss steps of notebooks-free-docs/method-accounting.md, in order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Step {
    Incidence,
    Soiling,
    Shading,
    TemperatureLowLight,
    Mismatch,
    Cables,
    WindowStartup,
    InputLimit,
    Clipping,
    Conversion,
    /// Harvest the battery could not take (full) beyond what the load used.
    Curtailed,
}

/// Number of loss steps.
pub const STEPS: usize = 11;

impl Step {
    pub const ALL: [Step; STEPS] = [
        Step::Incidence,
        Step::Soiling,
        Step::Shading,
        Step::TemperatureLowLight,
        Step::Mismatch,
        Step::Cables,
        Step::WindowStartup,
        Step::InputLimit,
        Step::Clipping,
        Step::Conversion,
        Step::Curtailed,
    ];

    /// Key used in JSON and CSV.
    pub fn key(self) -> &'static str {
        match self {
            Step::Incidence => "incidence",
            Step::Soiling => "soiling",
            Step::Shading => "shading",
            Step::TemperatureLowLight => "temperature_low_light",
            Step::Mismatch => "mismatch",
            Step::Cables => "cables",
            Step::WindowStartup => "window_startup",
            Step::InputLimit => "input_limit",
            Step::Clipping => "clipping",
            Step::Conversion => "conversion",
            Step::Curtailed => "curtailed",
        }
    }
}

/// Who decides a loss step: where the modules are (the site), how they are wired and into
/// which controller (the wiring), or how much the battery can take (the battery).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DecidedBy {
    /// Angle of incidence, dirt and snow, shade, heat and weak light.
    Site,
    /// Mismatch, cables, the controller's start-up and window (a PWM clamp included), its
    /// input-current limit, output clipping and conversion.
    Wiring,
    /// What a full battery turned away.
    Battery,
}

impl DecidedBy {
    pub const ALL: [DecidedBy; 3] = [DecidedBy::Site, DecidedBy::Wiring, DecidedBy::Battery];

    /// Key used in CSV.
    pub fn key(self) -> &'static str {
        match self {
            DecidedBy::Site => "site",
            DecidedBy::Wiring => "wiring",
            DecidedBy::Battery => "battery",
        }
    }
}

impl Step {
    /// Who decides this step's loss.
    pub fn decided_by(self) -> DecidedBy {
        match self {
            Step::Incidence | Step::Soiling | Step::Shading | Step::TemperatureLowLight => {
                DecidedBy::Site
            }
            Step::Mismatch
            | Step::Cables
            | Step::WindowStartup
            | Step::InputLimit
            | Step::Clipping
            | Step::Conversion => DecidedBy::Wiring,
            Step::Curtailed => DecidedBy::Battery,
        }
    }
}

/// One value per loss step, indexed by [`Step`] (never by a bare number).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PerStep<T>([T; STEPS]);

impl<T> std::ops::Index<Step> for PerStep<T> {
    type Output = T;
    fn index(&self, step: Step) -> &T {
        &self.0[step as usize]
    }
}

impl<T> std::ops::IndexMut<Step> for PerStep<T> {
    fn index_mut(&mut self, step: Step) -> &mut T {
        &mut self.0[step as usize]
    }
}

/// One layout's energy over the run, month by month (January first), Wh.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LayoutEnergy {
    /// Plane-of-array light on the wired modules × their STC efficiency: the sunlight on the
    /// modules at datasheet efficiency, where the accounting starts.
    pub potential_wh: [f64; 12],
    /// Energy lost at each step (index = `Step::ALL` order). A negative value is a gain
    /// (cells colder than 25 °C).
    pub losses_wh: PerStep<[f64; 12]>,
    /// Delivered by the controllers to the battery and the load (without a battery model:
    /// to the battery at its fixed charging voltage).
    pub delivered_wh: [f64; 12],
    /// With a load: the load served (from harvest and battery), Wh.
    pub load_served_wh: [f64; 12],
    /// With a load: the part of it served straight from the harvest, Wh.
    pub load_from_harvest_wh: [f64; 12],
    /// With a load: load the battery could not serve (at its floor), Wh.
    pub unmet_wh: [f64; 12],
    /// With a load: days with some unmet load.
    pub unmet_days: [u32; 12],
    /// Days with some unmet load per mean year (equal to `unmet_days` for one year).
    pub unmet_days_mean: [f64; 12],
    /// With a battery model: the lowest state of charge reached, fraction (NaN without).
    pub min_soc_frac: [f64; 12],
    /// With a battery model: state of charge at the end of each local day (for the plot).
    pub daily_soc_frac: Vec<f64>,
    /// Offered by the controllers while the sun was low (above 0°, below the plan's
    /// threshold), before a full battery turned any of it away.
    pub low_sun_offered_wh: [f64; 12],
    /// Delivered to the battery and the load while the sun was low (offered less curtailed).
    pub low_sun_delivered_wh: [f64; 12],
    /// The part of the window/start-up step lost on PWM inputs: the array held at battery
    /// voltage instead of its maximum power point.
    pub pwm_clamp_wh: [f64; 12],
    /// Hours with at least one controller input awake.
    pub awake_h: [f64; 12],
    /// Delivered with the other MPPT tracking behaviour on every MPPT input (local instead of
    /// global, or global instead of local); PWM inputs count as they are.
    pub other_tracking_wh: [f64; 12],
    /// One row per weather interval, when asked for (`--hourly`); empty otherwise.
    pub hourly: Vec<HourRow>,
    /// Delivered per calendar year of the weather file: (year, hours covered, Wh).
    pub yearly: Vec<(i32, f64, f64)>,
    /// Per controller input of the layout (in its order): its own share of the loss steps
    /// the limit warnings are priced with.
    pub inputs: Vec<InputLosses>,
    /// The highest charge current the controllers offered in one interval (their summed
    /// output power / the battery's charging voltage), A.
    pub peak_charge_a: f64,
    /// With a battery model: harvest turned away because the air was below the battery's
    /// charging cut-off (part of the curtailed step), Wh.
    pub cold_blocked_wh: [f64; 12],
    /// With a load: load the battery held but could not give within its discharge rate
    /// (part of `unmet_wh`), Wh.
    pub rate_unmet_wh: [f64; 12],
}

/// One controller input's own share of some loss steps over the run, Wh (the limit warnings
/// say what their condition cost from these).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct InputLosses {
    /// Window and start-up step: the array's maximum lay below the MPPT window.
    pub below_window_wh: f64,
    /// Window and start-up step: the array's maximum lay above the MPPT window.
    pub above_window_wh: f64,
    /// Window and start-up step on a PWM input: the array held at battery voltage.
    pub pwm_clamp_wh: f64,
    /// Input-limit step: current above what the controller draws.
    pub input_limit_wh: f64,
    /// Clipping step: the output current reduced by the controller's temperature derating.
    pub derating_wh: f64,
    /// Cables step: this input's string leads and main run.
    pub cables_wh: f64,
    /// The highest array current at the point the controller tracked, before its input
    /// limit, A.
    pub highest_tracked_a: f64,
}

impl InputLosses {
    /// Books one interval (`wh` hours long) of this input: its controller's powers and its
    /// cables' Joule loss, W.
    pub fn book(
        &mut self,
        p: &crate::physics::controller::ControllerPowers,
        cables_w: f64,
        wh: f64,
    ) {
        self.below_window_wh += p.below_window_w * wh;
        self.above_window_wh += p.above_window_w * wh;
        self.pwm_clamp_wh += p.clamp_w * wh;
        self.input_limit_wh += (p.after_window_w - p.after_input_limit_w) * wh;
        self.derating_wh += p.derated_w * wh;
        self.cables_wh += cables_w * wh;
        self.highest_tracked_a = self.highest_tracked_a.max(p.tracked_a);
    }
}

impl LayoutEnergy {
    /// Books one controller input's interval (`wh` hours long): its controller's powers and
    /// its cables' Joule loss, W.
    pub fn book_input(
        &mut self,
        input: usize,
        p: &crate::physics::controller::ControllerPowers,
        cables_w: f64,
        wh: f64,
    ) {
        if self.inputs.len() <= input {
            self.inputs.resize(input + 1, InputLosses::default());
        }
        self.inputs[input].book(p, cables_w, wh);
    }
}

impl LayoutEnergy {
    /// True when every figure is a finite number (`min_soc_frac` may also be NaN, its mark
    /// for "no battery model" or a month without intervals). Validated inputs have finite
    /// ranges, so any other value that is not finite is a bug; the simulation checks this in
    /// debug builds.
    pub fn all_finite(&self) -> bool {
        let months = [
            &self.potential_wh,
            &self.delivered_wh,
            &self.load_served_wh,
            &self.load_from_harvest_wh,
            &self.unmet_wh,
            &self.unmet_days_mean,
            &self.low_sun_offered_wh,
            &self.low_sun_delivered_wh,
            &self.pwm_clamp_wh,
            &self.awake_h,
            &self.other_tracking_wh,
        ];
        months.iter().all(|m| m.iter().all(|x| x.is_finite()))
            && self
                .min_soc_frac
                .iter()
                .all(|x| x.is_finite() || x.is_nan())
            && self.losses_wh.0.iter().flatten().all(|x| x.is_finite())
            && self.daily_soc_frac.iter().all(|x| x.is_finite())
            && self.hourly.iter().all(|h| {
                [
                    h.potential_w,
                    h.available_w,
                    h.delivered_w,
                    h.harvest_w,
                    h.clipped_w,
                ]
                .iter()
                .all(|x| x.is_finite())
            })
            && self
                .yearly
                .iter()
                .all(|(_, a, b)| a.is_finite() && b.is_finite())
    }

    /// Annual totals of the calendar years the weather file covers completely, kWh.
    pub fn complete_year_totals_kwh(&self) -> Vec<f64> {
        self.yearly
            .iter()
            .filter(|(_, h, _)| *h >= 8759.0)
            .map(|(_, _, wh)| wh / 1000.0)
            .collect()
    }
}

/// One layout in one interval, for the hourly export (powers are interval means, W).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct HourRow {
    /// Light on the wired modules × STC efficiency.
    pub potential_w: f32,
    /// Best power the array offers at the controller terminals.
    pub available_w: f32,
    /// Delivered to the battery and the load (after curtailment by a full battery).
    pub delivered_w: f32,
    /// What the controllers offered before any curtailment.
    pub harvest_w: f32,
    /// Lost to output clipping.
    pub clipped_w: f32,
    /// At least one controller input awake.
    pub awake: bool,
}

impl LayoutEnergy {
    /// What the controllers offered in a month (delivered plus what a full battery turned
    /// away), Wh.
    pub fn offered_wh(&self, month_index: usize) -> f64 {
        self.delivered_wh[month_index] + self.losses_wh[Step::Curtailed][month_index]
    }

    /// Offered over the run, kWh.
    pub fn annual_offered_kwh(&self) -> f64 {
        (0..12).map(|m| self.offered_wh(m)).sum::<f64>() / 1000.0
    }

    /// Every monthly total of a weather file of several years scaled to the mean year
    /// (`factor` = 8760 h / hours covered); hourly rows, daily states of charge and the
    /// per-year tallies keep the file's own values.
    pub fn scale_to_mean_year(&mut self, factor: f64) {
        let scale = |a: &mut [f64; 12]| a.iter_mut().for_each(|x| *x *= factor);
        scale(&mut self.potential_wh);
        for s in Step::ALL {
            scale(&mut self.losses_wh[s]);
        }
        scale(&mut self.delivered_wh);
        scale(&mut self.load_served_wh);
        scale(&mut self.load_from_harvest_wh);
        scale(&mut self.unmet_wh);
        scale(&mut self.low_sun_offered_wh);
        scale(&mut self.low_sun_delivered_wh);
        scale(&mut self.pwm_clamp_wh);
        scale(&mut self.awake_h);
        scale(&mut self.other_tracking_wh);
        scale(&mut self.unmet_days_mean);
        scale(&mut self.cold_blocked_wh);
        scale(&mut self.rate_unmet_wh);
        for x in &mut self.inputs {
            for v in [
                &mut x.below_window_wh,
                &mut x.above_window_wh,
                &mut x.pwm_clamp_wh,
                &mut x.input_limit_wh,
                &mut x.derating_wh,
                &mut x.cables_wh,
            ] {
                *v *= factor;
            }
        }
    }

    pub fn annual_delivered_kwh(&self) -> f64 {
        self.delivered_wh.iter().sum::<f64>() / 1000.0
    }

    pub fn monthly_kwh(&self) -> [f64; 12] {
        self.delivered_wh.map(|w| w / 1000.0)
    }

    /// One step's loss in one month (index 0 = January), Wh.
    pub fn step_total_wh_month(&self, step: Step, month_index: usize) -> f64 {
        self.losses_wh[step][month_index]
    }

    /// One step's loss over the run, Wh.
    pub fn step_total_wh(&self, step: Step) -> f64 {
        self.losses_wh[step].iter().sum()
    }
}
