//! Candidate wirings: from the plan's listed layouts, with readable names.
//!
//! A layout assigns modules to controller inputs as parallel strings of modules in series.
//! This module builds and names layouts; it does not simulate or check them.

use crate::plan::{LayoutSpec, Plan};

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

impl Layout {
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

/// What enumeration may do beyond the plain rule (each input p parallel strings of s modules,
/// every module used, strings within one orientation group).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct EnumerateOptions {
    /// Leave some modules unwired.
    pub allow_unused_modules: bool,
    /// Strings that combine modules of several orientation groups.
    pub allow_mixed_orientation: bool,
}

/// Input choices skipped by enumeration, counted per broken rule.
pub type PrunedCounts = Vec<(&'static str, usize)>;

/// Largest number of candidates enumeration will produce before giving up.
pub const MAX_CANDIDATES: usize = 20_000;

/// Why enumeration stopped.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TooManyLayouts {
    pub limit: usize,
}

/// One input's strings as counts: `composition[g]` modules of group g per string.
#[derive(Clone, Debug, PartialEq, Eq, PartialOrd, Ord)]
struct InputChoice {
    series: usize,
    /// Per group of strings: (strings, per-group module counts of each such string).
    string_kinds: Vec<(usize, Vec<usize>)>,
}

/// Every way to wire the plan's modules (notebooks-free-docs/method-wiring.md, issue "every wiring"): each controller
/// input carries either nothing or p parallel strings of s modules; at least one input is
/// used. Strings take their modules from one orientation group; with
/// `allow_mixed_orientation`, an input may also carry strings that all share one mixed
/// composition. Modules of a group are taken in id order (they differ only by the shade
/// schedule). Each distinct assignment appears once.
///
/// # Errors
/// More than [`MAX_CANDIDATES`] candidates.
pub fn enumerate(plan: &Plan, opts: EnumerateOptions) -> Result<Vec<Layout>, TooManyLayouts> {
    enumerate_pruned(plan, opts, &|_, _| None).map(|(layouts, _)| layouts)
}

/// What one input would carry, for a pruning rule: the input, modules in series, strings in
/// parallel, and the orientation groups the strings draw on.
#[derive(Clone, Copy, Debug)]
pub struct InputDraft<'a> {
    pub controller: usize,
    pub series: usize,
    pub parallel: usize,
    /// Modules per string from each group (one entry per group; single-group strings have one
    /// non-zero entry), for every kind of string on the input.
    pub compositions: &'a [(usize, Vec<usize>)],
}

/// As [`enumerate`], but skips every input choice for which `reject` names a hard limit it
/// breaks whatever the other inputs do; returns the layouts and, per rule, how many
/// (input, choice) pairs were skipped.
///
/// # Errors
/// More than [`MAX_CANDIDATES`] candidates.
pub fn enumerate_pruned(
    plan: &Plan,
    opts: EnumerateOptions,
    reject: &dyn Fn(&Plan, &InputDraft) -> Option<&'static str>,
) -> Result<(Vec<Layout>, PrunedCounts), TooManyLayouts> {
    let counts: Vec<usize> = plan.groups.iter().map(|g| g.count).collect();
    let mut out = Vec::new();
    let mut chosen: Vec<Option<InputChoice>> = Vec::new();
    let mut pruned: Vec<(&'static str, usize)> = Vec::new();
    let mut ctx = Walk {
        plan,
        opts,
        reject,
        pruned: &mut pruned,
    };
    recurse(&mut ctx, &counts, 0, &mut chosen, &mut out)?;
    Ok((out, pruned))
}

struct Walk<'a, 'p> {
    plan: &'a Plan,
    opts: EnumerateOptions,
    reject: &'a dyn Fn(&Plan, &InputDraft) -> Option<&'static str>,
    pruned: &'p mut Vec<(&'static str, usize)>,
}

fn recurse(
    w: &mut Walk,
    left: &[usize],
    input: usize,
    chosen: &mut Vec<Option<InputChoice>>,
    out: &mut Vec<Layout>,
) -> Result<(), TooManyLayouts> {
    let plan = w.plan;
    let opts = w.opts;
    if input == plan.controllers.len() {
        let remaining: usize = left.iter().sum();
        let any = chosen.iter().any(Option::is_some);
        if any && (remaining == 0 || opts.allow_unused_modules) {
            out.push(build(plan, chosen));
            if out.len() > MAX_CANDIDATES {
                return Err(TooManyLayouts {
                    limit: MAX_CANDIDATES,
                });
            }
        }
        return Ok(());
    }
    // Inputs with the same hardware are interchangeable: take their choices in non-increasing
    // order so that a permutation of the same wiring is generated once.
    let bound: Option<Option<InputChoice>> = (input > 0
        && plan.controllers[input].same_hardware(&plan.controllers[input - 1]))
    .then(|| chosen[input - 1].clone());
    // This input carries nothing.
    chosen.push(None);
    recurse(w, left, input + 1, chosen, out)?;
    chosen.pop();
    let available: usize = left.iter().sum();
    for series in 1..=available {
        for choice in input_choices(left, series, opts.allow_mixed_orientation) {
            if let Some(prev) = &bound {
                if Some(&choice) > prev.as_ref() {
                    continue;
                }
            }
            let draft = InputDraft {
                controller: input,
                series,
                parallel: choice.string_kinds.iter().map(|(n, _)| n).sum(),
                compositions: &choice.string_kinds,
            };
            if let Some(rule) = (w.reject)(plan, &draft) {
                match w.pruned.iter_mut().find(|(r, _)| *r == rule) {
                    Some((_, n)) => *n += 1,
                    None => w.pruned.push((rule, 1)),
                }
                continue;
            }
            let mut rest = left.to_vec();
            for (n, comp) in &choice.string_kinds {
                for (g, c) in comp.iter().enumerate() {
                    rest[g] -= n * c;
                }
            }
            chosen.push(Some(choice));
            recurse(w, &rest, input + 1, chosen, out)?;
            chosen.pop();
        }
    }
    Ok(())
}

/// Every set of parallel strings of `series` modules that fits in `left`: single-group strings
/// in any per-group numbers (at least one string), or, when allowed, p identical mixed strings.
fn input_choices(left: &[usize], series: usize, mixed: bool) -> Vec<InputChoice> {
    let groups = left.len();
    let mut out = Vec::new();
    // Single-group strings: k_g strings from group g, k_g · series ≤ left[g].
    let caps: Vec<usize> = left.iter().map(|&n| n / series).collect();
    let mut k = vec![0usize; groups];
    loop {
        if k.iter().any(|&x| x > 0) {
            let string_kinds = k
                .iter()
                .enumerate()
                .filter(|(_, &n)| n > 0)
                .map(|(g, &n)| {
                    let mut comp = vec![0; groups];
                    comp[g] = series;
                    (n, comp)
                })
                .collect();
            out.push(InputChoice {
                series,
                string_kinds,
            });
        }
        // Next k (odometer).
        let mut g = 0;
        while g < groups {
            if k[g] < caps[g] {
                k[g] += 1;
                break;
            }
            k[g] = 0;
            g += 1;
        }
        if g == groups {
            break;
        }
    }
    if mixed && groups > 1 {
        // Compositions c (Σ c = series, at least two groups) and p ≥ 1 with p · c ≤ left.
        let mut comp = vec![0usize; groups];
        compositions(series, 0, &mut comp, &mut |c| {
            if c.iter().filter(|&&x| x > 0).count() < 2 {
                return;
            }
            let p_max = c
                .iter()
                .zip(left)
                .filter(|(&x, _)| x > 0)
                .map(|(&x, &n)| n / x)
                .min()
                .unwrap_or(0);
            for p in 1..=p_max {
                out.push(InputChoice {
                    series,
                    string_kinds: vec![(p, c.to_vec())],
                });
            }
        });
    }
    out
}

/// Calls `f` with every vector of `comp.len()` non-negative integers summing to `n`.
fn compositions(n: usize, g: usize, comp: &mut Vec<usize>, f: &mut impl FnMut(&[usize])) {
    if g + 1 == comp.len() {
        comp[g] = n;
        f(comp);
        comp[g] = 0;
        return;
    }
    for x in 0..=n {
        comp[g] = x;
        compositions(n - x, g + 1, comp, f);
    }
    comp[g] = 0;
}

/// Turns count choices into module assignments, taking each group's modules in id order.
fn build(plan: &Plan, chosen: &[Option<InputChoice>]) -> Layout {
    let mut next: Vec<std::vec::IntoIter<usize>> = (0..plan.groups.len())
        .map(|g| {
            plan.modules
                .iter()
                .enumerate()
                .filter(|(_, m)| m.group == g)
                .map(|(i, _)| i)
                .collect::<Vec<_>>()
                .into_iter()
        })
        .collect();
    let mut inputs = Vec::new();
    for (c, choice) in chosen.iter().enumerate() {
        let Some(choice) = choice else { continue };
        let mut strings = Vec::new();
        for (n, comp) in &choice.string_kinds {
            for _ in 0..*n {
                let mut s = Vec::with_capacity(choice.series);
                for (g, &count) in comp.iter().enumerate() {
                    s.extend(next[g].by_ref().take(count));
                }
                strings.push(s);
            }
        }
        inputs.push(InputWiring {
            controller: c,
            strings,
        });
    }
    make_layout(plan, None, inputs)
}
