//! Arguments of words: typed values out of script values, and messages that
//! name the word, the argument, what was expected and what was given.

use super::super::units::{fail, Amount, Duration, Rate, Volume};
use super::state::{Phase, State};
use super::usage;
use crate::error::InputError;
use rhai::{Dynamic, EvalAltResult, NativeCallContext, FLOAT, INT};

pub(super) type Res<T> = Result<T, Box<EvalAltResult>>;

/// The script line of the current call.
pub(super) fn line_of(ctx: &NativeCallContext) -> usize {
    ctx.call_position().line().unwrap_or(0)
}

/// A plain number (integer or float).
pub(super) fn number(d: &Dynamic) -> Option<f64> {
    if let Some(x) = d.clone().try_cast::<FLOAT>() {
        Some(x)
    } else {
        d.clone().try_cast::<INT>().map(|x| x as f64)
    }
}

/// How a value looks in a message: "a bare number 500", "a volume (500 mL)".
pub(super) fn describe(ctx: &NativeCallContext, d: &Dynamic) -> String {
    if let Some(x) = number(d) {
        if !x.is_finite() {
            return format!(
                "{x} (not a finite number: a division by zero or an overflow in the script?)"
            );
        }
        return format!("a bare number ({})", crate::numeric::show(x));
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

/// The error for argument `what` of `word`: it must be `expected`, not `got`.
pub(super) fn wrong(
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

pub(super) fn arg_duration(
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

pub(super) fn arg_volume(
    ctx: &NativeCallContext,
    word: &str,
    what: &str,
    d: &Dynamic,
) -> Res<Volume> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "a volume such as ml(500), litres(1) or ml_per_kg(20)",
    )
}

pub(super) fn arg_rate(ctx: &NativeCallContext, word: &str, what: &str, d: &Dynamic) -> Res<Rate> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "a rate such as ml_per_h(80) or ml_per_kg_per_h(1)",
    )
}

pub(super) fn arg_amount(
    ctx: &NativeCallContext,
    word: &str,
    what: &str,
    d: &Dynamic,
) -> Res<Amount> {
    arg_typed(
        ctx,
        word,
        what,
        d,
        "an amount such as mmol(40), grams(9), mg(40) or micrograms(2)",
    )
}

pub(super) fn arg_number(ctx: &NativeCallContext, word: &str, what: &str, d: &Dynamic) -> Res<f64> {
    number(d)
        .filter(|x| x.is_finite())
        .ok_or_else(|| wrong(ctx, word, what, "a number", d))
}

pub(super) fn arg_text(
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

/// An error unless the top level of the script runs (not a rule).
pub(super) fn top_level_only(ctx: &NativeCallContext, s: &State, word: &str) -> Res<()> {
    if let Phase::InRule { .. } = s.phase {
        return fail(
            ctx,
            format!("{word}(...) belongs at the top level of the script, not inside a rule"),
        );
    }
    Ok(())
}

/// An input error (a bad data file) raised as itself at the position of the
/// current call; the loader turns it into a [`ScenarioError`] that points
/// into the data file.
///
/// [`ScenarioError`]: super::super::ScenarioError
pub(super) fn fail_input<T>(ctx: &NativeCallContext, e: InputError) -> Res<T> {
    Err(Box::new(EvalAltResult::ErrorRuntime(
        Dynamic::from(e),
        ctx.call_position(),
    )))
}
