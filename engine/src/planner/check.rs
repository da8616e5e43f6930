//! The checks of a request before any run: the goal, its time, the
//! form's start, duration, rates and bolus sizes, each error naming the
//! command-line option.

use super::{Evaluator, Form, PlanError, Request};

/// Refuse a request that cannot be planned, naming the option.
pub(crate) fn check_request<E: Evaluator>(eval: &E, request: &Request) -> Result<(), PlanError> {
    let plan = eval.plan();
    let goal = request.goal;
    let bad = |field: &str, value: String, expected: &str| {
        Err(PlanError::Input(crate::error::InputError::BadChoice {
            field: field.into(),
            value,
            expected: expected.into(),
        }))
    };
    if !(goal.low_mmol_l.is_finite() && goal.high_mmol_l.is_finite())
        || goal.low_mmol_l > goal.high_mmol_l
    {
        return bad(
            "goal",
            format!("{}..{}", goal.low_mmol_l, goal.high_mmol_l),
            "LOW..HIGH with LOW <= HIGH, in mmol/L",
        );
    }
    if !(goal.by_h > 0.0 && goal.by_h <= plan.duration_h) {
        return bad(
            "by",
            goal.by_h.to_string(),
            &format!(
                "a time after the start, at most the scenario's run ({} h)",
                plan.duration_h
            ),
        );
    }
    let from_h = match request.form {
        Form::Rate { from_h, .. } | Form::Bolus { from_h, .. } => from_h,
    };
    if !(from_h >= 0.0 && from_h < goal.by_h) {
        return bad("from", from_h.to_string(), "a start before the goal's time");
    }
    match request.form {
        Form::Rate {
            for_h,
            max_rate_ml_h,
            ..
        } => {
            if !(for_h > 0.0 && for_h.is_finite()) {
                return bad("for", for_h.to_string(), "a positive duration in hours");
            }
            if !(max_rate_ml_h > 0.0 && max_rate_ml_h.is_finite()) {
                return bad(
                    "max-rate",
                    max_rate_ml_h.to_string(),
                    "a positive rate in mL/h",
                );
            }
        }
        Form::Bolus {
            bolus_h,
            every_h,
            max_count,
            max_bolus_ml,
            ..
        } => {
            if !(bolus_h > 0.0 && every_h >= bolus_h && every_h.is_finite()) {
                return bad(
                    "bolus-every",
                    every_h.to_string(),
                    "an interval at least the bolus duration",
                );
            }
            if !(1..=10).contains(&max_count) {
                return bad("max-boluses", max_count.to_string(), "1 to 10");
            }
            if !(max_bolus_ml > 0.0 && max_bolus_ml.is_finite()) {
                return bad(
                    "max-bolus",
                    max_bolus_ml.to_string(),
                    "a positive volume in mL",
                );
            }
        }
    }
    Ok(())
}
