//! The words of the script language, by family, and the state they build.
//!
//! - [`case`]: the patient, settings, parameters, switches, the length of
//!   the run, sampling, the script's own fluid file;
//! - [`schedule`]: when things happen (`at`, `start`, `every`);
//! - [`treatments`]: infusions, boluses, drinks, tablets, drugs,
//!   restrictions, losses and stops, the actions they make and their labels;
//! - [`expectations`]: the `expect_*` words.
//!
//! [`args`] turns script values into typed arguments with messages that name
//! the word; [`state`] holds what the script has said so far. A new word goes
//! into its family's `register`, into [`WORDS`] (suggestions and arity
//! messages) and into `scenarios/README.md`.

mod args;
mod case;
mod expectations;
mod schedule;
mod state;
mod treatments;

pub use state::ActionValue;
pub(crate) use state::{Phase, RuleDef, Shared, State};

use rhai::Engine;
use std::rc::Rc;

/// Every word of the language with its usage, for messages and docs.
pub const WORDS: &[(&str, &str)] = &[
    ("title", "title(text)"),
    ("setting", "setting(name, default)"),
    ("description", "description(text)"),
    (
        "patient",
        "patient(#{ sex, age_years, weight_kg, na, ... })",
    ),
    ("closed_system", "closed_system()"),
    ("run_for", "run_for(duration)"),
    ("sample_every", "sample_every(duration)"),
    ("limits", "limits(\"europe-2014\" | \"us-2013\", high_risk)"),
    ("set_param", "set_param(name, number)"),
    ("change_param", "change_param(name, number)"),
    ("resolve_cause", "resolve_cause()"),
    ("fluids_file", "fluids_file(\"file.yaml\")"),
    ("at", "at(time, action or [actions])"),
    ("start", "start(action)"),
    ("every", "every(interval, |labs| { ... })"),
    ("infuse", "infuse(fluid, volume, duration)"),
    ("infuse_at_rate", "infuse_at_rate(fluid, rate)"),
    (
        "drink",
        "drink(volume, duration) or drink(fluid, volume, duration)",
    ),
    ("lose", "lose(kind, volume, duration)"),
    ("stop", "stop(label)"),
    ("stop_all", "stop_all()"),
    ("desmopressin", "desmopressin(dose, route)"),
    ("v2_antagonist", "v2_antagonist(dose)"),
    (
        "loop_diuretic",
        "loop_diuretic(dose) or loop_diuretic(dose, route)",
    ),
    ("thiazide", "thiazide()"),
    ("salt_tablets", "salt_tablets(amount)"),
    ("potassium_tablets", "potassium_tablets(amount)"),
    ("urea", "urea(amount)"),
    ("fluid_restriction", "fluid_restriction(volume per day)"),
    ("nil_by_mouth", "nil_by_mouth()"),
    ("labelled", "action.labelled(name)"),
    (
        "expect_between",
        "expect_between(quantity, time, low, high)",
    ),
    ("expect_above", "expect_above(quantity, time, value)"),
    ("expect_below", "expect_below(quantity, time, value)"),
    (
        "expect_change",
        "expect_change(quantity, from, to, low, high)",
    ),
    (
        "expect_always_between",
        "expect_always_between(quantity, low, high)",
    ),
    ("expect_max_rise_24h", "expect_max_rise_24h(mmol/L)"),
    ("expect_max_fall_24h", "expect_max_fall_24h(mmol/L)"),
    ("expect_no_flags", "expect_no_flags()"),
    ("expect_flag", "expect_flag() or expect_flag(text)"),
    ("expect_logged", "expect_logged(text)"),
    ("minutes", "minutes(number)"),
    ("hours", "hours(number)"),
    ("days", "days(number)"),
    ("ml", "ml(number)"),
    ("litres", "litres(number)"),
    ("ml_per_kg", "ml_per_kg(number)"),
    ("ml_per_h", "ml_per_h(number)"),
    ("litres_per_h", "litres_per_h(number)"),
    ("ml_per_kg_per_h", "ml_per_kg_per_h(number)"),
    ("mmol", "mmol(number)"),
    ("grams", "grams(number)"),
    ("mg", "mg(number)"),
    ("micrograms", "micrograms(number)"),
    ("print", "print(value)"),
];

/// Usage of a word, if it is one.
pub fn usage(word: &str) -> Option<&'static str> {
    WORDS.iter().find(|(w, _)| *w == word).map(|(_, u)| *u)
}

/// Register every word on `engine`, sharing `st`; `source` is the script
/// text (the patient word points at the line of a bad field).
pub(crate) fn register(engine: &mut Engine, st: &Shared, source: Rc<str>) {
    case::register(engine, st, source);
    schedule::register(engine, st);
    treatments::register(engine, st);
    expectations::register(engine, st);
    super::rules::register_labs(engine);
}
