//! Timing: `at` plans actions before the run, `start` acts now (inside a
//! rule), `every` sets a rule to run at an interval.

use super::super::units::fail;
use super::args::{arg_duration, line_of, top_level_only, wrong, Res};
use super::state::{ActionValue, Phase, Planned, RuleDef, Shared};
use rhai::{Array, Dynamic, Engine, FnPtr, NativeCallContext};

/// One action or a list of actions (`at(t, [a, b])`).
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

/// Register the timing words.
pub(super) fn register(engine: &mut Engine, st: &Shared) {
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
}
