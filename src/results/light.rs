//! Sums over months and the year: light per orientation group (phase 1), and the groups
//! whose plane gets far less light than the horizontal.
//!
//! Pure bookkeeping: no physics and no formatting.

use crate::sim::conditions::Conditions;

/// Light and temperature on one orientation group, month by month (January first).
#[derive(Clone, Debug, PartialEq)]
pub struct GroupMonthly {
    pub group: String,
    /// Plane-of-array insolation before any loss, kWh/m².
    pub poa_kwh_m2: [f64; 12],
    /// Plane-of-array insolation after incidence-angle losses, kWh/m².
    pub after_iam_kwh_m2: [f64; 12],
    /// Mean cell temperature over the intervals with light on the plane, °C (NaN without any).
    pub mean_daytime_cell_c: [f64; 12],
}

impl GroupMonthly {
    /// Scales the insolation sums to a mean year (temperatures are means already).
    pub fn scale(&mut self, factor: f64) {
        self.poa_kwh_m2.iter_mut().for_each(|x| *x *= factor);
        self.after_iam_kwh_m2.iter_mut().for_each(|x| *x *= factor);
    }

    /// Share of the plane-of-array light lost to incidence angle in a month, fraction.
    pub fn iam_loss_frac(&self, month_index: usize) -> f64 {
        let poa = self.poa_kwh_m2[month_index];
        if poa > 0.0 {
            1.0 - self.after_iam_kwh_m2[month_index] / poa
        } else {
            0.0
        }
    }
}

/// Horizontal insolation per month from the weather rows, kWh/m² (January first).
pub fn horizontal_monthly_kwh_m2(c: &Conditions) -> [f64; 12] {
    let mut out = [0.0; 12];
    for i in &c.intervals {
        out[(i.month - 1) as usize] += i.ghi_w_m2 * i.hours / 1000.0;
    }
    out
}

/// Which months the weather covers (any interval in them).
pub fn months_present(c: &Conditions) -> [bool; 12] {
    let mut out = [false; 12];
    for i in &c.intervals {
        out[(i.month - 1) as usize] = true;
    }
    out
}

/// Per orientation group: monthly plane-of-array insolation, incidence losses and daytime cell
/// temperature.
pub fn group_monthly(c: &Conditions, group_ids: &[String]) -> Vec<GroupMonthly> {
    c.groups
        .iter()
        .zip(group_ids)
        .map(|(g, id)| {
            let mut poa = [0.0; 12];
            let mut after = [0.0; 12];
            let mut t_sum = [0.0; 12];
            let mut t_n = [0usize; 12];
            for (k, info) in c.intervals.iter().enumerate() {
                let m = (info.month - 1) as usize;
                let e = g.poa[k].total_w_m2();
                poa[m] += e * info.hours / 1000.0;
                after[m] += g.after_iam_w_m2[k] as f64 * info.hours / 1000.0;
                if e > 0.0 {
                    t_sum[m] += g.cell_temp_c[k];
                    t_n[m] += 1;
                }
            }
            let mut mean = [f64::NAN; 12];
            for m in 0..12 {
                if t_n[m] > 0 {
                    mean[m] = t_sum[m] / t_n[m] as f64;
                }
            }
            GroupMonthly {
                group: id.clone(),
                poa_kwh_m2: poa,
                after_iam_kwh_m2: after,
                mean_daytime_cell_c: mean,
            }
        })
        .collect()
}

/// A group whose plane gets less than this fraction of the horizontal insolation over the
/// year is flagged: a tilted plane facing the equator gets more than the horizontal at most
/// latitudes, so well below it usually means it faces away (or its azimuth was written
/// from the south instead of from the north). Common practice, no source.
pub const FACING_AWAY_FRAC: f64 = 0.8;

/// The groups whose yearly plane insolation is below [`FACING_AWAY_FRAC`] of the
/// horizontal: (group id, plane / horizontal).
pub fn facing_away(light: &[GroupMonthly], horizontal_kwh_m2: &[f64; 12]) -> Vec<(String, f64)> {
    let h: f64 = horizontal_kwh_m2.iter().sum();
    if h <= 0.0 {
        return Vec::new();
    }
    light
        .iter()
        .filter_map(|g| {
            let ratio = g.poa_kwh_m2.iter().sum::<f64>() / h;
            (ratio < FACING_AWAY_FRAC).then(|| (g.group.clone(), ratio))
        })
        .collect()
}
