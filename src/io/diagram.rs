//! The wiring diagram of one layout: its modules by id, each string in series, string fuses
//! where three or more strings share an input, the combiner, the main run, the controller
//! input and the battery, annotated with the figures the limit checks used.
//!
//! Drawn with plotters' primitives (boxes, lines, text) on any backend, so the same drawing
//! becomes SVG and PNG. A layout of our own: strings run left to right, inputs stack top to
//! bottom, everything meets at one battery on the right. It is a screening picture for the
//! person doing the work, not a construction drawing.

use crate::num::Num;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::FontStyle;

use crate::design::cautions::CAUTIONS_SHORT;
use crate::design::rules::{input_numbers, DesignTemperatures};
use crate::input::layout::Layout;
use crate::input::plan::Plan;
use crate::physics::controller::ControllerModel;

const MODULE_W: i32 = 92;
const MODULE_H: i32 = 30;
const MODULE_GAP: i32 = 22;
const ROW_H: i32 = 46;
const LEFT: i32 = 30;
const TOP: i32 = 64;
const CHECK_LINE_H: i32 = 17;
const FUSE_W: i32 = 66;
const CONTROLLER_W: i32 = 250;
const BATTERY_W: i32 = 190;

/// Hue angles (degrees in the CIELAB a*b* plane) of the orientation groups' fills, in plan
/// order: blue, orange, green, violet, yellow, rose. Our own picks, far apart in hue.
const GROUP_HUES_DEG: [f64; 6] = [250.0, 60.0, 140.0, 300.0, 95.0, 0.0];

/// The soft fill of orientation group `g` (plan order): every group at the same lightness
/// (L* 91, light enough for black text) and chroma (12), only the hue differs, so that no
/// group looks more important than another.
fn group_fill(g: usize) -> RGBColor {
    let h = GROUP_HUES_DEG[g % GROUP_HUES_DEG.len()].to_radians();
    crate::io::colour::lab_to_srgb(91.0, 12.0 * h.cos(), 12.0 * h.sin()).0
}
const INK: RGBColor = RGBColor(40, 40, 48);
const WIRE: RGBColor = RGBColor(70, 70, 80);
const MUTED: RGBColor = RGBColor(95, 95, 110);

/// One controller input as drawn.
#[derive(Clone, Debug, PartialEq)]
pub struct InputDrawing {
    /// `mppt (MPPT, 100 V / 50 A)`.
    pub name: String,
    /// Strings, each its modules in series order: (module id, group index).
    pub strings: Vec<Vec<(String, usize)>>,
    /// The string fuse rating range when three or more strings are in parallel.
    pub fuse: Option<String>,
    /// `main run 10 m, 6.0 mm² copper`.
    pub main_run: String,
    /// The figures the checks used, one line each.
    pub checks: Vec<String>,
}

/// Everything the wiring diagram shows.
#[derive(Clone, Debug, PartialEq)]
pub struct WiringDiagram {
    /// The layout's id (the file is `wiring_<id>`).
    pub id: String,
    pub title: String,
    pub inputs: Vec<InputDrawing>,
    /// Group names in plan order (the legend).
    pub groups: Vec<String>,
    pub battery: String,
}

impl WiringDiagram {
    /// The drawing of one layout of the plan.
    pub fn new(plan: &Plan, layout: &Layout, temps: &DesignTemperatures) -> Self {
        let inputs = layout
            .inputs
            .iter()
            .map(|w| {
                let c = &plan.controllers[w.controller];
                let n = input_numbers(plan, w, temps);
                let kind = match c.model {
                    ControllerModel::Mppt { .. } => "MPPT",
                    ControllerModel::Pwm { .. } => "PWM",
                };
                let run = &c.main_run;
                let mut checks = vec![
                    format!(
                        "string Voc at {:.0} °C: {:.1} V (controller max {:.0} V)",
                        temps.min_air_c, n.voc_cold_max_v, c.max_input_v
                    ),
                    format!(
                        "1.25 × Isc: {:.1} A (withstands {:.0} A, draws up to {:.0} A)",
                        n.isc_125_a, n.isc_rating_a, n.input_rating_a
                    ),
                    format!(
                        "voltage drop at STC: {:.1} % (target {:.1} %)",
                        n.voltage_drop_frac * 100.0,
                        plan.cables.voltage_drop_target_frac * 100.0
                    ),
                ];
                if n.vmp_hot_min_v.is_finite() {
                    checks.push(format!(
                        "string Vmp in full sun at {:.0} °C air: {:.1} V",
                        temps.max_air_c, n.vmp_hot_min_v
                    ));
                }
                InputDrawing {
                    name: format!(
                        "{} ({kind}, {:.0} V / {:.0} A)",
                        c.id,
                        c.max_input_v,
                        c.model.max_input_a()
                    ),
                    strings: w
                        .strings
                        .iter()
                        .map(|s| {
                            s.iter()
                                .map(|&m| (plan.modules[m].id.clone(), plan.modules[m].group))
                                .collect()
                        })
                        .collect(),
                    fuse: n
                        .fuse_range_a
                        .map(|(lo, hi)| format!("fuse {lo:.1}–{hi:.0} A")),
                    main_run: format!(
                        "main run {:.0} m, {:.1} mm² {}",
                        run.length_m,
                        run.cross_section_mm2,
                        run.conductor.name()
                    ),
                    checks,
                }
            })
            .collect();
        let battery = match &plan.battery.model {
            Some(b) => format!(
                "battery {} V, {} Ah",
                Num(b.params().nominal_v),
                Num(b.params().capacity_ah)
            ),
            None => format!("battery, charged at {} V", Num(plan.battery.charge_v)),
        };
        WiringDiagram {
            id: layout.id.clone(),
            title: format!("Wiring of {}: {}", layout.id, layout.display_name()),
            inputs,
            groups: plan.groups.iter().map(|g| g.id.clone()).collect(),
            battery,
        }
    }

    fn longest_string(&self) -> i32 {
        self.inputs
            .iter()
            .flat_map(|i| &i.strings)
            .map(Vec::len)
            .max()
            .unwrap_or(1) as i32
    }

    fn block_height(input: &InputDrawing) -> i32 {
        let strings = input.strings.len().max(1) as i32 * ROW_H;
        let checks = input.checks.len() as i32 * CHECK_LINE_H;
        24 + strings.max(90) + checks + 26
    }

    fn x_after_strings(&self) -> i32 {
        LEFT + self.longest_string() * (MODULE_W + MODULE_GAP)
    }

    /// Picture size in pixels.
    pub fn size(&self) -> (u32, u32) {
        let w = self.x_after_strings() + FUSE_W + 40 + 200 + CONTROLLER_W + 70 + BATTERY_W + 30;
        let h = TOP + self.inputs.iter().map(Self::block_height).sum::<i32>() + 70;
        (w.max(900) as u32, h as u32)
    }
}

fn font(size: f64, bold: bool) -> TextStyle<'static> {
    let style = if bold {
        FontStyle::Bold
    } else {
        FontStyle::Normal
    };
    ("sans-serif", size, style).into_font().color(&INK)
}

/// A filled box with an ink outline `outline_px` wide.
fn boxed<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    a: (i32, i32),
    b: (i32, i32),
    fill: RGBColor,
    outline_px: u32,
) -> Result<(), String> {
    root.draw(&Rectangle::new([a, b], fill.filled()))
        .and_then(|()| root.draw(&Rectangle::new([a, b], INK.stroke_width(outline_px))))
        .map_err(|e| e.to_string())
}

/// Draws the diagram.
///
/// # Errors
/// The backend's drawing errors, as text.
pub fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    d: &WiringDiagram,
) -> Result<(), String> {
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| e.to_string();
    let text = |s: &str, x: i32, y: i32, f: TextStyle<'static>| Text::new(s.to_string(), (x, y), f);
    let line = |a: (i32, i32), b: (i32, i32)| PathElement::new(vec![a, b], WIRE.stroke_width(2));
    root.draw(&text(&d.title, LEFT, 16, font(20.0, true)))
        .map_err(err)?;
    // Legend of the groups.
    let mut lx = LEFT;
    for (g, name) in d.groups.iter().enumerate() {
        let fill = group_fill(g);
        boxed(root, (lx, 42), (lx + 14, 54), fill, 1)?;
        root.draw(&text(
            &format!("group {name}"),
            lx + 20,
            41,
            font(13.0, false),
        ))
        .map_err(err)?;
        lx += 40 + 9 * name.chars().count() as i32 + 50;
    }
    let x_strings_end = d.x_after_strings();
    let x_fuse = x_strings_end + 6;
    let x_bus = x_fuse + FUSE_W + 34;
    let x_ctl = x_bus + 200;
    let x_bat = x_ctl + CONTROLLER_W + 70;
    let mut y = TOP;
    let mut controller_mids = Vec::new();
    for input in &d.inputs {
        let block_h = WiringDiagram::block_height(input);
        root.draw(&text(
            &format!("input {}", input.name),
            LEFT,
            y,
            font(15.0, true),
        ))
        .map_err(err)?;
        let y0 = y + 24;
        let mut string_mids = Vec::new();
        for (si, string) in input.strings.iter().enumerate() {
            let ym = y0 + si as i32 * ROW_H + MODULE_H / 2;
            root.draw(&text(&format!("S{}", si + 1), 4, ym - 8, font(13.0, true)))
                .map_err(err)?;
            let mut x = LEFT;
            for (k, (module, group)) in string.iter().enumerate() {
                let fill = group_fill(*group);
                let (a, b) = ((x, ym - MODULE_H / 2), (x + MODULE_W, ym + MODULE_H / 2));
                boxed(root, a, b, fill, 1)?;
                root.draw(&text(module, x + 6, ym - 8, font(13.0, false)))
                    .map_err(err)?;
                if k + 1 < string.len() {
                    root.draw(&line((x + MODULE_W, ym), (x + MODULE_W + MODULE_GAP, ym)))
                        .map_err(err)?;
                }
                x += MODULE_W + MODULE_GAP;
            }
            // The string lead to the combiner, through a fuse where one is needed.
            let x_end = x - MODULE_GAP;
            match &input.fuse {
                Some(f) => {
                    root.draw(&line((x_end, ym), (x_fuse, ym))).map_err(err)?;
                    let (a, b) = ((x_fuse, ym - 9), (x_fuse + FUSE_W, ym + 9));
                    boxed(root, a, b, WHITE, 1)?;
                    root.draw(&text(f, x_fuse + 3, ym - 7, font(10.0, false)))
                        .map_err(err)?;
                    root.draw(&line((x_fuse + FUSE_W, ym), (x_bus, ym)))
                        .map_err(err)?;
                }
                None => root.draw(&line((x_end, ym), (x_bus, ym))).map_err(err)?,
            }
            string_mids.push(ym);
        }
        // The combiner: a bar joining the strings in parallel.
        let (top, bottom) = (
            string_mids.first().copied().unwrap_or(y0) - 6,
            string_mids.last().copied().unwrap_or(y0) + 6,
        );
        root.draw(&Rectangle::new(
            [(x_bus, top), (x_bus + 6, bottom)],
            INK.filled(),
        ))
        .map_err(err)?;
        let label = if input.strings.len() > 1 {
            format!("{} strings in parallel", input.strings.len())
        } else {
            "one string".to_string()
        };
        root.draw(&text(
            &label,
            x_bus - 20,
            bottom + 6,
            font(11.0, false).color(&MUTED),
        ))
        .map_err(err)?;
        // The main run to the controller input.
        let y_mid = (top + bottom) / 2;
        let y_ctl = y_mid.max(y0 + 35);
        root.draw(&line((x_bus + 6, y_mid), (x_bus + 30, y_mid)))
            .map_err(err)?;
        root.draw(&line((x_bus + 30, y_mid), (x_bus + 30, y_ctl)))
            .map_err(err)?;
        root.draw(&line((x_bus + 30, y_ctl), (x_ctl, y_ctl)))
            .map_err(err)?;
        root.draw(&text(
            &input.main_run,
            x_bus + 36,
            y_ctl - 18,
            font(11.0, false),
        ))
        .map_err(err)?;
        let (a, b) = ((x_ctl, y_ctl - 35), (x_ctl + CONTROLLER_W, y_ctl + 35));
        boxed(root, a, b, RGBColor(245, 245, 248), 2)?;
        root.draw(&text(
            "controller input",
            x_ctl + 10,
            y_ctl - 28,
            font(12.0, false).color(&MUTED),
        ))
        .map_err(err)?;
        root.draw(&text(&input.name, x_ctl + 10, y_ctl - 9, font(14.0, true)))
            .map_err(err)?;
        controller_mids.push(y_ctl);
        // The figures the checks used.
        let mut yc = y0 + (input.strings.len().max(1) as i32 * ROW_H).max(90) + 4;
        for c in &input.checks {
            root.draw(&text(c, LEFT, yc, font(12.0, false).color(&MUTED)))
                .map_err(err)?;
            yc += CHECK_LINE_H;
        }
        y += block_h;
    }
    // The battery, fed by every controller.
    let (bt, bb) = (
        controller_mids.first().copied().unwrap_or(TOP) - 35,
        controller_mids.last().copied().unwrap_or(TOP) + 35,
    );
    for &yc in &controller_mids {
        root.draw(&line((x_ctl + CONTROLLER_W, yc), (x_bat, yc)))
            .map_err(err)?;
    }
    boxed(
        root,
        (x_bat, bt),
        (x_bat + BATTERY_W, bb),
        RGBColor(232, 240, 232),
        2,
    )?;
    root.draw(&text(
        &d.battery,
        x_bat + 10,
        (bt + bb) / 2 - 8,
        font(14.0, true),
    ))
    .map_err(err)?;
    root.draw(&text(CAUTIONS_SHORT, LEFT, y + 20, font(12.0, false)))
        .map_err(err)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn group_fills_are_light_in_gamut_and_distinct() {
        // Source: common practice, no source (our design rule: fills light enough for black
        // text, inside sRGB, and told apart by hue).
        for (g, &h) in GROUP_HUES_DEG.iter().enumerate() {
            let h = h.to_radians();
            let (c, inside) = crate::io::colour::lab_to_srgb(91.0, 12.0 * h.cos(), 12.0 * h.sin());
            assert!(inside, "group {g}: {c:?} outside sRGB");
            let luma = 0.299 * c.0 as f64 + 0.587 * c.1 as f64 + 0.114 * c.2 as f64;
            assert!(luma > 215.0, "group {g}: {c:?} too dark for black text");
            for k in 0..g {
                assert_ne!(group_fill(k), group_fill(g), "groups {k} and {g}");
            }
        }
    }
}
