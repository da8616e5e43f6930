//! The case: the patient, its settings and parameters, switches of the
//! model, the length of the run and its sampling, the script's own fluids.

use super::super::units::fail;
use super::args::{
    arg_duration, arg_number, arg_text, describe, fail_input, line_of, number, top_level_only,
    wrong, Res,
};
use super::state::{Phase, Shared};
use crate::fluids::FluidLibrary;
use crate::patient::{Patient, Sex, Word};
use rhai::{Dynamic, Engine, EvalAltResult, Map, NativeCallContext};
use std::path::{Component, Path, PathBuf};
use std::rc::Rc;

/// Line and column of `key:` in `source`, searching from `from_line` on.
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

/// A word of a patient map (`sex`, `onset`, ...), its error worded for
/// the script.
fn choice<W: Word>(text: String) -> Result<W, String> {
    W::parse(&text).map_err(|e| format!("patient: {e}"))
}

/// Build a [`Patient`] from a script map.
fn patient_from_map(ctx: &NativeCallContext, map: &Map, source: &str) -> Res<Patient> {
    // Sex, age and weight are required: checked below once every key is read.
    let mut p = Patient::healthy(Sex::Female, 0.0, 0.0);
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
            "sex" => p.sex = choice(text()?).map_err(|m| err_at(key, m))?,
            "age_years" => p.age_years = num()?,
            "weight_kg" => p.weight_kg = num()?,
            "height_cm" => p.height_cm = Some(num()?),
            "water_fraction" => p.water_fraction = Some(num()?),
            "water_method" => p.water_method = Some(choice(text()?).map_err(|m| err_at(key, m))?),
            "na" => p.na = Some(num()?),
            "k" => p.k = Some(num()?),
            "glucose_mmol_l" => p.glucose_mmol_l = Some(num()?),
            "glucose_mg_dl" => p.glucose_mg_dl = Some(num()?),
            "urea_mmol_l" => p.urea_mmol_l = Some(num()?),
            "bun_mg_dl" => p.bun_mg_dl = Some(num()?),
            "albumin_g_l" => p.albumin_g_l = Some(num()?),
            "hematocrit" => p.hematocrit = Some(num()?),
            "onset" => p.onset = Some(choice(text()?).map_err(|m| err_at(key, m))?),
            "symptoms" => p.symptoms = Some(choice(text()?).map_err(|m| err_at(key, m))?),
            "cause" => p.cause = Some(choice(text()?).map_err(|m| err_at(key, m))?),
            other => {
                let hint =
                    crate::suggest::closest(other, crate::patient::PATIENT_FIELDS.iter().copied())
                        .map(|s| format!(" (did you mean `{s}`?)"))
                        .unwrap_or_default();
                return Err(err_at(
                    other,
                    format!(
                        "patient: unknown field `{other}`{hint}; the fields are {}",
                        crate::patient::PATIENT_FIELDS.join(", ")
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
fn data_path(base: &Path, name: &str) -> Result<PathBuf, String> {
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

/// Register the words of the case.
pub(super) fn register(engine: &mut Engine, st: &Shared, source: Rc<str>) {
    // --- settings a sweep can vary -------------------------------------
    let s = st.clone();
    engine.register_fn(
        "setting",
        move |ctx: NativeCallContext, name: Dynamic, default: Dynamic| -> Res<f64> {
            let key = arg_text(&ctx, "setting", "the setting's name", &name)?;
            let fallback = arg_number(&ctx, "setting", "the default value", &default)?;
            let mut s = s.borrow_mut();
            let value = s.settings.get(&key).copied().unwrap_or(fallback);
            s.settings_read.insert(key);
            Ok(value)
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
                let a = super::treatments::new_action(
                    &ctx,
                    &s,
                    super::super::actions::ActionSpec::ChangeParam { name, value },
                );
                super::treatments::acts_now(&ctx, &s, a);
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
            let text = match crate::textfile::read_text(&path) {
                Ok(t) => t,
                Err(e) => return fail(&ctx, format!("fluids_file: cannot read \"{name}\": {e}")),
            };
            match FluidLibrary::from_yaml(&text, &name) {
                Ok(lib) => {
                    s.fluids.extend(lib);
                    Ok(())
                }
                // Raised as itself: the loader reports it at its line in
                // the data file.
                Err(e) => fail_input(&ctx, e),
            }
        },
    );
}
