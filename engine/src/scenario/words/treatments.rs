//! Treatments and losses: infusions and boluses, drinks, tablets, drugs,
//! restrictions, losses, stops, and labels on the actions they make.

use super::super::actions::{potassium_mmol, salt_mmol, urea_grams, ActionSpec};
use super::super::units::fail;
use super::args::{
    arg_amount, arg_duration, arg_number, arg_rate, arg_text, arg_volume, line_of, Res,
};
use super::state::{ActionValue, Phase, Shared};
use crate::fluids::FluidKind;
use crate::plan::Route;
use rhai::{Dynamic, Engine, NativeCallContext};

/// A new action value made on the current line; one made inside a rule is
/// remembered until `start(...)` takes it (stops act at once).
pub(super) fn new_action(ctx: &NativeCallContext, st: &Shared, spec: ActionSpec) -> ActionValue {
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

/// An action that acts when it is made (a stop, a model change): inside a
/// rule it is queued for now; at the top level it is returned to be planned.
pub(super) fn acts_now(ctx: &NativeCallContext, st: &Shared, a: ActionValue) -> ActionValue {
    let mut s = st.borrow_mut();
    if let Phase::InRule { .. } = s.phase {
        s.pending.push((a.clone(), line_of(ctx)));
    }
    a
}

/// `loop_diuretic(dose)` (intravenous) or `loop_diuretic(dose, route)`.
fn loop_diuretic(
    ctx: &NativeCallContext,
    s: &Shared,
    dose: &Dynamic,
    route: Option<&Dynamic>,
) -> Res<ActionValue> {
    let amount = arg_amount(ctx, "loop_diuretic", "the dose", dose)?;
    let grams = amount
        .grams("loop diuretic dose")
        .or_else(|m| fail(ctx, m))?;
    let route = match route {
        None => Route::Intravenous,
        Some(r) => {
            let text = arg_text(ctx, "loop_diuretic", "the route", r)?;
            match Route::parse(&text) {
                Ok(r @ (Route::Intravenous | Route::Oral)) => r,
                Ok(_) => return fail(ctx, format!("loop_diuretic: route \"{text}\" is not given for a loop diuretic; use \"iv\" or \"oral\"")),
                Err(e) => return fail(ctx, format!("loop_diuretic: {e}")),
            }
        }
    };
    Ok(new_action(
        ctx,
        s,
        ActionSpec::LoopDiuretic {
            dose_mg: grams * 1e3,
            route,
        },
    ))
}

/// The fluid argument of `word`, looked up in the library.
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

/// Register the treatment words.
pub(super) fn register(engine: &mut Engine, st: &Shared) {
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
            Ok(acts_now(&ctx, &s, a))
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
            Ok(acts_now(&ctx, &s, a))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "resolve_cause",
        move |ctx: NativeCallContext| -> Res<ActionValue> {
            let a = new_action(&ctx, &s, ActionSpec::ResolveCause);
            Ok(acts_now(&ctx, &s, a))
        },
    );
    let s = st.clone();
    engine.register_fn(
        "stop_all",
        move |ctx: NativeCallContext| -> Res<ActionValue> {
            let a = new_action(&ctx, &s, ActionSpec::StopAll);
            Ok(acts_now(&ctx, &s, a))
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
            loop_diuretic(&ctx, &s, &dose, None)
        },
    );
    let s = st.clone();
    engine.register_fn(
        "loop_diuretic",
        move |ctx: NativeCallContext, dose: Dynamic, route: Dynamic| -> Res<ActionValue> {
            loop_diuretic(&ctx, &s, &dose, Some(&route))
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
}
