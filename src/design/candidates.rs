//! Candidate wirings: the plan's listed layouts and, with `layouts = "all"`, every way of
//! putting parallel strings of modules in series on each controller input. Enumeration skips
//! input choices that break a hard limit on their own (the same rules as the checks).

use crate::design::rules::{self, InputDraft, Rule};
use crate::error::Error;
use crate::input::layout::{self, make_layout, InputWiring, Layout};
use crate::input::plan::{EnumerateOptions, Plan};

/// Input choices skipped by enumeration, counted per broken rule.
pub type PrunedCounts = Vec<(Rule, usize)>;

/// Largest number of candidates enumeration will produce before giving up.
pub const MAX_CANDIDATES: usize = 20_000;

/// Largest number of input choices enumeration will skip (because they break a hard limit)
/// before giving up. Kept choices are bounded by [`MAX_CANDIDATES`]; skipped ones were not,
/// and a plan with many groups could skip hundreds of millions for a handful of layouts.
/// A skipped choice costs well under a microsecond, so the walk now stops within seconds.
pub const MAX_CHOICES_SKIPPED: usize = 3_000_000;

/// Why enumeration stopped.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum TooManyLayouts {
    /// More than [`MAX_CANDIDATES`] layouts.
    Candidates { limit: usize },
    /// More than [`MAX_CHOICES_SKIPPED`] input choices skipped.
    Choices { limit: usize },
}

impl TooManyLayouts {
    /// What a person can change in the plan to shrink the space: only options that are on,
    /// and the plan's shape (groups, inputs) where it is large.
    pub fn advice(&self, plan: &Plan) -> String {
        let what = match self {
            TooManyLayouts::Candidates { limit } => {
                format!("layouts = \"all\" gives more than {limit} candidate layouts")
            }
            TooManyLayouts::Choices { limit } => format!(
                "layouts = \"all\" skipped {limit} ways of wiring a controller input that break a limit without finishing the search"
            ),
        };
        let mut ways = vec!["list the layouts you want as [[layout]] tables instead".to_string()];
        if plan.enumerate.allow_unused_modules {
            ways.push("set [enumerate] allow_unused_modules = false".into());
        }
        if plan.enumerate.allow_mixed_orientation {
            ways.push("set [enumerate] allow_mixed_orientation = false".into());
        }
        if plan.groups.len() > 2 {
            ways.push(format!(
                "merge orientation groups that face the same way (the plan has {})",
                plan.groups.len()
            ));
        }
        if plan.controllers.len() > 2 {
            ways.push(format!(
                "plan fewer controller inputs (the plan has {})",
                plan.controllers.len()
            ));
        }
        let last = ways.pop().unwrap_or_default();
        let ways = if ways.is_empty() {
            last
        } else {
            format!("{}, or {last}", ways.join(", "))
        };
        format!("{what}; to shrink the search, {ways}")
    }
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

/// As [`enumerate`], but skips every input choice for which `reject` names a hard limit it
/// breaks whatever the other inputs do; returns the layouts and, per rule, how many
/// (input, choice) pairs were skipped.
///
/// # Errors
/// More than [`MAX_CANDIDATES`] candidates.
pub fn enumerate_pruned(
    plan: &Plan,
    opts: EnumerateOptions,
    reject: &dyn Fn(&Plan, &InputDraft) -> Option<Rule>,
) -> Result<(Vec<Layout>, PrunedCounts), TooManyLayouts> {
    let counts: Vec<usize> = plan.groups.iter().map(|g| g.count).collect();
    let mut out = Vec::new();
    let mut chosen: Vec<Option<InputChoice>> = Vec::new();
    let mut pruned: PrunedCounts = Vec::new();
    let mut ctx = Walk {
        plan,
        opts,
        reject,
        pruned: &mut pruned,
        skipped: 0,
    };
    recurse(&mut ctx, &counts, 0, &mut chosen, &mut out)?;
    Ok((out, pruned))
}

struct Walk<'a, 'p> {
    plan: &'a Plan,
    opts: EnumerateOptions,
    reject: &'a dyn Fn(&Plan, &InputDraft) -> Option<Rule>,
    pruned: &'p mut PrunedCounts,
    /// Input choices skipped so far because they break a hard limit.
    skipped: usize,
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
                return Err(TooManyLayouts::Candidates {
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
                w.skipped += 1;
                if w.skipped > MAX_CHOICES_SKIPPED {
                    return Err(TooManyLayouts::Choices {
                        limit: MAX_CHOICES_SKIPPED,
                    });
                }
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

/// The candidate layouts of a plan and what enumeration skipped.
#[derive(Clone, Debug)]
pub struct Candidates {
    pub layouts: Vec<layout::Layout>,
    /// How many were listed in the plan.
    pub listed: usize,
    /// Enumerated input choices skipped because they break a hard limit on their own, by rule.
    pub pruned: PrunedCounts,
}

/// The plan's listed layouts, then (with `layouts = "all"`) every enumerated one that is not
/// already listed. Enumeration skips input choices that break a hard limit by themselves
/// (counted by rule); listed layouts are always kept and checked.
///
/// # Errors
/// Enumeration beyond [`layout::MAX_CANDIDATES`].
pub fn candidate_layouts(
    plan: &Plan,
    temps: &rules::DesignTemperatures,
) -> Result<Candidates, Error> {
    let mut all = layout::listed(plan);
    let listed = all.len();
    let mut pruned = Vec::new();
    if plan.enumerate_all {
        let reject = |p: &Plan, d: &InputDraft| rules::input_hard_limit(p, temps, d);
        let (found, skipped) = enumerate_pruned(plan, plan.enumerate, &reject)
            .map_err(|e| Error::Usage(format!("{}: {}", plan.source.display(), e.advice(plan))))?;
        pruned = skipped;
        // De-duplicate by hashing each layout's canonical form once.
        let mut seen: std::collections::HashSet<_> = all.iter().map(Layout::canonical).collect();
        for l in found {
            if seen.insert(l.canonical()) {
                all.push(l);
            }
        }
    }
    for (k, l) in all.iter_mut().enumerate() {
        l.id = if k < listed {
            format!("L{}", k + 1)
        } else {
            format!("E{}", k + 1 - listed)
        };
    }
    Ok(Candidates {
        layouts: all,
        listed,
        pruned,
    })
}
