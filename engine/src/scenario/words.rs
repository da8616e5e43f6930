//! The words of the script language and the state they build.

use super::actions::{potassium_mmol, salt_mmol, urea_grams, ActionSpec};
use super::expect::{Check, Expectation};
use super::rules::lab_names;
use super::units::{fail, Amount, Duration, Rate, Volume};
use crate::fluids::{FluidKind, FluidLibrary};
use crate::limits::LimitChoice;
use crate::patient::Patient;
use crate::simulate::Route;
use rhai::{Array, Dynamic, Engine, EvalAltResult, FnPtr, Map, NativeCallContext, FLOAT, INT};
use std::cell::RefCell;
use std::path::{Component, Path, PathBuf};
use std::rc::Rc;

type Res<T> = Result<T, Box<EvalAltResult>>;

/// An action value in a script: what it does, its label, where it was made.
#[derive(Debug, Clone)]
pub struct ActionValue {
    pub(crate) id: u64,
    pub(crate) spec: ActionSpec,
    pub(crate) label: Option<String>,
    pub(crate) line: usize,
}

/// A planned action.
#[derive(Debug, Clone)]
pub(crate) struct Planned {
    pub time_h: f64,
    pub action: ActionValue,
    pub line: usize,
}

/// A rule: a closure called with the labs every `interval_h`.
#[derive(Debug, Clone)]
pub(crate) struct RuleDef {
    pub interval_h: f64,
    pub func: FnPtr,
    pub line: usize,
}

/// Whether the script is being read or a rule is running.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Phase {
    /// The top level of the script runs (before the simulation).
    Building,
    /// A rule runs at a simulated time.
    InRule { time_h: f64 },
}

/// What the script has said so far.
#[derive(Debug)]
pub(crate) struct State {
    pub base_dir: PathBuf,
    pub title: Option<String>,
    pub description: Option<String>,
    pub patient: Option<(Patient, usize)>,
    pub events: Vec<Planned>,
    pub closed: Option<usize>,
    pub run_for: Option<(f64, usize)>,
    pub sample_every: Option<(f64, usize)>,
    pub limits: Option<(LimitChoice, usize)>,
    pub overrides: Vec<(String, f64, usize)>,
    pub fluids: FluidLibrary,
    pub rules: Vec<RuleDef>,
    pub expectations: Vec<Expectation>,
    pub phase: Phase,
    /// Actions a running rule asked for (with the line that asked).
    pub pending: Vec<(ActionValue, usize)>,
    /// Actions made inside a rule and not (yet) started.
    pub dangling: Vec<ActionValue>,
    pub next_id: u64,
    /// Values given from outside (a sweep member) for `setting(name, default)`.
    pub settings: std::collections::BTreeMap<String, f64>,
}

impl State {
    pub fn new(base_dir: &Path) -> Self {
        State {
            base_dir: base_dir.to_path_buf(),
            title: None,
            description: None,
            patient: None,
            events: Vec::new(),
            closed: None,
            run_for: None,
            sample_every: None,
            limits: None,
            overrides: Vec::new(),
            fluids: FluidLibrary::bundled(),
            rules: Vec::new(),
            expectations: Vec::new(),
            phase: Phase::Building,
            pending: Vec::new(),
            dangling: Vec::new(),
            next_id: 0,
            settings: Default::default(),
        }
    }
}

pub(crate) type Shared = Rc<RefCell<State>>;

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
    ("loop_diuretic", "loop_diuretic(dose)"),
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

const PATIENT_FIELDS: &[&str] = &[
    "sex",
    "age_years",
    "weight_kg",
    "height_cm",
    "water_fraction",
    "water_method",
    "na",
    "k",
    "glucose_mmol_l",
    "glucose_mg_dl",
    "urea_mmol_l",
    "bun_mg_dl",
    "albumin_g_l",
    "hematocrit",
    "onset",
    "cause",
];

fn line_of(ctx: &NativeCallContext) -> usize {
    ctx.call_position().line().unwrap_or(0)
}

/// A plain number (integer or float).
pub(crate) fn number(d: &Dynamic) -> Option<f64> {
    if let Some(x) = d.clone().try_cast::<FLOAT>() {
        Some(x)
    } else {
        d.clone().try_cast::<INT>().map(|x| x as f64)
    }
}

/// How a value looks in a message: "a bare number 500", "a volume (500 mL)".
fn describe(ctx: &NativeCallContext, d: &Dynamic) -> String {
    if let Some(x) = number(d) {
        return format!("a bare number ({x})");
    }
    if let Some(v) = d.clone().try_cast::<Duration>() {
        return format!("a duration ({v})");
    }
    if let Some(v) = d.clone().try_cast::<Volume>() {
        return format!("a volume ({v})");
    }
    if let Some(v) = d.clone().try_cast::<Rate>() {
        return format!("a rate ({v})");
    }
    if let Some(v) = d.clone().try_cast::<Amount>() {
        return format!("an amount ({v})");
    }
    if d.is_string() {
        return format!("the text \"{d}\"");
    }
    format!(
        "a value of type {}",
        ctx.engine().map_type_name(d.type_name())
    )
}

fn wrong(
    ctx: &NativeCallContext,
    word: &str,
    what: &str,
    expected: &str,
    got: &Dynamic,
) -> Box<EvalAltResult> {
    Box::new(EvalAltResult::ErrorRuntime(
        format!(
            "{}: {what} must be {expected}, not {}",
            usage(word).unwrap_or(word),
            describe(ctx, got)
        )
        .into(),
        ctx.call_position(),
    ))
}

/// Argument `what` of `word` as a value of type `T`, or an error naming
/// what was `expected` and what was given.
fn arg_typed<T: Clone + 'static>(
    ctx: &NativeCallContext,
    word: &str,
    what: &str,
    d: &Dynamic,
    expected: &str,
) -> Res<T> {
    d.clone()
        .try_cast::<T>()
        .ok_or_else(|| wrong(ctx, word, what, expected, d))
}

pub(crate) fn arg_duration(
    ctx: &NativeCallContext,
    word: &str,
    what: &str,
    d: &Dynamic,
) -> Res<Duration> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "a duration such as minutes(20), hours(2) or days(1)",
    )
}

fn arg_volume(ctx: &NativeCallContext, word: &str, what: &str, d: &Dynamic) -> Res<Volume> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "a volume such as ml(500), litres(1) or ml_per_kg(20)",
    )
}

fn arg_rate(ctx: &NativeCallContext, word: &str, what: &str, d: &Dynamic) -> Res<Rate> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "a rate such as ml_per_h(80) or ml_per_kg_per_h(1)",
    )
}

fn arg_amount(ctx: &NativeCallContext, word: &str, what: &str, d: &Dynamic) -> Res<Amount> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "an amount such as mmol(40), grams(9), mg(40) or micrograms(2)",
    )
}

pub(crate) fn arg_number(ctx: &NativeCallContext, word: &str, what: &str, d: &Dynamic) -> Res<f64> {
    number(d)
        .filter(|x| x.is_finite())
        .ok_or_else(|| wrong(ctx, word, what, "a number", d))
}

pub(crate) fn arg_text(
    ctx: &NativeCallContext,
    word: &str,
    what: &str,
    d: &Dynamic,
) -> Res<String> {
    if d.is_string() {
        Ok(d.to_string())
    } else {
        Err(wrong(ctx, word, what, "a text in quotes", d))
    }
}

fn top_level_only(ctx: &NativeCallContext, s: &State, word: &str) -> Res<()> {
    if let Phase::InRule { .. } = s.phase {
        return fail(
            ctx,
            format!("{word}(...) belongs at the top level of the script, not inside a rule"),
        );
    }
    Ok(())
}

fn new_action(ctx: &NativeCallContext, st: &Shared, spec: ActionSpec) -> ActionValue {
    let mut s = st.borrow_mut();
    s.next_id += 1;
    let v = ActionValue {
        id: s.next_id,
        spec,
        label: None,
        line: line_of(ctx),
    };
    if let Phase::InRule { .. } = s.phase {
        // Stops and model changes act when made; the rest must be started.
        let acts_when_made = matches!(
            v.spec,
            ActionSpec::Stop(_)
                | ActionSpec::StopAll
                | ActionSpec::ChangeParam { .. }
                | ActionSpec::ResolveCause
        );
        if !acts_when_made {
            s.dangling.push(v.clone());
        }
    }
    v
}

fn fluid(ctx: &NativeCallContext, st: &Shared, word: &str, d: &Dynamic) -> Res<crate::Fluid> {
    let id = arg_text(ctx, word, "the fluid", d)?;
    let s = st.borrow();
    match s.fluids.get(&id) {
        Ok(f) => Ok(f.clone()),
        Err(e) => fail(
            ctx,
            format!("{e}; the bundled fluids are listed in scenarios/fluids.yaml, and fluids_file(\"...\") adds your own"),
        ),
    }
}

fn find_key_line(source: &str, from_line: usize, key: &str) -> Option<(usize, usize)> {
    for (i, text) in source.lines().enumerate().skip(from_line.saturating_sub(1)) {
        let mut search = 0;
        while let Some(pos) = text[search..].find(key) {
            let at = search + pos;
            let before_ok = at == 0
                || !text[..at]
                    .chars()
                    .last()
                    .is_some_and(|c| c.is_alphanumeric() || c == '_');
            let rest = text[at + key.len()..].trim_start();
            if before_ok && rest.starts_with(':') {
                return Some((i + 1, at + 1));
            }
            search = at + key.len();
        }
    }
    None
}

/// Build a [`Patient`] from a script map.
fn patient_from_map(ctx: &NativeCallContext, map: &Map, source: &str) -> Res<Patient> {
    let mut p = Patient::default();
    let line = line_of(ctx);
    let err_at = |key: &str, message: String| -> Box<EvalAltResult> {
        let pos = match find_key_line(source, line, key) {
            Some((l, c)) => rhai::Position::new(l as u16, c as u16),
            None => ctx.call_position(),
        };
        Box::new(EvalAltResult::ErrorRuntime(message.into(), pos))
    };
    for (key, value) in map {
        let key = key.as_str();
        let num = || {
            number(value).filter(|x| x.is_finite()).ok_or_else(|| {
                err_at(
                    key,
                    format!(
                        "patient: `{key}` must be a number, not {}",
                        describe(ctx, value)
                    ),
                )
            })
        };
        let text = || {
            if value.is_string() {
                Ok(value.to_string())
            } else {
                Err(err_at(
                    key,
                    format!(
                        "patient: `{key}` must be a text in quotes, not {}",
                        describe(ctx, value)
                    ),
                ))
            }
        };
        match key {
            "sex" => p.sex = text()?,
            "age_years" => p.age_years = num()?,
            "weight_kg" => p.weight_kg = num()?,
            "height_cm" => p.height_cm = Some(num()?),
            "water_fraction" => p.water_fraction = Some(num()?),
            "water_method" => p.water_method = Some(text()?),
            "na" => p.na = Some(num()?),
            "k" => p.k = Some(num()?),
            "glucose_mmol_l" => p.glucose_mmol_l = Some(num()?),
            "glucose_mg_dl" => p.glucose_mg_dl = Some(num()?),
            "urea_mmol_l" => p.urea_mmol_l = Some(num()?),
            "bun_mg_dl" => p.bun_mg_dl = Some(num()?),
            "albumin_g_l" => p.albumin_g_l = Some(num()?),
            "hematocrit" => p.hematocrit = Some(num()?),
            "onset" => p.onset = Some(text()?),
            "cause" => p.cause = Some(text()?),
            other => {
                let hint = crate::suggest::closest(other, PATIENT_FIELDS.iter().copied())
                    .map(|s| format!(" (did you mean `{s}`?)"))
                    .unwrap_or_default();
                return Err(err_at(
                    other,
                    format!(
                        "patient: unknown field `{other}`{hint}; the fields are {}",
                        PATIENT_FIELDS.join(", ")
                    ),
                ));
            }
        }
    }
    for required in ["sex", "age_years", "weight_kg"] {
        if !map.contains_key(required) {
            return fail(ctx, format!("patient: the field `{required}` is required"));
        }
    }
    // Check now, so an impossible lab is reported at its line.
    if let Err(e) = p.resolve(&crate::Params::default()) {
        let field = e.field().to_string();
        return Err(err_at(&field, format!("patient: {e}")));
    }
    Ok(p)
}

/// Resolve a data-file name against the script's folder, refusing any path
/// that leaves it.
pub(crate) fn data_path(base: &Path, name: &str) -> Result<PathBuf, String> {
    let rel = Path::new(name);
    if name.is_empty() {
        return Err("the file name is empty".into());
    }
    for c in rel.components() {
        match c {
            Component::Normal(_) | Component::CurDir => {}
            _ => {
                return Err(format!(
                "\"{name}\" leaves the script's folder: name a file in the same folder or below it"
            ))
            }
        }
    }
    let ext = rel.extension().and_then(|e| e.to_str()).unwrap_or("");
    if ext != "yaml" && ext != "yml" {
        return Err(format!("\"{name}\" is not a YAML file (.yaml or .yml)"));
    }
    let full = base.join(rel);
    // A symbolic link must not lead outside either.
    if let (Ok(real), Ok(real_base)) = (full.canonicalize(), base.canonicalize()) {
        if !real.starts_with(&real_base) {
            return Err(format!("\"{name}\" leads outside the script's folder"));
        }
    }
    Ok(full)
}

/// Register every word on `engine`, sharing `st`.
pub(crate) fn register(engine: &mut Engine, st: &Shared, source: Rc<str>) {
    // --- settings a sweep can vary -------------------------------------
    let s = st.clone();
    engine.register_fn(
        "setting",
        move |ctx: NativeCallContext, name: Dynamic, default: Dynamic| -> Res<f64> {
            let key = arg_text(&ctx, "setting", "the setting's name", &name)?;
            let fallback = arg_number(&ctx, "setting", "the default value", &default)?;
            Ok(s.borrow().settings.get(&key).copied().unwrap_or(fallback))
        },
    );
    // --- the case -----------------------------------------------------
    let s = st.clone();
    engine.register_fn(
        "title",
        move |ctx: NativeCallContext, t: Dynamic| -> Res<()> {
            let text = arg_text(&ctx, "title", "the title", &t)?;
            let mut s = s.borrow_mut();
            top_level_only(&ctx, &s, "title")?;
            s.title = Some(text);
            Ok(())
        },
    );
    let s = st.clone();
    engine.register_fn(
        "description",
        move |ctx: NativeCallContext, t: Dynamic| -> Res<()> {
            let text = arg_text(&ctx, "description", "the description", &t)?;
            let mut s = s.borrow_mut();
            top_level_only(&ctx, &s, "description")?;
            s.description = Some(text);
            Ok(())
        },
    );
    let s = st.clone();
    let src = source.clone();
    engine.register_fn(
        "patient",
        move |ctx: NativeCallContext, m: Dynamic| -> Res<()> {
            let Some(map) = m.clone().try_cast::<Map>() else {
                return Err(wrong(
                    &ctx,
                    "patient",
                    "the description",
                    "a map #{ sex: \"female\", age_years: 70, weight_kg: 60, ... }",
                    &m,
                ));
            };
            top_level_only(&ctx, &s.borrow(), "patient")?;
            if let Some((_, l)) = s.borrow().patient {
                return fail(
                    &ctx,
                    format!("the patient was already described on line {l}"),
                );
            }
            let p = patient_from_map(&ctx, &map, &src)?;
            s.borrow_mut().patient = Some((p, line_of(&ctx)));
            Ok(())
        },
    );
    let s = st.clone();
    engine.register_fn("closed_system", move |ctx: NativeCallContext| -> Res<()> {
        let mut s = s.borrow_mut();
        top_level_only(&ctx, &s, "closed_system")?;
        s.closed = Some(line_of(&ctx));
        Ok(())
    });
    let s = st.clone();
    engine.register_fn(
        "run_for",
        move |ctx: NativeCallContext, d: Dynamic| -> Res<()> {
            let d = arg_duration(&ctx, "run_for", "the length of the run", &d)?;
            let mut s = s.borrow_mut();
            top_level_only(&ctx, &s, "run_for")?;
            if !(1.0 / 60.0..=24.0 * 60.0).contains(&d.hours) {
                return fail(
                    &ctx,
                    format!("run_for({d}): a run lasts from 1 min to 60 days"),
                );
            }
            s.run_for = Some((d.hours, line_of(&ctx)));
            Ok(())
        },
    );
    let s = st.clone();
    engine.register_fn(
        "sample_every",
        move |ctx: NativeCallContext, d: Dynamic| -> Res<()> {
            let d = arg_duration(&ctx, "sample_every", "the sampling interval", &d)?;
            let mut s = s.borrow_mut();
            top_level_only(&ctx, &s, "sample_every")?;
            if d.hours < 1.0 / 3600.0 {
                return fail(
                    &ctx,
                    format!("sample_every({d}): sample at most once a second"),
                );
            }
            s.sample_every = Some((d.hours, line_of(&ctx)));
            Ok(())
        },
    );
    for arity in [1, 2] {
        let s = st.clone();
        let f = move |ctx: NativeCallContext, id: Dynamic, high: Dynamic| -> Res<()> {
            let id = arg_text(&ctx, "limits", "the guideline", &id)?;
            let Some(high_risk) = high.clone().try_cast::<bool>() else {
                return Err(wrong(&ctx, "limits", "high_risk", "true or false", &high));
            };
            let choice = match crate::limits::choose(&id, high_risk) {
                Ok(c) => c,
                Err(e) => return fail(&ctx, format!("limits: {e}")),
            };
            let mut s = s.borrow_mut();
            top_level_only(&ctx, &s, "limits")?;
            s.limits = Some((choice, line_of(&ctx)));
            Ok(())
        };
        if arity == 1 {
            engine.register_fn("limits", move |ctx: NativeCallContext, id: Dynamic| {
                f(ctx, id, Dynamic::FALSE)
            });
        } else {
            engine.register_fn("limits", f);
        }
    }
    let s = st.clone();
    engine.register_fn(
        "set_param",
        move |ctx: NativeCallContext, name: Dynamic, v: Dynamic| -> Res<()> {
            let name = arg_text(&ctx, "set_param", "the parameter name", &name)?;
            let value = arg_number(&ctx, "set_param", "the value", &v)?;
            let in_rule = matches!(s.borrow().phase, Phase::InRule { .. });
            if in_rule {
                // Inside a rule the change acts now, as change_param does.
                if let Err(e) = crate::model::check_change(&name, value) {
                    return fail(&ctx, format!("set_param: {e}"));
                }
                let a = new_action(&ctx, &s, ActionSpec::ChangeParam { name, value });
                s.borrow_mut().pending.push((a, line_of(&ctx)));
                return Ok(());
            }
            let mut s = s.borrow_mut();
            if let Err(e) = crate::Params::default().set(&name, value) {
                return fail(
                    &ctx,
                    format!("set_param: {e}; `tidewater params` lists every parameter"),
                );
            }
            s.overrides.push((name, value, line_of(&ctx)));
            Ok(())
        },
    );
    let s = st.clone();
    engine.register_fn(
        "fluids_file",
        move |ctx: NativeCallContext, name: Dynamic| -> Res<()> {
            let name = arg_text(&ctx, "fluids_file", "the file name", &name)?;
            let mut s = s.borrow_mut();
            top_level_only(&ctx, &s, "fluids_file")?;
            let path = match data_path(&s.base_dir, &name) {
                Ok(p) => p,
                Err(m) => return fail(&ctx, format!("fluids_file: {m}")),
            };
            let text = match std::fs::read_to_string(&path) {
                Ok(t) => t,
                Err(e) => return fail(&ctx, format!("fluids_file: cannot read \"{name}\": {e}")),
            };
            match FluidLibrary::from_yaml(&text, &name) {
                Ok(lib) => {
                    s.fluids.extend(lib);
                    Ok(())
                }
                // Marked so the loader can turn it into a data-file error.
                Err(e) => fail(&ctx, format!("{DATA_MARK}{}", encode_data_error(&e))),
            }
        },
    );

    // --- scheduling ---------------------------------------------------
    let s = st.clone();
    engine.register_fn("at", move |ctx: NativeCallContext, t: Dynamic, a: Dynamic| -> Res<()> {
        let t = arg_duration(&ctx, "at", "the time", &t)?;
        let actions = action_list(&ctx, "at", &a)?;
        let mut s = s.borrow_mut();
        if let Phase::InRule { .. } = s.phase {
            return fail(&ctx, "at(...) plans before the run; inside a rule use start(...) or stop(...), which act now");
        }
        for action in actions {
            s.events.push(Planned {
                time_h: t.hours,
                action,
                line: line_of(&ctx),
            });
        }
        Ok(())
    });
    let s = st.clone();
    engine.register_fn(
        "start",
        move |ctx: NativeCallContext, a: Dynamic| -> Res<()> {
            let actions = action_list(&ctx, "start", &a)?;
            let mut s = s.borrow_mut();
            for action in actions {
                match s.phase {
                    Phase::Building => s.events.push(Planned {
                        time_h: 0.0,
                        action,
                        line: line_of(&ctx),
                    }),
                    Phase::InRule { .. } => {
                        s.dangling.retain(|d| d.id != action.id);
                        s.pending.push((action, line_of(&ctx)));
                    }
                }
            }
            Ok(())
        },
    );
    let s = st.clone();
    engine.register_fn("every", move |ctx: NativeCallContext, d: Dynamic, f: Dynamic| -> Res<()> {
        let d = arg_duration(&ctx, "every", "the interval", &d)?;
        let Some(func) = f.clone().try_cast::<FnPtr>() else {
            return Err(wrong(&ctx, "every", "the rule", "a closure such as |labs| { ... }", &f));
        };
        let mut s = s.borrow_mut();
        top_level_only(&ctx, &s, "every")?;
        let minutes = d.hours * 60.0;
        if minutes < 1.0 - 1e-9 || (minutes - minutes.round()).abs() > 1e-6 {
            return fail(&ctx, format!("every({d}): a rule runs every whole number of minutes, at least every 1 min"));
        }
        s.rules.push(RuleDef {
            interval_h: d.hours,
            func,
            line: line_of(&ctx),
        });
        Ok(())
    });

    // --- actions ------------------------------------------------------
    let s = st.clone();
    engine.register_fn("infuse", move |ctx: NativeCallContext, f: Dynamic, v: Dynamic, d: Dynamic| -> Res<ActionValue> {
        let fl = fluid(&ctx, &s, "infuse", &f)?;
        if fl.kind != FluidKind::Given {
            return fail(&ctx, format!("infuse: \"{}\" describes a loss, not a fluid to give; use lose(\"{}\", ...)", fl.id, fl.id));
        }
        let volume = arg_volume(&ctx, "infuse", "the volume", &v)?;
        let d = arg_duration(&ctx, "infuse", "the duration", &d)?;
        Ok(new_action(&ctx, &s, ActionSpec::Give { fluid: fl, volume, duration_h: d.hours }))
    });
    let s = st.clone();
    engine.register_fn(
        "infuse_at_rate",
        move |ctx: NativeCallContext, f: Dynamic, r: Dynamic| -> Res<ActionValue> {
            let fl = fluid(&ctx, &s, "infuse_at_rate", &f)?;
            if fl.kind != FluidKind::Given {
                return fail(
                    &ctx,
                    format!(
                        "infuse_at_rate: \"{}\" describes a loss, not a fluid to give",
                        fl.id
                    ),
                );
            }
            let rate = arg_rate(&ctx, "infuse_at_rate", "the rate", &r)?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::GiveAtRate { fluid: fl, rate },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "drink",
        move |ctx: NativeCallContext, v: Dynamic, d: Dynamic| -> Res<ActionValue> {
            let water = s.borrow().fluids.get("water").cloned();
            let Ok(water) = water else {
                return fail(&ctx, "drink: the fluid library has no \"water\"");
            };
            let volume = arg_volume(&ctx, "drink", "the volume", &v)?;
            let d = arg_duration(&ctx, "drink", "the duration", &d)?;
            let mut a = new_action(
                &ctx,
                &s,
                ActionSpec::Drink {
                    fluid: water,
                    volume,
                    duration_h: d.hours,
                },
            );
            a.label = Some("drink".into());
            Ok(a)
        },
    );
    let s = st.clone();
    engine.register_fn(
        "drink",
        move |ctx: NativeCallContext, f: Dynamic, v: Dynamic, d: Dynamic| -> Res<ActionValue> {
            let fl = fluid(&ctx, &s, "drink", &f)?;
            if fl.kind != FluidKind::Given {
                return fail(
                    &ctx,
                    format!("drink: \"{}\" describes a loss, not a drink", fl.id),
                );
            }
            let volume = arg_volume(&ctx, "drink", "the volume", &v)?;
            let d = arg_duration(&ctx, "drink", "the duration", &d)?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::Drink {
                    fluid: fl,
                    volume,
                    duration_h: d.hours,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn("lose", move |ctx: NativeCallContext, k: Dynamic, v: Dynamic, d: Dynamic| -> Res<ActionValue> {
        let kind = arg_text(&ctx, "lose", "the kind of loss", &k)?;
        let fl = if kind == "blood" {
            None
        } else {
            let fl = fluid(&ctx, &s, "lose", &k)?;
            if fl.kind != FluidKind::Loss {
                let losses: Vec<String> = s.borrow().fluids.fluids.iter().filter(|f| f.kind == FluidKind::Loss).map(|f| f.id.clone()).collect();
                return fail(&ctx, format!("lose: \"{}\" is a fluid to give, not a kind of loss; the losses are blood, {}", fl.id, losses.join(", ")));
            }
            Some(fl)
        };
        let volume = arg_volume(&ctx, "lose", "the volume", &v)?;
        let d = arg_duration(&ctx, "lose", "the duration", &d)?;
        Ok(new_action(&ctx, &s, ActionSpec::Lose { fluid: fl, volume, duration_h: d.hours }))
    });
    let s = st.clone();
    engine.register_fn(
        "stop",
        move |ctx: NativeCallContext, l: Dynamic| -> Res<ActionValue> {
            let label = arg_text(&ctx, "stop", "the label", &l)?;
            let a = new_action(&ctx, &s, ActionSpec::Stop(label));
            let mut st = s.borrow_mut();
            if let Phase::InRule { .. } = st.phase {
                st.pending.push((a.clone(), line_of(&ctx)));
            }
            Ok(a)
        },
    );
    let s = st.clone();
    engine.register_fn(
        "change_param",
        move |ctx: NativeCallContext, name: Dynamic, v: Dynamic| -> Res<ActionValue> {
            let name = arg_text(&ctx, "change_param", "the parameter name", &name)?;
            let value = arg_number(&ctx, "change_param", "the value", &v)?;
            if let Err(e) = crate::model::check_change(&name, value) {
                return fail(
                    &ctx,
                    format!("change_param: {e}; `tidewater params` lists every parameter"),
                );
            }
            let a = new_action(&ctx, &s, ActionSpec::ChangeParam { name, value });
            let mut st = s.borrow_mut();
            if let Phase::InRule { .. } = st.phase {
                st.pending.push((a.clone(), line_of(&ctx)));
            }
            Ok(a)
        },
    );
    let s = st.clone();
    engine.register_fn(
        "resolve_cause",
        move |ctx: NativeCallContext| -> Res<ActionValue> {
            let a = new_action(&ctx, &s, ActionSpec::ResolveCause);
            let mut st = s.borrow_mut();
            if let Phase::InRule { .. } = st.phase {
                st.pending.push((a.clone(), line_of(&ctx)));
            }
            Ok(a)
        },
    );
    let s = st.clone();
    engine.register_fn(
        "stop_all",
        move |ctx: NativeCallContext| -> Res<ActionValue> {
            let a = new_action(&ctx, &s, ActionSpec::StopAll);
            let mut st = s.borrow_mut();
            if let Phase::InRule { .. } = st.phase {
                st.pending.push((a.clone(), line_of(&ctx)));
            }
            Ok(a)
        },
    );
    let s = st.clone();
    engine.register_fn(
        "desmopressin",
        move |ctx: NativeCallContext, dose: Dynamic, route: Dynamic| -> Res<ActionValue> {
            let amount = arg_amount(&ctx, "desmopressin", "the dose", &dose)?;
            let grams = amount
                .grams("desmopressin dose")
                .or_else(|m| fail(&ctx, m))?;
            let route = arg_text(&ctx, "desmopressin", "the route", &route)?;
            let route =
                Route::parse(&route).or_else(|e| fail(&ctx, format!("desmopressin: {e}")))?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::Desmopressin {
                    dose_ug: grams * 1e6,
                    route,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "v2_antagonist",
        move |ctx: NativeCallContext, dose: Dynamic| -> Res<ActionValue> {
            let amount = arg_amount(&ctx, "v2_antagonist", "the dose", &dose)?;
            let grams = amount
                .grams("V2 antagonist dose")
                .or_else(|m| fail(&ctx, m))?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::V2Antagonist {
                    dose_mg: grams * 1e3,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "loop_diuretic",
        move |ctx: NativeCallContext, dose: Dynamic| -> Res<ActionValue> {
            let amount = arg_amount(&ctx, "loop_diuretic", "the dose", &dose)?;
            let grams = amount
                .grams("loop diuretic dose")
                .or_else(|m| fail(&ctx, m))?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::LoopDiuretic {
                    dose_mg: grams * 1e3,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn("thiazide", move |ctx: NativeCallContext| -> ActionValue {
        new_action(&ctx, &s, ActionSpec::Thiazide)
    });
    let s = st.clone();
    engine.register_fn(
        "salt_tablets",
        move |ctx: NativeCallContext, a: Dynamic| -> Res<ActionValue> {
            let a = arg_amount(
                &ctx,
                "salt_tablets",
                "the amount (mmol of sodium or grams of salt)",
                &a,
            )?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::Tablets {
                    na_mmol: salt_mmol(&a),
                    k_mmol: 0.0,
                    urea_g: 0.0,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "potassium_tablets",
        move |ctx: NativeCallContext, a: Dynamic| -> Res<ActionValue> {
            let a = arg_amount(
                &ctx,
                "potassium_tablets",
                "the amount (mmol, or grams of potassium chloride)",
                &a,
            )?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::Tablets {
                    na_mmol: 0.0,
                    k_mmol: potassium_mmol(&a),
                    urea_g: 0.0,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "urea",
        move |ctx: NativeCallContext, a: Dynamic| -> Res<ActionValue> {
            let a = arg_amount(&ctx, "urea", "the amount (grams or mmol)", &a)?;
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::Tablets {
                    na_mmol: 0.0,
                    k_mmol: 0.0,
                    urea_g: urea_grams(&a),
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "fluid_restriction",
        move |ctx: NativeCallContext, v: Dynamic| -> Res<ActionValue> {
            let v = arg_volume(&ctx, "fluid_restriction", "the daily allowance", &v)?;
            if v.per_kg {
                return fail(
                    &ctx,
                    "fluid_restriction: give the daily allowance as a volume such as litres(1)",
                );
            }
            Ok(new_action(
                &ctx,
                &s,
                ActionSpec::Restrict {
                    litres_per_day: v.litres,
                },
            ))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "nil_by_mouth",
        move |ctx: NativeCallContext| -> ActionValue {
            new_action(&ctx, &s, ActionSpec::NilByMouth)
        },
    );
    engine.register_type_with_name::<ActionValue>("action");
    engine.register_fn(
        "labelled",
        |ctx: NativeCallContext, a: &mut ActionValue, l: Dynamic| -> Res<ActionValue> {
            let label = arg_text(&ctx, "labelled", "the label", &l)?;
            if !a.spec.starts_something() {
                return fail(
                    &ctx,
                    format!(
                        "labelled: \"{}\" starts nothing, so it takes no label",
                        a.spec
                    ),
                );
            }
            if label.is_empty() {
                return fail(&ctx, "labelled: the label is empty");
            }
            a.label = Some(label);
            Ok(a.clone())
        },
    );
    engine.register_fn("to_string", |a: &mut ActionValue| a.spec.to_string());
    engine.register_fn("to_debug", |a: &mut ActionValue| a.spec.to_string());

    // --- expectations -------------------------------------------------
    register_expectations(engine, st);

    // --- labs in rules ------------------------------------------------
    super::rules::register_labs(engine);

    // --- sandbox: words that must not do what they do elsewhere --------
    const NO_SLEEP: &str = "sleep() is not available in scenario scripts: simulated time moves with at(...) and every(...)";
    engine.register_fn("sleep", |ctx: NativeCallContext, _x: INT| -> Res<()> {
        fail(&ctx, NO_SLEEP)
    });
    engine.register_fn("sleep", |ctx: NativeCallContext, _x: FLOAT| -> Res<()> {
        fail(&ctx, NO_SLEEP)
    });
    engine.register_fn("sleep", |ctx: NativeCallContext, _x: Dynamic| -> Res<()> {
        fail(&ctx, NO_SLEEP)
    });
    for arity in [0, 1] {
        let f = |ctx: NativeCallContext| -> Res<()> {
            fail(&ctx, "exit() is not available in scenario scripts: the script describes a case, and the run decides when it ends (run_for)")
        };
        if arity == 0 {
            engine.register_fn("exit", f);
        } else {
            engine.register_fn("exit", move |ctx: NativeCallContext, _v: Dynamic| f(ctx));
        }
    }
}

/// Marker for a data-file error raised by `fluids_file`, decoded by the loader.
pub(crate) const DATA_MARK: &str = "\u{1}data\u{1}";

fn encode_data_error(e: &crate::InputError) -> String {
    match e {
        crate::InputError::DataFile {
            file,
            location,
            message,
        } => {
            let (l, c) = location.unwrap_or((0, 0));
            format!("{file}\u{1}{l}\u{1}{c}\u{1}{message}")
        }
        other => format!("\u{1}0\u{1}0\u{1}{other}"),
    }
}

/// A data-file error: file, line and column, message.
pub(crate) type DataError = (String, Option<(usize, usize)>, String);

/// Decode a data-file error raised by `fluids_file`: (file, location, message).
pub(crate) fn decode_data_error(text: &str) -> Option<DataError> {
    let rest = text.strip_prefix(DATA_MARK)?;
    let mut parts = rest.splitn(4, '\u{1}');
    let file = parts.next()?.to_string();
    let l: usize = parts.next()?.parse().ok()?;
    let c: usize = parts.next()?.parse().ok()?;
    let message = parts.next()?.to_string();
    Some((file, (l > 0).then_some((l, c)), message))
}

fn action_list(ctx: &NativeCallContext, word: &str, a: &Dynamic) -> Res<Vec<ActionValue>> {
    if let Some(v) = a.clone().try_cast::<ActionValue>() {
        return Ok(vec![v]);
    }
    if let Some(arr) = a.clone().try_cast::<Array>() {
        let mut out = Vec::with_capacity(arr.len());
        for item in &arr {
            match item.clone().try_cast::<ActionValue>() {
                Some(v) => out.push(v),
                None => {
                    return Err(wrong(
                        ctx,
                        word,
                        "each item of the list",
                        "an action such as infuse(...) or stop(...)",
                        item,
                    ))
                }
            }
        }
        return Ok(out);
    }
    Err(wrong(
        ctx,
        word,
        "the action",
        "an action such as infuse(...), drink(...) or stop(...)",
        a,
    ))
}

fn quantity(ctx: &NativeCallContext, word: &str, d: &Dynamic) -> Res<String> {
    let name = arg_text(ctx, word, "the quantity", d)?;
    if lab_names().any(|n| n == name) {
        Ok(name)
    } else {
        let hint = crate::suggest::closest(&name, lab_names())
            .map(|s| format!(" (did you mean \"{s}\"?)"))
            .unwrap_or_default();
        fail(
            ctx,
            format!(
                "{word}: unknown quantity \"{name}\"{hint}; the quantities are {}",
                lab_names().collect::<Vec<_>>().join(", ")
            ),
        )
    }
}

fn push_expectation(ctx: &NativeCallContext, st: &Shared, word: &str, check: Check) -> Res<()> {
    let mut s = st.borrow_mut();
    top_level_only(ctx, &s, word)?;
    s.expectations.push(Expectation {
        line: line_of(ctx),
        check,
    });
    Ok(())
}

fn register_expectations(engine: &mut Engine, st: &Shared) {
    let s = st.clone();
    engine.register_fn(
        "expect_between",
        move |ctx: NativeCallContext,
              q: Dynamic,
              t: Dynamic,
              lo: Dynamic,
              hi: Dynamic|
              -> Res<()> {
            let w = "expect_between";
            let q = quantity(&ctx, w, &q)?;
            let t = arg_duration(&ctx, w, "the time", &t)?;
            let lo = arg_number(&ctx, w, "the low end", &lo)?;
            let hi = arg_number(&ctx, w, "the high end", &hi)?;
            if lo > hi {
                return fail(
                    &ctx,
                    format!("{w}: the low end {lo} is above the high end {hi}"),
                );
            }
            push_expectation(
                &ctx,
                &s,
                w,
                Check::Between {
                    quantity: q,
                    time_h: t.hours,
                    lo,
                    hi,
                },
            )
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_above",
        move |ctx: NativeCallContext, q: Dynamic, t: Dynamic, v: Dynamic| -> Res<()> {
            let w = "expect_above";
            let q = quantity(&ctx, w, &q)?;
            let t = arg_duration(&ctx, w, "the time", &t)?;
            let v = arg_number(&ctx, w, "the value", &v)?;
            push_expectation(
                &ctx,
                &s,
                w,
                Check::Between {
                    quantity: q,
                    time_h: t.hours,
                    lo: v,
                    hi: f64::INFINITY,
                },
            )
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_below",
        move |ctx: NativeCallContext, q: Dynamic, t: Dynamic, v: Dynamic| -> Res<()> {
            let w = "expect_below";
            let q = quantity(&ctx, w, &q)?;
            let t = arg_duration(&ctx, w, "the time", &t)?;
            let v = arg_number(&ctx, w, "the value", &v)?;
            push_expectation(
                &ctx,
                &s,
                w,
                Check::Between {
                    quantity: q,
                    time_h: t.hours,
                    lo: f64::NEG_INFINITY,
                    hi: v,
                },
            )
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_change",
        move |ctx: NativeCallContext,
              q: Dynamic,
              from: Dynamic,
              to: Dynamic,
              lo: Dynamic,
              hi: Dynamic|
              -> Res<()> {
            let w = "expect_change";
            let q = quantity(&ctx, w, &q)?;
            let from = arg_duration(&ctx, w, "the start time", &from)?;
            let to = arg_duration(&ctx, w, "the end time", &to)?;
            let lo = arg_number(&ctx, w, "the low end", &lo)?;
            let hi = arg_number(&ctx, w, "the high end", &hi)?;
            if lo > hi {
                return fail(
                    &ctx,
                    format!("{w}: the low end {lo} is above the high end {hi}"),
                );
            }
            push_expectation(
                &ctx,
                &s,
                w,
                Check::Change {
                    quantity: q,
                    from_h: from.hours,
                    to_h: to.hours,
                    lo,
                    hi,
                },
            )
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_always_between",
        move |ctx: NativeCallContext, q: Dynamic, lo: Dynamic, hi: Dynamic| -> Res<()> {
            let w = "expect_always_between";
            let q = quantity(&ctx, w, &q)?;
            let lo = arg_number(&ctx, w, "the low end", &lo)?;
            let hi = arg_number(&ctx, w, "the high end", &hi)?;
            push_expectation(
                &ctx,
                &s,
                w,
                Check::Always {
                    quantity: q,
                    lo,
                    hi,
                },
            )
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_max_rise_24h",
        move |ctx: NativeCallContext, v: Dynamic| -> Res<()> {
            let v = arg_number(&ctx, "expect_max_rise_24h", "the largest rise (mmol/L)", &v)?;
            push_expectation(&ctx, &s, "expect_max_rise_24h", Check::MaxRise24h(v))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_max_fall_24h",
        move |ctx: NativeCallContext, v: Dynamic| -> Res<()> {
            let v = arg_number(&ctx, "expect_max_fall_24h", "the largest fall (mmol/L)", &v)?;
            push_expectation(&ctx, &s, "expect_max_fall_24h", Check::MaxFall24h(v))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_no_flags",
        move |ctx: NativeCallContext| -> Res<()> {
            push_expectation(&ctx, &s, "expect_no_flags", Check::NoFlags)
        },
    );
    let s = st.clone();
    engine.register_fn("expect_flag", move |ctx: NativeCallContext| -> Res<()> {
        push_expectation(&ctx, &s, "expect_flag", Check::Flag(None))
    });
    let s = st.clone();
    engine.register_fn(
        "expect_flag",
        move |ctx: NativeCallContext, t: Dynamic| -> Res<()> {
            let t = arg_text(&ctx, "expect_flag", "the text of the flag", &t)?;
            push_expectation(&ctx, &s, "expect_flag", Check::Flag(Some(t)))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "expect_logged",
        move |ctx: NativeCallContext, t: Dynamic| -> Res<()> {
            let t = arg_text(&ctx, "expect_logged", "the text", &t)?;
            push_expectation(&ctx, &s, "expect_logged", Check::Logged(t))
        },
    );
}
