//! Candidate wirings: from the plan's listed layouts, with readable names.
//!
//! A layout assigns modules to controller inputs as parallel strings of modules in series.
//! This module builds and names layouts; it does not simulate or check them.

use crate::input::plan::{LayoutSpec, Plan};

/// The strings wired to one controller input.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct InputWiring {
    /// Index into `Plan::controllers`.
    pub controller: usize,
    /// Parallel strings, each an ordered list of module indices in series.
    pub strings: Vec<Vec<usize>>,
}

impl InputWiring {
    /// Modules in series per string.
    pub fn series(&self) -> usize {
        self.strings.first().map_or(0, Vec::len)
    }

    /// Strings in parallel.
    pub fn parallel(&self) -> usize {
        self.strings.len()
    }
}

/// One candidate wiring of the array.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Layout {
    /// Short unique id of the candidate in this run: `L1`, `L2`, … for the plan's listed
    /// layouts in plan order, `E1`, `E2`, … for enumerated ones in enumeration order. The
    /// join key of every output file.
    pub id: String,
    /// Readable code: `3s2p`, or `mppt:3s2p + pwm:1s2p` with several inputs.
    pub code: String,
    /// The plan's own name for it, if any.
    pub label: Option<String>,
    pub inputs: Vec<InputWiring>,
    /// Modules wired (of the plan's total).
    pub modules_used: usize,
    /// A string mixes modules of different orientation groups.
    pub mixed_orientation: bool,
}

/// One module's place in a layout: which controller input, which string (1-based), which
/// position along the string (1-based, from the string's first module), and the module's
/// id and orientation group. What an installer builds from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WiringRow {
    pub input: String,
    pub string: usize,
    pub position: usize,
    pub module: String,
    pub group: String,
}

impl Layout {
    /// Every wired module's place, input by input and string by string.
    pub fn wiring_rows(&self, plan: &Plan) -> Vec<WiringRow> {
        let mut rows = Vec::with_capacity(self.modules_used);
        for w in &self.inputs {
            for (si, st) in w.strings.iter().enumerate() {
                for (pi, &m) in st.iter().enumerate() {
                    let module = &plan.modules[m];
                    rows.push(WiringRow {
                        input: plan.controllers[w.controller].id.clone(),
                        string: si + 1,
                        position: pi + 1,
                        module: module.id.clone(),
                        group: plan.groups[module.group].id.clone(),
                    });
                }
            }
        }
        rows
    }

    /// The wiring with the order of modules in a string and of strings on an input ignored
    /// (neither changes the electrical result): used to spot the same layout reached twice.
    pub fn canonical(&self) -> Vec<(usize, Vec<Vec<usize>>)> {
        self.inputs
            .iter()
            .map(|w| {
                let mut strings: Vec<Vec<usize>> = w
                    .strings
                    .iter()
                    .map(|s| {
                        let mut s = s.clone();
                        s.sort_unstable();
                        s
                    })
                    .collect();
                strings.sort();
                (w.controller, strings)
            })
            .collect()
    }

    /// Name for tables: the plan's label with the code, or the code.
    pub fn display_name(&self) -> String {
        match &self.label {
            Some(l) => format!("{l} [{}]", self.code),
            None => self.code.clone(),
        }
    }
}

/// Readable code of a layout: `{s}s{p}p` per input, prefixed by the input's id when the plan
/// has more than one controller input.
pub fn layout_code(plan: &Plan, inputs: &[InputWiring]) -> String {
    let many = plan.controllers.len() > 1;
    inputs
        .iter()
        .map(|w| {
            let mut sp = format!("{}s{}p", w.series(), w.parallel());
            if plan.groups.len() > 1 {
                sp.push_str(&group_mix(plan, w));
            }
            if many {
                format!("{}:{sp}", plan.controllers[w.controller].id)
            } else {
                sp
            }
        })
        .collect::<Vec<_>>()
        .join(" + ")
}

/// Which orientation groups an input's strings come from, e.g. `[south×2 west×1]`, or
/// `[south+west×2]` for strings that mix groups.
fn group_mix(plan: &Plan, w: &InputWiring) -> String {
    let mut kinds: Vec<(String, usize)> = Vec::new();
    for s in &w.strings {
        let mut groups: Vec<usize> = s.iter().map(|&m| plan.modules[m].group).collect();
        groups.sort_unstable();
        groups.dedup();
        let name = groups
            .iter()
            .map(|&g| plan.groups[g].id.as_str())
            .collect::<Vec<_>>()
            .join("+");
        match kinds.iter_mut().find(|(n, _)| *n == name) {
            Some((_, k)) => *k += 1,
            None => kinds.push((name, 1)),
        }
    }
    let parts: Vec<String> = kinds.iter().map(|(n, k)| format!("{n}×{k}")).collect();
    format!("[{}]", parts.join(" "))
}

/// Builds a layout from input wirings, naming it and noting mixed orientations.
pub fn make_layout(plan: &Plan, label: Option<String>, mut inputs: Vec<InputWiring>) -> Layout {
    inputs.sort_by_key(|w| w.controller);
    let modules_used = inputs.iter().flat_map(|w| &w.strings).map(Vec::len).sum();
    let mixed_orientation = inputs.iter().flat_map(|w| &w.strings).any(|s| {
        s.iter()
            .any(|&m| plan.modules[m].group != plan.modules[s[0]].group)
    });
    Layout {
        id: String::new(),
        code: layout_code(plan, &inputs),
        label,
        inputs,
        modules_used,
        mixed_orientation,
    }
}

/// The layouts the plan lists, in plan order.
pub fn listed(plan: &Plan) -> Vec<Layout> {
    plan.layouts
        .iter()
        .map(|spec| from_spec(plan, spec))
        .collect()
}

fn from_spec(plan: &Plan, spec: &LayoutSpec) -> Layout {
    let inputs = spec
        .inputs
        .iter()
        .map(|(c, strings)| InputWiring {
            controller: *c,
            strings: strings.clone(),
        })
        .collect();
    make_layout(plan, spec.name.clone(), inputs)
}
