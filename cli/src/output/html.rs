//! `report.html`: one self-contained page (charts inline, no network, no
//! external fonts or scripts). The caution and the headline numbers come
//! first; details follow.

#![allow(clippy::write_with_newline)] // HTML is written line by line

use super::report::Report;
use super::{Output, OutputFile};
use crate::format::{fixed, hours_text, sig};
use anyhow::Result;
use std::fmt::Write as _;

/// The HTML writer.
pub struct Page;

impl Output<Report> for Page {
    fn format(&self) -> &'static str {
        "html"
    }

    fn files(&self, report: &Report) -> Result<Vec<OutputFile>> {
        Ok(vec![self.file("report.html", render(report))])
    }
}

/// Escape text for HTML.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

pub(crate) const STYLE: &str = r#"
:root { --ink:#242933; --muted:#5b6472; --line:#dde2e7; --sea:#1f6f68; --sand:#fbf6ea; --amber:#de8912; --brick:#bd3e30; --ok:#26765c; }
* { box-sizing: border-box; }
body { margin:0; font-family: system-ui, -apple-system, "Segoe UI", sans-serif; color:var(--ink); background:#f4f6f8; line-height:1.45; }
main { max-width: 980px; margin: 0 auto; padding: 0 18px 48px; background:#fff; }
header.band { background: var(--sea); color:#fff; padding: 22px 18px 16px; margin: 0 -18px; }
header.band h1 { margin:0 0 4px; font-size: 1.5rem; font-weight: 650; }
header.band p { margin:0; opacity:.9; font-size:.9rem; }
.caution { border-left: 6px solid var(--amber); background: var(--sand); padding: 10px 14px; margin: 16px 0; font-weight: 600; }
.caution span { font-weight: 400; display:block; color: var(--muted); font-size:.85rem; }
.glance { display:grid; grid-template-columns: repeat(auto-fit, minmax(150px, 1fr)); gap:10px; margin: 12px 0 4px; }
.glance div { border:1px solid var(--line); border-radius:6px; padding:8px 10px; }
.glance b { display:block; font-size:1.2rem; white-space:nowrap; }
.glance small { color: var(--muted); }
.glance .alert { border-color: var(--brick); }
.glance .alert b { color: var(--brick); }
h2 { font-size: 1.1rem; border-bottom: 2px solid var(--line); padding-bottom: 4px; margin-top: 28px; }
table { border-collapse: collapse; width:100%; font-size: .9rem; }
th, td { text-align:left; padding: 4px 8px; border-bottom: 1px solid var(--line); vertical-align: top; }
th { color: var(--muted); font-weight: 600; }
td.num { text-align:right; font-variant-numeric: tabular-nums; }
.pass { color: var(--ok); font-weight:700; }
.fail { color: var(--brick); font-weight:700; }
.cols { display:grid; grid-template-columns: 1fr 1fr; gap: 18px; }
@media (max-width: 760px) { .cols { grid-template-columns: 1fr; } }
figure { margin: 14px 0; }
figure svg { max-width: 100%; height: auto; }
figcaption { color: var(--muted); font-size: .85rem; }
pre { background:#f4f6f8; padding:8px; overflow:auto; font-size:.8rem; }
footer { color: var(--muted); font-size: .8rem; margin-top: 30px; }
"#;

fn glance(out: &mut String, label: &str, value: String, note: String, alert: bool) {
    let _ = write!(
        out,
        "<div{}><small>{}</small><b>{}</b><small>{}</small></div>",
        if alert { " class=\"alert\"" } else { "" },
        escape(label),
        escape(&value),
        escape(&note)
    );
}

/// Give an SVG a viewBox so it scales with the page.
pub(crate) fn scalable(svg: &str) -> String {
    let attr = |name: &str| -> Option<String> {
        let key = format!("{name}=\"");
        let start = svg.find(&key)? + key.len();
        let end = start + svg[start..].find('"')?;
        Some(svg[start..end].to_string())
    };
    match (attr("width"), attr("height")) {
        (Some(w), Some(h)) if !svg.contains("viewBox") => {
            svg.replacen("<svg ", &format!("<svg viewBox=\"0 0 {w} {h}\" "), 1)
        }
        _ => svg.to_string(),
    }
}

/// The page.
pub fn render(report: &Report) -> String {
    let input = &report.input;
    let s = &report.summary;
    let mut out = String::with_capacity(200_000);
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>{} | Tidewater report</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<main>\n",
        escape(&s.title)
    );
    let _ = write!(
        out,
        "<header class=\"band\"><h1>{}</h1><p>Tidewater simulation report · scenario: {} · guideline set: {}{}</p></header>\n",
        escape(&s.title),
        escape(&s.source),
        escape(&s.guideline.id),
        if s.guideline.high_risk { " (high-risk rules)" } else { "" }
    );
    let _ = write!(
        out,
        "<p class=\"caution\" id=\"caution\">{}<span>These are simulated values from an invented or user-described patient; they are no measurement and no prescription.</span></p>\n",
        escape(&s.caution)
    );
    if !s.description.is_empty() {
        let _ = write!(out, "<p>{}</p>\n", escape(&s.description));
    }

    // At a glance.
    let na = &s.sodium;
    let limit_flags = s.flags.iter().filter(|f| f.severity == "limit").count();
    out.push_str("<section class=\"glance\">");
    glance(
        &mut out,
        "Serum sodium at start",
        format!("{} mmol/L", fixed(na.start.mmol_l, 1)),
        String::new(),
        false,
    );
    glance(
        &mut out,
        "Serum sodium at end",
        format!("{} mmol/L", fixed(na.end.mmol_l, 1)),
        format!("at {}", hours_text(na.end.time_h)),
        false,
    );
    glance(
        &mut out,
        "Largest rise in 24 h",
        format!("{} mmol/L", fixed(na.largest_rise_24h.mmol_l, 1)),
        format!(
            "window ending at {}",
            hours_text(na.largest_rise_24h.time_h)
        ),
        false,
    );
    glance(
        &mut out,
        "Largest rise in 48 h",
        format!("{} mmol/L", fixed(na.largest_rise_48h.mmol_l, 1)),
        format!(
            "window ending at {}",
            hours_text(na.largest_rise_48h.time_h)
        ),
        false,
    );
    let b = &s.brain_volume_index;
    glance(
        &mut out,
        "Brain-cell volume index",
        format!("{}–{}", fixed(b.min, 3), fixed(b.max, 3)),
        format!(
            "lowest at {}, highest at {}; 1 = normal (model index)",
            hours_text(b.min_time_h),
            hours_text(b.max_time_h)
        ),
        false,
    );
    glance(
        &mut out,
        "Guideline flags",
        format!("{}", s.flags.len()),
        format!("{limit_flags} of them limits"),
        limit_flags > 0,
    );
    if !s.expectations.is_empty() {
        let passed = s.expectations.iter().filter(|e| e.passed).count();
        glance(
            &mut out,
            "Expectations held",
            format!("{passed} of {}", s.expectations.len()),
            String::new(),
            passed < s.expectations.len(),
        );
    }
    out.push_str("</section>\n");

    // The bedside formula beside the body.
    if let Some(f) = &s.bedside_formula {
        let _ = write!(
            out,
            "<h2 id=\"formula\">The bedside formula beside the body</h2>\n<p>{}</p>\n",
            escape(&f.sentence)
        );
    }

    // Flags.
    out.push_str("<h2 id=\"flags\">Guideline flags</h2>\n");
    if s.flags.is_empty() {
        let _ = write!(
            out,
            "<p>No rule of {} was crossed in this run.</p>\n",
            escape(&s.guideline.id)
        );
    } else {
        out.push_str("<table><tr><th>Rule</th><th>Severity</th><th>Allowed</th><th>First crossed</th><th>Change then</th><th>Worst change</th></tr>\n");
        for f in &s.flags {
            let _ = write!(
                out,
                "<tr><td>{}</td><td class=\"{}\">{}</td><td>{} at most {} mmol/L per {} h</td><td class=\"num\">{} h</td><td class=\"num\">{} mmol/L</td><td class=\"num\">{} mmol/L at {} h</td></tr>\n",
                escape(&f.rule),
                if f.severity == "limit" { "fail" } else { "" },
                escape(&f.severity),
                escape(&f.direction),
                sig(f.max_mmol_l, 4),
                sig(f.window_h, 4),
                sig(f.time_h, 4),
                fixed(f.change_mmol_l, 1),
                fixed(f.worst_change_mmol_l, 1),
                sig(f.worst_time_h, 4)
            );
        }
        out.push_str("</table>\n");
    }
    goals_section(&mut out, s);

    // Sodium chart first.
    let mut charts = report.charts.iter();
    if let Some(c) = charts.next() {
        let _ = write!(
            out,
            "<figure>{}<figcaption>{}. The shaded band is where serum sodium stays within the limits of {} for a course moving steadily from the start; the dashed line is the Adrogué–Madias prediction for the same infusions in a closed body; triangles mark where a rule was first crossed; circles mark each goal at its time and level (hollow when missed).</figcaption></figure>
",
            scalable(&c.svg),
            escape(&c.title),
            escape(&s.guideline.id)
        );
    }

    // Expectations.
    if !s.expectations.is_empty() {
        out.push_str("<h2 id=\"expectations\">Expectations</h2>\n<table><tr><th>Line</th><th>Expectation</th><th>Result</th><th>Detail</th></tr>\n");
        for e in &s.expectations {
            let _ = write!(
                out,
                "<tr><td class=\"num\">{}</td><td>{}</td><td class=\"{}\">{}</td><td>{}</td></tr>\n",
                e.line,
                escape(&e.description),
                if e.passed { "pass" } else { "fail" },
                if e.passed { "held" } else { "failed" },
                escape(&e.detail)
            );
        }
        out.push_str("</table>\n");
    }

    // Patient and plan.
    out.push_str("<div class=\"cols\"><section><h2 id=\"patient\">Patient</h2><table>\n");
    for r in &input.patient {
        let _ = write!(
            out,
            "<tr><th>{}</th><td>{}</td></tr>\n",
            escape(&r.label),
            escape(&r.value)
        );
    }
    out.push_str("</table></section>\n<section><h2 id=\"plan\">Plan</h2>\n");
    let p = &input.plan;
    let _ = write!(
        out,
        "<p>{} h simulated, sampled every {} min{}.</p>\n<table><tr><th>Time</th><th>Action</th></tr>\n",
        sig(p.duration_h, 4),
        sig(p.sample_every_h * 60.0, 4),
        p.check_every_h
            .map(|c| format!(", rules checked every {} h", sig(c, 4)))
            .unwrap_or_default()
    );
    if p.events.is_empty() {
        out.push_str("<tr><td></td><td>no planned events</td></tr>\n");
    }
    for e in &p.events {
        let _ = write!(
            out,
            "<tr><td class=\"num\">{}</td><td>{}</td></tr>\n",
            hours_text(e.time_h),
            escape(&e.text)
        );
    }
    out.push_str("</table>\n");
    if !p.overrides.is_empty() {
        let _ = write!(
            out,
            "<p>Parameter overrides: {}</p>\n",
            escape(&p.overrides.join(", "))
        );
    }
    let _ = write!(
        out,
        "<p>Guideline set <b>{}</b>: {}; the rules and goals for {}.</p>\n<ul>\n",
        escape(&s.guideline.id),
        escape(&s.guideline.source),
        escape(&s.guideline.applies_to)
    );
    for r in &s.guideline.rules {
        let _ = write!(out, "<li>{}</li>\n", escape(r));
    }
    for g in &s.guideline.goals {
        let _ = write!(out, "<li>goal: {}</li>\n", escape(g));
    }
    out.push_str("</ul></section></div>\n");

    // Remaining charts.
    out.push_str("<h2 id=\"charts\">Compartments, urine and balance</h2>\n");
    for c in charts {
        let _ = write!(
            out,
            "<figure>{}<figcaption>{}</figcaption></figure>\n",
            scalable(&c.svg),
            escape(&c.title)
        );
    }

    given_section(&mut out, s);

    // Mass balance and solver.
    out.push_str("<h2 id=\"balance\">Mass balance</h2>\n<table><tr><th>Species</th><th>Start</th><th>In</th><th>Out</th><th>End</th><th>Largest relative residual</th></tr>\n");
    for b in &s.mass_balance {
        let _ = write!(
            out,
            "<tr><td>{} ({})</td><td class=\"num\">{}</td><td class=\"num\">{} <small>({})</small></td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>\n",
            escape(&b.species),
            escape(&b.unit),
            sig(b.start, 5),
            sig(b.intake, 5),
            escape(&b.intake_includes),
            sig(b.output, 5),
            sig(b.end, 5),
            residual_text(b.max_relative_residual)
        );
    }
    out.push_str("</table>\n");
    let st = &s.solver;
    let _ = write!(
        out,
        "<p>Solver: {} steps ({} rejected), {} right-hand-side evaluations, {} Jacobian products, {} restarts at input changes.</p>\n",
        st.steps, st.error_test_failures, st.rhs_calls, st.jacobian_products, st.restarts
    );
    if !s.log.is_empty() {
        out.push_str("<h2 id=\"log\">Run log</h2>\n<pre>");
        for line in &s.log {
            out.push_str(&escape(line));
            out.push('\n');
        }
        out.push_str("</pre>\n");
    }
    if let Some((fit, svg)) = &report.fit {
        out.push_str(&super::fit::section(fit, svg));
    }
    let _ = write!(
        out,
        "<footer>Tidewater {} · {} samples · data in samples.csv and summary.json beside this page.</footer>\n</main>\n</body>\n</html>\n",
        env!("CARGO_PKG_VERSION"),
        s.samples
    );
    out
}

/// A line per goal (met, missed, not judged) and the fall-below-start
/// warning, under the flags. Goals are no limits: a missed one is shown in
/// the warning colour of a caution, not as a crossing.
fn goals_section(out: &mut String, s: &crate::summary::Summary) {
    if s.goals.is_empty() && s.below_start.is_none() && s.outside_model_range.is_none() {
        return;
    }
    out.push_str("<h3 id=\"goals\">Goals</h3>\n<ul>\n");
    for g in &s.goals {
        let (class, word) = match g.status.as_str() {
            "met" => ("pass", "met"),
            "missed" => ("fail", "missed"),
            _ => ("", "not judged (the run ended first)"),
        };
        let reached = match g.reached_h {
            Some(t) if g.status == "missed" => format!("; reached at {}", hours_text(t)),
            None if g.status == "missed" => "; not reached in the run".to_string(),
            _ => String::new(),
        };
        let _ = write!(
            out,
            "<li><span class=\"{class}\">{word}</span>: {} at least {} mmol/L by {} h ({}); change {} mmol/L at {} h{reached}. <small>{}</small></li>\n",
            escape(&g.direction),
            sig(g.min_mmol_l, 4),
            sig(g.by_h, 4),
            escape(&g.goal),
            fixed(g.change_mmol_l, 1),
            sig(g.time_h, 4),
            escape(&g.source)
        );
    }
    if let Some(b) = &s.below_start {
        let _ = write!(
            out,
            "<li><span class=\"fail\">warning</span>: serum sodium fell below its start of {} mmol/L at {} h; lowest {} mmol/L at {} h.</li>\n",
            fixed(b.start_mmol_l, 1),
            sig(b.first_time_h, 4),
            fixed(b.lowest_mmol_l, 1),
            sig(b.lowest_time_h, 4)
        );
    }
    if let Some(w) = &s.outside_model_range {
        let _ = write!(
            out,
            "<li><span class=\"fail\">warning</span>: {}.</li>\n",
            escape(&crate::summary::outside_range_text(w))
        );
    }
    out.push_str("</ul>\n");
}
/// The table of what each stream gave or took over the run: volume,
/// sodium and potassium in, volume and sodium out, drugs.
fn given_section(out: &mut String, s: &crate::summary::Summary) {
    if s.given.is_empty() {
        return;
    }
    out.push_str("<h2 id=\"given\">Given and removed</h2>\n<table><tr><th>Stream</th><th>In (mL)</th><th>Na in (mmol)</th><th>K in (mmol)</th><th>Out (mL)</th><th>Na out (mmol)</th><th>Drugs</th></tr>\n");
    let cell = |x: f64, digits: usize| {
        if x == 0.0 {
            String::new()
        } else {
            fixed(x, digits)
        }
    };
    for g in &s.given {
        let mut drugs = Vec::new();
        if g.desmopressin_ug > 0.0 {
            drugs.push(format!("desmopressin {} ug", sig(g.desmopressin_ug, 3)));
        }
        if g.loop_diuretic_mg > 0.0 {
            drugs.push(format!("loop diuretic {} mg", sig(g.loop_diuretic_mg, 3)));
        }
        if g.v2_antagonist_mg > 0.0 {
            drugs.push(format!("V2 antagonist {} mg", sig(g.v2_antagonist_mg, 3)));
        }
        let name = if g.stream == "habitual" {
            "habitual (ordinary drinking and eating)".to_string()
        } else if g.volume_oral_ml > 0.0 && g.volume_oral_ml >= g.volume_in_ml - 1e-9 {
            format!("{} (by mouth)", g.stream)
        } else {
            g.stream.clone()
        };
        let _ = write!(
            out,
            "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td></tr>\n",
            escape(&name),
            cell(g.volume_in_ml, 0),
            cell(g.na_in_mmol, 1),
            cell(g.k_in_mmol, 1),
            cell(g.volume_out_ml, 0),
            cell(g.na_out_mmol, 1),
            escape(&drugs.join(", "))
        );
    }
    out.push_str("</table>\n");
}

/// A relative residual as the balance table shows it: scientific notation,
/// and "below 1e-12" for what is rounding (an exact 0 printed `0.0e0`).
fn residual_text(r: f64) -> String {
    if r.abs() < 1e-12 {
        "below 1e-12".into()
    } else {
        format!("{r:.1e}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn residuals_below_rounding_are_said_so() {
        assert_eq!(residual_text(0.0), "below 1e-12");
        assert_eq!(residual_text(3e-15), "below 1e-12");
        assert_eq!(residual_text(2.46e-9), "2.5e-9");
    }
}
