//! Expectations: `expect_*` words, checked against the run when it ends.

use super::super::expect::{Check, Expectation};
use super::super::rules::lab_names;
use super::super::units::fail;
use super::args::{arg_duration, arg_number, arg_text, line_of, top_level_only, Res};
use super::state::Shared;
use rhai::{Dynamic, Engine, NativeCallContext};

/// The quantity argument of `word`: the name of a lab, in quotes.
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

/// Keep an expectation made on the current line (top level only).
fn push_expectation(ctx: &NativeCallContext, st: &Shared, word: &str, check: Check) -> Res<()> {
    let mut s = st.borrow_mut();
    top_level_only(ctx, &s, word)?;
    s.expectations.push(Expectation {
        line: line_of(ctx),
        check,
    });
    Ok(())
}

/// Register the expectation word `$word` with script arguments `$arg...`:
/// `$body` reads them (with `$ctx`, the call, and `$w`, the word) into a
/// [`Check`], kept as an expectation of the line that made it. Arguments
/// are read before the top-level check, so a bad argument is named first.
macro_rules! expectation {
    ($engine:expr, $st:expr, $word:literal, |$ctx:ident, $w:ident $(, $arg:ident)*| $body:block) => {{
        let s = $st.clone();
        $engine.register_fn(
            $word,
            move |call: NativeCallContext $(, $arg: Dynamic)*| -> Res<()> {
                let $ctx = &call;
                let $w: &str = $word;
                let check: Check = $body;
                push_expectation($ctx, &s, $w, check)
            },
        );
    }};
}

/// Register the expectation words.
pub(super) fn register(engine: &mut Engine, st: &Shared) {
    expectation!(engine, st, "expect_between", |ctx, w, q, t, lo, hi| {
        let q = quantity(ctx, w, &q)?;
        let t = arg_duration(ctx, w, "the time", &t)?;
        let lo = arg_number(ctx, w, "the low end", &lo)?;
        let hi = arg_number(ctx, w, "the high end", &hi)?;
        if lo > hi {
            return fail(
                ctx,
                format!("{w}: the low end {lo} is above the high end {hi}"),
            );
        }
        Check::Between {
            quantity: q,
            time_h: t.hours,
            lo,
            hi,
        }
    });
    expectation!(engine, st, "expect_above", |ctx, w, q, t, v| {
        let q = quantity(ctx, w, &q)?;
        let t = arg_duration(ctx, w, "the time", &t)?;
        let v = arg_number(ctx, w, "the value", &v)?;
        Check::Between {
            quantity: q,
            time_h: t.hours,
            lo: v,
            hi: f64::INFINITY,
        }
    });
    expectation!(engine, st, "expect_below", |ctx, w, q, t, v| {
        let q = quantity(ctx, w, &q)?;
        let t = arg_duration(ctx, w, "the time", &t)?;
        let v = arg_number(ctx, w, "the value", &v)?;
        Check::Between {
            quantity: q,
            time_h: t.hours,
            lo: f64::NEG_INFINITY,
            hi: v,
        }
    });
    expectation!(
        engine,
        st,
        "expect_change",
        |ctx, w, q, from, to, lo, hi| {
            let q = quantity(ctx, w, &q)?;
            let from = arg_duration(ctx, w, "the start time", &from)?;
            let to = arg_duration(ctx, w, "the end time", &to)?;
            let lo = arg_number(ctx, w, "the low end", &lo)?;
            let hi = arg_number(ctx, w, "the high end", &hi)?;
            if lo > hi {
                return fail(
                    ctx,
                    format!("{w}: the low end {lo} is above the high end {hi}"),
                );
            }
            Check::Change {
                quantity: q,
                from_h: from.hours,
                to_h: to.hours,
                lo,
                hi,
            }
        }
    );
    expectation!(engine, st, "expect_always_between", |ctx, w, q, lo, hi| {
        let q = quantity(ctx, w, &q)?;
        let lo = arg_number(ctx, w, "the low end", &lo)?;
        let hi = arg_number(ctx, w, "the high end", &hi)?;
        Check::Always {
            quantity: q,
            lo,
            hi,
        }
    });
    expectation!(engine, st, "expect_max_rise_24h", |ctx, w, v| {
        Check::MaxRise24h(arg_number(ctx, w, "the largest rise (mmol/L)", &v)?)
    });
    expectation!(engine, st, "expect_max_fall_24h", |ctx, w, v| {
        Check::MaxFall24h(arg_number(ctx, w, "the largest fall (mmol/L)", &v)?)
    });
    expectation!(engine, st, "expect_no_flags", |ctx, w| { Check::NoFlags });
    expectation!(engine, st, "expect_flag", |ctx, w| { Check::Flag(None) });
    expectation!(engine, st, "expect_flag", |ctx, w, t| {
        Check::Flag(Some(arg_text(ctx, w, "the text of the flag", &t)?))
    });
    expectation!(engine, st, "expect_logged", |ctx, w, t| {
        Check::Logged(arg_text(ctx, w, "the text", &t)?)
    });
}
