//! Which physical modules form each string, and which stay unused, for one layout shape
//! (per input: modules in series, strings in parallel, groups drawn on).
//!
//! Enumeration decides the shape and takes each group's modules in id order; where shade
//! makes modules of one group differ, which modules share a string is a real choice (a
//! string of similarly shaded modules loses far less than one that mixes shaded and sunny
//! ones). The method (notebooks-free-docs/method-assignment.md):
//!
//! 1. **Seed**: per group, the modules that give most over the year are used (the most
//!    shaded stay unused when the shape leaves some out), chained so that each next module
//!    is the one whose shade-by-hour profile is closest to the last; the layout's slots of
//!    that group are filled in that order, so neighbours in the chain share strings.
//! 2. **Improve**: swaps of two modules of the same group between strings, or between a
//!    string and the unused ones, each evaluated with the full simulation; the best swap of
//!    a round is taken while it improves the ranking criterion. Modules of the same class
//!    ([`ShadeProfiles::class`]: the same curve in every interval) are interchangeable and
//!    never swapped with each other.
//!
//! [`exhaustive`] evaluates every distinct assignment; it is the check of the method on
//! small plans.

use std::collections::HashSet;

use crate::input::layout::Layout;
use crate::input::plan::Plan;
use crate::sim::curves::ShadeProfiles;

/// A module's place: input, string and position indices into `Layout::inputs`.
type Slot = (usize, usize, usize);

/// Distance between two modules' shade-by-hour profiles (Euclidean, in lost shares).
fn distance(a: &[f64; 24], b: &[f64; 24]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y) * (x - y))
        .sum::<f64>()
        .sqrt()
}

/// The layout's slots that hold a module of group `g`, in input, string, position order.
fn slots_of_group(plan: &Plan, layout: &Layout, g: usize) -> Vec<Slot> {
    let mut out = Vec::new();
    for (wi, w) in layout.inputs.iter().enumerate() {
        for (si, s) in w.strings.iter().enumerate() {
            for (pi, &m) in s.iter().enumerate() {
                if plan.modules[m].group == g {
                    out.push((wi, si, pi));
                }
            }
        }
    }
    out
}

/// The modules of group `g`, those that give most over the year first (ties by id).
fn by_energy(plan: &Plan, prof: &ShadeProfiles, g: usize) -> Vec<usize> {
    let mut v: Vec<usize> = (0..plan.modules.len())
        .filter(|&m| plan.modules[m].group == g)
        .collect();
    v.sort_by(|&a, &b| {
        prof.energy_wh[b]
            .total_cmp(&prof.energy_wh[a])
            .then(a.cmp(&b))
    });
    v
}

/// The seed assignment of `layout`'s shape (step 1 of the method); the id, code and shape
/// are kept.
pub fn seed(plan: &Plan, prof: &ShadeProfiles, layout: &Layout) -> Layout {
    let chain = |g: usize| {
        let mut rest = by_energy(plan, prof, g);
        rest.truncate(slots_of_group(plan, layout, g).len());
        // From the module that gives most, always on to the closest profile.
        let mut chain = Vec::with_capacity(rest.len());
        while !rest.is_empty() {
            let k = match chain.last() {
                None => 0,
                Some(&last) => (0..rest.len())
                    .min_by(|&a, &b| {
                        let d = |k: usize| {
                            distance(&prof.lost_by_hour[last], &prof.lost_by_hour[rest[k]])
                        };
                        d(a).total_cmp(&d(b)).then(a.cmp(&b))
                    })
                    .unwrap_or(0),
            };
            chain.push(rest.remove(k));
        }
        chain
    };
    fill_in_order(plan, layout, &chain)
}

/// The layout's slots of each group filled from `order` (per group, modules best first):
/// the first modules of each group's order are used, in slot order.
fn fill_in_order(plan: &Plan, layout: &Layout, order: &dyn Fn(usize) -> Vec<usize>) -> Layout {
    let mut out = layout.clone();
    for g in 0..plan.groups.len() {
        let slots = slots_of_group(plan, layout, g);
        if slots.is_empty() {
            continue;
        }
        for ((wi, si, pi), m) in slots.into_iter().zip(order(g)) {
            out.inputs[wi].strings[si][pi] = m;
        }
    }
    out
}

/// Starting points for the swap search: the chained seed, the modules in order of their
/// year's energy, in order of when in the day shade takes their light (morning first), and
/// the shape as given (id order); equivalent ones once.
pub fn starts(plan: &Plan, prof: &ShadeProfiles, layout: &Layout) -> Vec<Layout> {
    let by_energy = |g: usize| by_energy(plan, prof, g);
    // When in the day a module loses its light: the loss-weighted mean hour.
    let timing = |m: usize| {
        let l = &prof.lost_by_hour[m];
        let total: f64 = l.iter().sum();
        if total > 0.0 {
            l.iter().enumerate().map(|(h, x)| h as f64 * x).sum::<f64>() / total
        } else {
            12.0
        }
    };
    let by_timing = |g: usize| {
        // The modules that give most stay in use; among them, similar timing goes together.
        let n = slots_of_group(plan, layout, g).len();
        let mut v = by_energy(g);
        v.truncate(n);
        v.sort_by(|&a, &b| timing(a).total_cmp(&timing(b)).then(a.cmp(&b)));
        v
    };
    let mut out: Vec<Layout> = Vec::new();
    let mut seen = HashSet::new();
    for l in [
        seed(plan, prof, layout),
        fill_in_order(plan, layout, &by_energy),
        fill_in_order(plan, layout, &by_timing),
        layout.clone(),
    ] {
        if seen.insert(class_key(prof, &l)) {
            out.push(l);
        }
    }
    out
}

/// The whole method: the swap search from each of [`starts`] (the first with `first_key`
/// already known), sharing `max_evaluations`; the best result. Ties keep the earlier start.
/// `eval` simulates a batch of layouts and returns their keys in order (a batch shares the
/// simulation's per-input work; it must be deterministic).
pub fn search<K, F>(
    plan: &Plan,
    prof: &ShadeProfiles,
    layout: &Layout,
    first_key: K,
    eval: &F,
    max_evaluations: usize,
) -> Assigned<K>
where
    K: PartialOrd + Clone + Send,
    F: Fn(&[Layout]) -> Vec<K>,
{
    let starts = starts(plan, prof, layout);
    let share = max_evaluations / starts.len().max(1);
    // Starts and swaps often meet the same assignment again: simulate each one once.
    let memo: std::cell::RefCell<std::collections::HashMap<Vec<Vec<Vec<usize>>>, K>> =
        std::cell::RefCell::new(std::collections::HashMap::new());
    let simulated = std::cell::Cell::new(0usize);
    let cached = |ls: &[Layout]| -> Vec<K> {
        let keys: Vec<Vec<Vec<Vec<usize>>>> = ls.iter().map(|l| class_key(prof, l)).collect();
        // The batch's assignments not met before, each once.
        let mut fresh: Vec<usize> = Vec::new();
        {
            let m = memo.borrow();
            for (j, k) in keys.iter().enumerate() {
                if !m.contains_key(k) && !fresh.iter().any(|&f| keys[f] == *k) {
                    fresh.push(j);
                }
            }
        }
        if !fresh.is_empty() {
            simulated.set(simulated.get() + fresh.len());
            let batch: Vec<Layout> = fresh.iter().map(|&j| ls[j].clone()).collect();
            let found = eval(&batch);
            let mut m = memo.borrow_mut();
            for (&j, k) in fresh.iter().zip(found) {
                m.insert(keys[j].clone(), k);
            }
        }
        let m = memo.borrow();
        keys.iter().map(|k| m[k].clone()).collect()
    };
    memo.borrow_mut()
        .insert(class_key(prof, &starts[0]), first_key.clone());
    let mut best: Option<Assigned<K>> = None;
    for s in starts {
        let key = cached(std::slice::from_ref(&s)).remove(0);
        let found = improve(plan, prof, s, key, &cached, share);
        if best.as_ref().is_none_or(|b| found.key > b.key) {
            best = Some(found);
        }
    }
    let mut best = best.expect("at least one start");
    best.evaluations = simulated.get();
    best
}

/// The modules of group `g` that `layout` leaves unused, in id order.
fn unused_of_group(plan: &Plan, layout: &Layout, g: usize) -> Vec<usize> {
    let used: HashSet<usize> = layout
        .inputs
        .iter()
        .flat_map(|w| w.strings.iter().flatten().copied())
        .collect();
    (0..plan.modules.len())
        .filter(|&m| plan.modules[m].group == g && !used.contains(&m))
        .collect()
}

/// One swap: the module at a slot with the module at another slot, or with an unused module.
#[derive(Clone, Copy, Debug)]
enum Swap {
    Slots(Slot, Slot),
    Unused(Slot, usize),
}

fn apply(layout: &Layout, swap: Swap) -> Layout {
    let mut l = layout.clone();
    match swap {
        Swap::Slots((a, b, c), (d, e, f)) => {
            let x = l.inputs[a].strings[b][c];
            l.inputs[a].strings[b][c] = l.inputs[d].strings[e][f];
            l.inputs[d].strings[e][f] = x;
        }
        Swap::Unused((a, b, c), m) => l.inputs[a].strings[b][c] = m,
    }
    l
}

/// Every swap that can change a result: same group, different class, different strings;
/// one representative per (string, class) and per unused class.
fn swaps(plan: &Plan, prof: &ShadeProfiles, layout: &Layout) -> Vec<Swap> {
    let mut out = Vec::new();
    for g in 0..plan.groups.len() {
        let mut reps: Vec<(Slot, usize)> = Vec::new();
        let mut seen: HashSet<(usize, usize, usize)> = HashSet::new();
        for slot in slots_of_group(plan, layout, g) {
            let class = prof.class[layout.inputs[slot.0].strings[slot.1][slot.2]];
            if seen.insert((slot.0, slot.1, class)) {
                reps.push((slot, class));
            }
        }
        let mut unused_classes = HashSet::new();
        let unused: Vec<usize> = unused_of_group(plan, layout, g)
            .into_iter()
            .filter(|&m| unused_classes.insert(prof.class[m]))
            .collect();
        for (i, &(a, ca)) in reps.iter().enumerate() {
            for &(b, cb) in &reps[i + 1..] {
                if ca != cb && (a.0, a.1) != (b.0, b.1) {
                    out.push(Swap::Slots(a, b));
                }
            }
            for &m in &unused {
                if prof.class[m] != ca {
                    out.push(Swap::Unused(a, m));
                }
            }
        }
    }
    out
}

/// The result of [`improve`] or [`exhaustive`].
#[derive(Clone, Debug)]
pub struct Assigned<K> {
    pub layout: Layout,
    /// The criterion's key of `layout` (higher is better).
    pub key: K,
    /// Simulations run.
    pub evaluations: usize,
    /// Swaps taken (0 for [`exhaustive`]).
    pub swaps: usize,
}

/// Step 2 of the method: from `start` (with its key), take the best improving swap of each
/// round until none improves or `max_evaluations` simulations have run. `eval` simulates a
/// batch of layouts (a round's swaps) and returns the ranking criterion's keys in order,
/// higher better; it must be deterministic.
pub fn improve<K, F>(
    plan: &Plan,
    prof: &ShadeProfiles,
    start: Layout,
    start_key: K,
    eval: &F,
    max_evaluations: usize,
) -> Assigned<K>
where
    K: PartialOrd + Clone + Send,
    F: Fn(&[Layout]) -> Vec<K>,
{
    let mut best = Assigned {
        layout: start,
        key: start_key,
        evaluations: 0,
        swaps: 0,
    };
    loop {
        let room = max_evaluations.saturating_sub(best.evaluations);
        let mut moves = swaps(plan, prof, &best.layout);
        if moves.is_empty() || room == 0 {
            return best;
        }
        moves.truncate(room);
        best.evaluations += moves.len();
        let layouts: Vec<Layout> = moves.iter().map(|&m| apply(&best.layout, m)).collect();
        let keys = eval(&layouts);
        let tried: Vec<(Layout, K)> = layouts.into_iter().zip(keys).collect();
        // The first of the best (deterministic whatever the thread timing).
        let mut winner: Option<(Layout, K)> = None;
        for (l, k) in tried {
            let beats_current = k > best.key;
            let beats_winner = winner.as_ref().is_none_or(|(_, w)| k > *w);
            if beats_current && beats_winner {
                winner = Some((l, k));
            }
        }
        match winner {
            Some((l, k)) => {
                best.layout = l;
                best.key = k;
                best.swaps += 1;
            }
            None => return best,
        }
    }
}

/// Per input, the strings as sorted class lists, sorted: equal for assignments that can
/// never give different results.
fn class_key(prof: &ShadeProfiles, layout: &Layout) -> Vec<Vec<Vec<usize>>> {
    layout
        .inputs
        .iter()
        .map(|w| {
            let mut strings: Vec<Vec<usize>> = w
                .strings
                .iter()
                .map(|s| {
                    let mut c: Vec<usize> = s.iter().map(|&m| prof.class[m]).collect();
                    c.sort_unstable();
                    c
                })
                .collect();
            strings.sort();
            strings
        })
        .collect()
}

/// Every distinct assignment of `layout`'s shape (distinct by [`class_key`]), or `None` when
/// there are more than `limit`.
pub fn all_assignments(
    plan: &Plan,
    prof: &ShadeProfiles,
    layout: &Layout,
    limit: usize,
) -> Option<Vec<Layout>> {
    let mut walk = Walk {
        plan,
        prof,
        strings: layout
            .inputs
            .iter()
            .enumerate()
            .flat_map(|(wi, w)| (0..w.strings.len()).map(move |si| (wi, si)))
            .collect(),
        current: layout.clone(),
        free: vec![true; plan.modules.len()],
        out: Vec::new(),
        seen: HashSet::new(),
        raw: 0,
        limit,
    };
    walk.place(0, 0).then_some(walk.out)
}

/// The state of [`all_assignments`]' walk: each string takes its modules per group in
/// increasing id order (series order does not matter); every choice of which modules go to
/// which string is walked, and each class-distinct result kept once.
struct Walk<'a> {
    plan: &'a Plan,
    prof: &'a ShadeProfiles,
    /// Every string as (input, string) indices, in layout order.
    strings: Vec<(usize, usize)>,
    current: Layout,
    /// Modules not yet placed.
    free: Vec<bool>,
    out: Vec<Layout>,
    seen: HashSet<Vec<Vec<Vec<usize>>>>,
    /// Complete assignments walked, distinct or not (bounded at 50 × `limit`).
    raw: usize,
    limit: usize,
}

impl Walk<'_> {
    /// Places position `pos` of string `k` and everything after it; false to stop the walk.
    fn place(&mut self, k: usize, pos: usize) -> bool {
        let Some(&(wi, si)) = self.strings.get(k) else {
            self.raw += 1;
            if self.raw > self.limit.saturating_mul(50) {
                return false;
            }
            if self.seen.insert(class_key(self.prof, &self.current)) {
                self.out.push(self.current.clone());
            }
            return self.out.len() <= self.limit;
        };
        let string = &self.current.inputs[wi].strings[si];
        if pos == string.len() {
            return self.place(k + 1, 0);
        }
        let old = string[pos];
        let g = self.plan.modules[old].group;
        // Increasing ids among this string's modules of the same group.
        let after = string[..pos]
            .iter()
            .filter(|&&m| self.plan.modules[m].group == g)
            .max()
            .map_or(0, |&m| m + 1);
        for m in after..self.plan.modules.len() {
            if !self.free[m] || self.plan.modules[m].group != g {
                continue;
            }
            self.free[m] = false;
            self.current.inputs[wi].strings[si][pos] = m;
            let go_on = self.place(k, pos + 1);
            self.free[m] = true;
            self.current.inputs[wi].strings[si][pos] = old;
            if !go_on {
                return false;
            }
        }
        true
    }
}

/// Evaluates every distinct assignment (at most `limit`, in one batch of `eval`) and returns
/// the best; `None` when there are more than `limit`. The check of the method on small plans.
pub fn exhaustive<K, F>(
    plan: &Plan,
    prof: &ShadeProfiles,
    layout: &Layout,
    eval: &F,
    limit: usize,
) -> Option<Assigned<K>>
where
    K: PartialOrd + Clone + Send,
    F: Fn(&[Layout]) -> Vec<K>,
{
    let all = all_assignments(plan, prof, layout, limit)?;
    let evaluations = all.len();
    let keys = eval(&all);
    let keyed: Vec<(Layout, K)> = all.into_iter().zip(keys).collect();
    let mut best: Option<(Layout, K)> = None;
    for (l, k) in keyed {
        if best.as_ref().is_none_or(|(_, b)| k > *b) {
            best = Some((l, k));
        }
    }
    best.map(|(layout, key)| Assigned {
        layout,
        key,
        evaluations,
        swaps: 0,
    })
}
