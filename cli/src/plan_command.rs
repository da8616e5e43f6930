//! `tidewater plan`: the correction planner's answer as text or JSON.
//! The search itself is the engine's (`tidewater::planner`).

use crate::cli::{PlanArgs, PlanForm};
use crate::options::Style;
use anyhow::{anyhow, bail, Context, Result};
use serde_json::json;
use tidewater::planner::relower::{self, Clamp, RelowerRequest};
use tidewater::planner::uncertainty::{self, Uncertainty};
use tidewater::planner::{
    find_dose, Answer, Evaluator, Form, Goal, Outcome, Request, ScenarioEvaluator, Verdict,
};
use tidewater::scenario::Scenario;
use tidewater::sweep::{Design, SweepSpec};

/// Run `plan`; `Ok(true)` when the goal is met within the limits.
pub fn plan_command(args: PlanArgs, style: Style) -> Result<bool> {
    let scenario = Scenario::load(&args.script).map_err(|e| anyhow!("{e}"))?;
    let title = scenario.title().to_string();
    let limits = scenario.plan().limits.clone();
    let fluid_id = match (&args.fluid, args.relower) {
        (Some(f), _) => f.clone(),
        (None, true) => "dextrose_5".into(),
        (None, false) => bail!("--fluid is needed"),
    };
    let fluid = scenario
        .fluid(&fluid_id)
        .map_err(|e| anyhow!("--fluid: {e}"))?;
    let mut eval = ScenarioEvaluator::new(scenario);
    if let Some(path) = &args.observed {
        eval.base = Some(fitted_plan(&eval.scenario, path)?);
    }
    let header = json!({
        "scenario": args.script.display().to_string(),
        "title": title,
        "guideline": limits.guideline.id,
        "high_risk": limits.high_risk,
        "caution": tidewater::CAUTION,
    });
    if args.relower {
        let req = RelowerRequest {
            fluid,
            from_h: args.from,
            by_h: args.by,
            clamp: args.clamp.map(|dose_ug| Clamp {
                dose_ug,
                every_h: args.clamp_every,
            }),
            floor_mmol_l: args.floor,
            max_rate_ml_h: args.max_rate,
        };
        let r = relower::relower(&mut eval, &req).map_err(|e| anyhow!("{e}"))?;
        if args.json {
            let mut v = header;
            v["relowering"] = serde_json::to_value(&r)?;
            println!("{}", serde_json::to_string_pretty(&v)?);
        } else {
            print_relowering(&r, &title, style);
        }
        return Ok(r.answer.met());
    }
    let (low, high) = match (&args.goal_rise, &args.goal_fall) {
        (Some(g), None) => parse_range(g, "--goal-rise")?,
        (None, Some(g)) => {
            let (a, b) = parse_range(g, "--goal-fall")?;
            (-b, -a)
        }
        _ => bail!("give the goal: --goal-rise LOW..HIGH or --goal-fall LOW..HIGH (mmol/L)"),
    };
    let goal = Goal {
        low_mmol_l: low,
        high_mmol_l: high,
        by_h: args.by,
    };
    let form = match args.form {
        PlanForm::Rate => Form::Rate {
            from_h: args.from,
            for_h: args.for_h.unwrap_or(args.by - args.from),
            max_rate_ml_h: args.max_rate,
        },
        PlanForm::Bolus => Form::Bolus {
            from_h: args.from,
            bolus_h: args.bolus_minutes / 60.0,
            every_h: args.bolus_every / 60.0,
            max_count: args.max_boluses,
            max_bolus_ml: args.max_bolus,
        },
    };
    let request = Request {
        fluid: fluid.clone(),
        goal,
        form,
    };
    let answer = find_dose(&mut eval, &request).map_err(|e| anyhow!("{e}"))?;
    let spread = match args.uncertainty {
        Some(n) => Some(run_uncertainty(
            &args, &eval, &answer, &request, n as usize,
        )?),
        None => None,
    };
    if args.json {
        let mut v = header;
        v["plan"] = serde_json::to_value(&answer)?;
        if let Some(u) = &spread {
            v["uncertainty"] = serde_json::to_value(u)?;
        }
        println!("{}", serde_json::to_string_pretty(&v)?);
    } else {
        print_answer(&answer, &title, style);
        if let Some(u) = &spread {
            print_uncertainty(u, &answer);
        }
        println!("\n{}", tidewater::CAUTION);
    }
    Ok(answer.met())
}

fn run_uncertainty(
    args: &PlanArgs,
    eval: &ScenarioEvaluator,
    answer: &Answer,
    request: &Request,
    n: usize,
) -> Result<Uncertainty> {
    let spec = match &args.unknowns {
        Some(path) => {
            let text = tidewater::textfile::read_text(path)
                .with_context(|| format!("--unknowns {}", path.display()))?;
            let mut spec = SweepSpec::from_yaml(&text, &path.display().to_string())
                .map_err(|e| anyhow!("{e}"))?;
            if spec.design != Design::Grid {
                spec.members = Some(n);
            }
            spec
        }
        None => uncertainty::default_unknowns(eval.plan(), n).map_err(|e| anyhow!("{e}"))?,
    };
    if !(args.risk > 0.0 && args.risk < 1.0) {
        bail!("--risk: {} is not a probability between 0 and 1", args.risk);
    }
    let script = args.script.clone();
    let rtol = spec.rtol;
    let base = eval.base.clone();
    let make = move || -> Result<Box<dyn Evaluator>, String> {
        let scenario = Scenario::load(&script).map_err(|e| e.to_string())?;
        Ok(Box::new(ScenarioEvaluator {
            scenario,
            rtol,
            base: base.clone(),
        }))
    };
    let threads = args.threads.unwrap_or_else(crate::options::all_cores);
    uncertainty::uncertainty(
        &make,
        &spec,
        request,
        answer.outcome.dose,
        args.risk,
        threads,
    )
    .map_err(|e| anyhow!("{e}"))
}

/// The scenario's plan for the patient fitted to the labs in `path`
/// (default unknowns), so the planner answers "given what we have seen,
/// what now?".
fn fitted_plan(scenario: &Scenario, path: &std::path::Path) -> Result<tidewater::Plan> {
    let observations =
        tidewater::observations::Observations::load(path).map_err(|e| anyhow!("{e}"))?;
    let unknowns = tidewater::fit::default_unknowns(scenario.plan()).map_err(|e| anyhow!("{e}"))?;
    let model = tidewater::fit::FitModel::new(scenario, &unknowns, &observations);
    let fit = tidewater::fit::fit(&model).map_err(|e| anyhow!("{e}"))?;
    eprintln!(
        "fitted to {}: {}",
        path.display(),
        fit.estimates
            .iter()
            .map(|e| format!("{} {:.3}", e.name, e.value))
            .collect::<Vec<_>>()
            .join(", ")
    );
    model.plan(&fit.values(), None).map_err(|e| anyhow!("{e}"))
}

/// `LOW..HIGH` as two numbers.
fn parse_range(text: &str, option: &str) -> Result<(f64, f64)> {
    let (a, b) = text
        .split_once("..")
        .ok_or_else(|| anyhow!("{option}: \"{text}\" is not LOW..HIGH (for example 4..6)"))?;
    let num = |s: &str| -> Result<f64> {
        let v: f64 = s
            .trim()
            .parse()
            .map_err(|_| anyhow!("{option}: \"{s}\" in \"{text}\" is not a number"))?;
        if v.is_finite() {
            Ok(v)
        } else {
            bail!("{option}: \"{s}\" is not a finite number")
        }
    };
    let (a, b) = (num(a)?, num(b)?);
    if a < 0.0 || b < a {
        bail!("{option}: \"{text}\" must be LOW..HIGH with 0 <= LOW <= HIGH, in mmol/L");
    }
    Ok((a, b))
}

fn print_answer(a: &Answer, title: &str, style: Style) {
    let g = &a.goal;
    println!("Plan: {title}");
    println!(
        "  goal: sodium change {:+.1}..{:+.1} mmol/L by {} h (aiming {:+.1}); start {:.1} mmol/L, total body water {:.1} L",
        g.low_mmol_l,
        g.high_mmol_l,
        g.by_h,
        g.middle(),
        a.background.na_start_mmol_l,
        a.total_body_water_l
    );
    let dose = tidewater::planner::describe(&a.outcome.dose, &a.fluid);
    let why_not = format!("no dose of {} meets the goal within the limits: ", a.fluid);
    print_verdict(a, &dose, &why_not, style);

    print_course(&a.outcome, &a.background);
    println!(
        "  bedside formula: Adrogué–Madias (closed body, TBW {:.1} L) predicts {:+.1} mmol/L by {} h for this volume; the body {:+.1}",
        a.total_body_water_l, a.adrogue_madias_change_mmol_l, g.by_h, a.outcome.na_change_at_goal_mmol_l
    );
    if let Some(d) = a.free_water_deficit_l {
        println!(
            "  free-water deficit TBW·(Na/140 − 1): {d:.1} L; the dose gives {:.2} L of free water (against isotonic saline)",
            a.dose_free_water_l
        );
    }
    if let Some(g) = &a.outcome.bedside {
        println!("  {}", crate::bedside_summary::sentence(g));
    }
    println!("  found in {} runs of the full model", a.evaluations);
}

/// The dose, or why none meets the goal and the nearest feasible one.
fn print_verdict(a: &Answer, dose: &str, why_not: &str, style: Style) {
    match &a.verdict {
        Verdict::Met { note } => {
            println!(
                "\n{} {dose} ({:.0} mL in all)",
                style.good("Dose:"),
                a.outcome.volume_ml
            );
            if let Some(n) = note {
                println!("  note: {n}");
            }
        }
        Verdict::Infeasible { reason } => {
            println!("\n{} {why_not}{reason}.", style.bad("Not reachable:"));
            println!(
                "  nearest feasible dose: {dose} ({:.0} mL in all)",
                a.outcome.volume_ml
            );
        }
    }
}

fn print_course(o: &Outcome, bg: &Outcome) {
    println!(
        "\n  {:>6}  {:>9}  {:>8}  {:>17}",
        "time", "sodium", "change", "without the dose"
    );
    for (p, b) in o.course.iter().zip(&bg.course) {
        println!(
            "  {:>4} h  {:>9.1}  {:>+8.1}  {:>+17.1}",
            p.time_h, p.na_mmol_l, p.na_change_mmol_l, b.na_change_mmol_l
        );
    }
    println!(
        "\n  largest rise in any 24 h: {:.1} mmol/L (at {:.1} h); in any 48 h: {:.1} mmol/L",
        o.largest_rise_24h_mmol_l, o.largest_rise_24h_time_h, o.largest_rise_48h_mmol_l
    );
    println!("  margin to each rule:");
    for m in &o.margins {
        println!(
            "    {:<8} {:<4} {:>4} mmol/L in {:>2} h  \"{}\": worst {:+.1}, margin {:+.1}{}",
            format!("{:?}", m.severity).to_lowercase(),
            format!("{:?}", m.direction).to_lowercase(),
            m.max_mmol_l,
            m.window_h,
            m.label,
            m.worst_mmol_l,
            m.margin_mmol_l,
            if m.crossed() { "  CROSSED" } else { "" }
        );
    }
}

fn print_uncertainty(u: &Uncertainty, a: &Answer) {
    let s = &u.at_dose;
    let unit = match a.outcome.dose {
        tidewater::planner::Dose::Rate { .. } => "mL/h",
        tidewater::planner::Dose::Bolus { .. } => "mL per bolus",
    };
    println!(
        "\nHow sure ({} members over {}{}):",
        s.members,
        u.unknowns.join(", "),
        if s.failed > 0 {
            format!(
                "; {} failed, the first: {}",
                s.failed,
                s.first_failure.as_deref().unwrap_or("?")
            )
        } else {
            String::new()
        }
    );
    println!(
        "  change by {} h: {:+.1} (5th percentile) {:+.1} (median) {:+.1} (95th)",
        a.goal.by_h,
        s.change_percentiles_mmol_l[0],
        s.change_percentiles_mmol_l[1],
        s.change_percentiles_mmol_l[2]
    );
    println!(
        "  P(any limit crossed) {:.0} %; P(below the goal) {:.0} %; P(above the goal) {:.0} %",
        100.0 * s.p_any_limit,
        100.0 * s.p_below_goal,
        100.0 * s.p_above_goal
    );
    for (label, p) in &s.p_rule {
        println!("    P(\"{label}\") {:.0} %", 100.0 * p);
    }
    match u.highest_amount_within_risk {
        Some(h) => println!(
            "  doses up to {h:.0} {unit}{} keep P(any limit crossed) at or under {:.0} %",
            if u.highest_is_search_cap {
                " (the top of the range searched)"
            } else {
                ""
            },
            100.0 * u.risk
        ),
        None => println!(
            "  no dose keeps P(any limit crossed) under {:.0} %",
            100.0 * u.risk
        ),
    }
    match u.lowest_amount_for_goal {
        Some(l) => println!(
            "  doses from {l:.0} {unit} reach the goal in all but {:.0} % of members",
            100.0 * u.risk
        ),
        None => println!(
            "  no dose searched reaches the goal in all but {:.0} % of members",
            100.0 * u.risk
        ),
    }
    println!("  ({} member runs)", u.runs);
}

fn print_relowering(r: &relower::Relowering, title: &str, style: Style) {
    let a = &r.answer;
    println!("Re-lowering: {title}");
    println!(
        "  sodium {:.1} mmol/L at {} h (start {:.1}); limits crossed by then: {}",
        r.na_at_from_mmol_l,
        r.from_h,
        a.background.na_start_mmol_l,
        if r.crossed_by_from.is_empty() {
            "none".to_string()
        } else {
            r.crossed_by_from.join(", ")
        }
    );
    println!(
        "  aim: sodium {:.1}..{:.1} mmol/L at {} h (\"{}\" allows at most {:.1}); never below {:.1} from {} h",
        a.background.na_start_mmol_l + a.goal.low_mmol_l,
        a.background.na_start_mmol_l + a.goal.high_mmol_l,
        a.goal.by_h,
        r.ceiling_rule,
        r.ceiling_mmol_l,
        r.floor_mmol_l,
        r.from_h
    );
    let dose = relower::describe(r);
    print_verdict(a, &dose, "", style);

    if r.clamp.is_some() {
        println!("  (\"without the dose\": the scenario with the desmopressin clamp alone)");
    }
    print_course(&a.outcome, &a.background);
    println!(
        "  rise within the window of \"{}\" at {} h: {:.1} mmol/L; lowest sodium from {} h: {:.1}",
        r.ceiling_rule,
        a.goal.by_h,
        r.window_rise_at_by_mmol_l,
        r.from_h,
        a.outcome.lowest_after_mmol_l
    );
    println!("  found in {} runs of the full model", a.evaluations);
    println!("\n{}", tidewater::CAUTION);
}
