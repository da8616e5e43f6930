//! The variables the rules capture (`let stopped = false;` read and set
//! inside `every(...)`), kept as they were when the top level ended, so a
//! second run can put them back instead of loading the script again.
//!
//! A Rhai closure captures a variable as a shared cell curried into its
//! function pointer; a run changes the value in the cell. [`Captured`]
//! holds every cell reachable from the rules (through arrays, maps and
//! other closures held in them), each once, with a copy of its value;
//! [`Captured::restore`] writes the copies back. Values other than cells
//! are copied by Rhai (arrays and maps have value semantics), so putting
//! back every reachable cell puts back everything a rule can have changed.

use super::words::RuleDef;
use rhai::{Dynamic, FnPtr};

/// Most cells [`Captured::take`] follows; a script holding more is loaded
/// afresh for each run instead (the slower way, with the same result).
const MAX_CELLS: usize = 1_000;

/// The captured cells of a script's rules with their values after load.
pub(crate) struct Captured {
    /// (the cell, its value when taken).
    cells: Vec<(Dynamic, Dynamic)>,
}

impl Captured {
    /// The cells the rules capture and their values now, or `None` when
    /// one cannot be read (borrowed elsewhere) or there are too many.
    pub fn take(rules: &[RuleDef]) -> Option<Captured> {
        let mut walk = Walk {
            seen: Vec::new(),
            cells: Vec::new(),
        };
        for rule in rules {
            walk.fn_ptr(&rule.func)?;
        }
        Some(Captured { cells: walk.cells })
    }

    /// Put every cell back to its value when taken. Returns false when a
    /// cell is borrowed (a rule is running), in which case nothing should
    /// be trusted and the script must be loaded afresh.
    pub fn restore(&self) -> bool {
        for (cell, value) in &self.cells {
            let mut cell = cell.clone();
            let Some(mut slot) = cell.write_lock::<Dynamic>() else {
                return false;
            };
            *slot = value.clone();
        }
        true
    }

    /// Number of cells held.
    #[cfg(test)]
    pub fn len(&self) -> usize {
        self.cells.len()
    }
}

/// A walk over the values reachable from the rules.
struct Walk {
    /// Addresses of the values inside the cells visited (a cell's value
    /// stays in place while the cell lives, and the walk holds every cell).
    seen: Vec<*const Dynamic>,
    cells: Vec<(Dynamic, Dynamic)>,
}

impl Walk {
    fn fn_ptr(&mut self, f: &FnPtr) -> Option<()> {
        f.iter_curry().try_for_each(|d| self.value(d))
    }

    fn value(&mut self, d: &Dynamic) -> Option<()> {
        if d.is_shared() {
            let inner = d.read_lock::<Dynamic>()?;
            let address: *const Dynamic = &*inner;
            if self.seen.contains(&address) {
                return Some(());
            }
            if self.cells.len() >= MAX_CELLS {
                return None;
            }
            self.seen.push(address);
            self.cells.push((d.clone(), (*inner).clone()));
            return self.value(&inner);
        }
        if d.is_array() {
            let items = d.as_array_ref().ok()?;
            return items.iter().try_for_each(|x| self.value(x));
        }
        if d.is_map() {
            let map = d.as_map_ref().ok()?;
            return map.values().try_for_each(|x| self.value(x));
        }
        if d.is_fnptr() {
            let f = d.read_lock::<FnPtr>()?;
            return self.fn_ptr(&f);
        }
        Some(())
    }
}

#[cfg(test)]
mod tests {
    use crate::scenario::Scenario;
    use std::path::Path;

    #[test]
    fn every_captured_cell_is_found_once_and_put_back() {
        // `count` is captured by both rules (one cell), `seen` is an array
        // a rule grows, `inner` a closure held in a map that captures `n`.
        let script = r#"
            patient(#{ sex: "female", age_years: 60, weight_kg: 60, na: 140 });
            run_for(hours(2));
            let count = 0;
            let seen = [];
            let n = 0;
            let inner = #{ bump: || { n += 1; n } };
            every(minutes(30), |labs| { count += 1; seen.push(labs.time_h); });
            every(hours(1), |labs| { count += 10; let k = inner.bump.call(); print(`n ${k} count ${count} seen ${seen.len()}`); });
        "#;
        let s = Scenario::from_source("cells.rhai", script, Path::new(".")).unwrap();
        // count, seen, inner and n.
        assert_eq!(s.captured.as_ref().map(|c| c.len()), Some(4));
        let first = s.run().unwrap();
        let second = s.run().unwrap();
        // Rule calls at 0, 0.5, 1, 1.5, 2 h (30 min) and 0, 1, 2 h (1 h):
        // the last line of a run counts 5 + 30 and 5 times seen, n = 3.
        assert_eq!(
            first.log.last().map(String::as_str),
            Some("t = 2.00 h: n 3 count 35 seen 5")
        );
        assert_eq!(first.log, second.log);
    }
}
