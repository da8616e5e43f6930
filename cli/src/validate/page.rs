//! The validation page: one self-contained HTML file with inline SVG. The
//! caution first, then the summary, then one card per check with the
//! published value and the model's on one small axis, and the published
//! time course against the model's curve where there is one.

#![allow(clippy::write_with_newline)] // HTML is written line by line

use crate::format::sig;
use crate::output::html::escape;
use std::collections::BTreeMap;
use std::fmt::Write as _;
use tidewater::validation::{Check, CheckResult, Dossier, Outcome, Status, TimeCourse};
use tidewater::CAUTION;

const STYLE: &str = "
body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;color:#242933;margin:0;background:#f6f7f8}
main{max-width:1080px;margin:0 auto;padding:24px 28px 48px;background:#fff}
h1{font-size:26px;margin:0 0 4px} h2{font-size:20px;margin:32px 0 10px;border-bottom:1px solid #dde1e5;padding-bottom:4px}
h3{font-size:16px;margin:0;font-family:ui-monospace,Menlo,Consolas,monospace}
p{line-height:1.45} .muted{color:#5b6470;font-size:13px}
.caution{border-left:5px solid #bd3e30;background:#fbeeec;padding:10px 14px;font-weight:600;margin:14px 0 18px}
.glance{display:flex;gap:12px;flex-wrap:wrap;margin:8px 0 6px}
.tile{border:1px solid #dde1e5;border-radius:6px;padding:10px 14px;min-width:130px}
.tile b{display:block;font-size:24px} .tile span{font-size:13px;color:#5b6470}
table{border-collapse:collapse;width:100%;font-size:13px;margin:6px 0}
th,td{border-bottom:1px solid #e6e9ec;padding:4px 6px;text-align:left;vertical-align:top}
th{background:#f1f3f5} th.num,td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap} td.value{text-align:right;font-variant-numeric:tabular-nums}
a{color:#165480}
.chip{display:inline-block;border-radius:10px;padding:1px 8px;font-size:12px;font-weight:600;white-space:nowrap}
.pass{background:#e3f1e8;color:#1f6b3f} .fail{background:#f9e1de;color:#a3261b}
.xfail{background:#fdf0d9;color:#8a5200} .xpass{background:#efe3f7;color:#6a2c91} .error{background:#e9eaec;color:#3b4250}
.topic{background:#e8eef4;color:#1f4766}
.card{border:1px solid #dde1e5;border-radius:8px;padding:12px 16px;margin:14px 0;break-inside:avoid}
.card header{display:flex;gap:8px;align-items:center;flex-wrap:wrap;margin-bottom:6px}
.card dl{display:grid;grid-template-columns:130px 1fr;gap:3px 12px;margin:6px 0;font-size:13.5px}
.card dt{color:#5b6470} .card dd{margin:0}
.reason{background:#fdf6e9;border-left:4px solid #d18b1a;padding:6px 10px;font-size:13.5px;margin:8px 0}
.problem{background:#fbeeec;border-left:4px solid #bd3e30;padding:6px 10px;font-size:13.5px;margin:8px 0}
.figs{display:flex;gap:18px;flex-wrap:wrap;align-items:flex-start} .figs>div{max-width:500px}
svg text{font-family:system-ui,sans-serif}
footer{margin-top:36px;font-size:12.5px;color:#5b6470}
";

fn status_class(s: &Status) -> &'static str {
    match s {
        Status::Pass => "pass",
        Status::Fail => "fail",
        Status::ExpectedFailure => "xfail",
        Status::UnexpectedPass => "xpass",
        Status::Error(_) => "error",
    }
}

fn status_colour(s: &Status) -> &'static str {
    match s {
        Status::Pass => "#2e7d4f",
        Status::Fail => "#b3261e",
        Status::ExpectedFailure => "#b26a00",
        Status::UnexpectedPass => "#7b3aa6",
        Status::Error(_) => "#59606b",
    }
}

fn chip(s: &Status) -> String {
    format!(
        "<span class=\"chip {}\">{}</span>",
        status_class(s),
        escape(s.label())
    )
}

/// A number for the page: 4 significant digits.
fn num(x: f64) -> String {
    sig(x, 4)
}

/// "Nice" tick positions covering `[lo, hi]`.
fn ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    let span = (hi - lo).abs().max(1e-12);
    let raw = span / target.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil() * step;
    let mut out = Vec::new();
    let mut v = first;
    while v <= hi + step * 1e-9 {
        out.push(if v.abs() < step * 1e-9 { 0.0 } else { v });
        v += step;
    }
    out
}

/// A tick below a horizontal axis at `y`, labelled with `value`.
fn x_tick(s: &mut String, x: f64, y: f64, value: f64) {
    let _ = write!(
        s,
        "<line x1=\"{x:.1}\" y1=\"{y}\" x2=\"{x:.1}\" y2=\"{}\" stroke=\"#8a929c\"/><text x=\"{x:.1}\" y=\"{}\" font-size=\"10.5\" text-anchor=\"middle\" fill=\"#5b6470\">{}</text>",
        y + 4.0,
        y + 16.0,
        escape(&num(value))
    );
}

/// The check's values on one small axis: the acceptance range as a band,
/// the published value with its bar, the model's value.
fn axis_svg(check: &Check, result: &CheckResult) -> String {
    let (w, h) = (500.0, 78.0);
    let (left, right) = (74.0, w - 14.0);
    let mut vals = vec![check.range[0], check.range[1], check.published.value];
    if let Some([a, b]) = check.published.bar {
        vals.extend([a, b]);
    }
    if let Some(v) = result.value {
        vals.push(v);
    }
    let (mut lo, mut hi) = vals
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let pad = 0.08 * (hi - lo).max(1e-9);
    lo -= pad;
    hi += pad;
    let x = |v: f64| left + (v - lo) / (hi - lo) * (right - left);
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" role=\"img\" aria-label=\"published value and model value for {}\">",
        escape(&check.id)
    );
    let (band_y, axis_y) = (14.0, 50.0);
    // Acceptance band.
    let _ = write!(
        s,
        "<rect x=\"{:.1}\" y=\"{band_y}\" width=\"{:.1}\" height=\"30\" fill=\"#e3f1e8\" stroke=\"#9ccbb0\"/>",
        x(check.range[0]),
        (x(check.range[1]) - x(check.range[0])).max(1.0)
    );
    // Axis and ticks.
    let _ = write!(
        s,
        "<line x1=\"{left}\" y1=\"{axis_y}\" x2=\"{right}\" y2=\"{axis_y}\" stroke=\"#8a929c\"/>"
    );
    for t in ticks(lo, hi, 6) {
        x_tick(&mut s, x(t), axis_y, t);
    }
    // Row labels.
    let _ = write!(
        s,
        "<text x=\"4\" y=\"25.5\" font-size=\"11\" fill=\"#242933\">published</text><text x=\"4\" y=\"40.5\" font-size=\"11\" fill=\"#242933\">model</text>"
    );
    // Published value with its bar (upper row).
    let py = 22.0;
    if let Some([a, b]) = check.published.bar {
        let _ = write!(
            s,
            "<line x1=\"{0:.1}\" y1=\"{py}\" x2=\"{1:.1}\" y2=\"{py}\" stroke=\"#242933\" stroke-width=\"1.6\"/><line x1=\"{0:.1}\" y1=\"{2}\" x2=\"{0:.1}\" y2=\"{3}\" stroke=\"#242933\" stroke-width=\"1.6\"/><line x1=\"{1:.1}\" y1=\"{2}\" x2=\"{1:.1}\" y2=\"{3}\" stroke=\"#242933\" stroke-width=\"1.6\"/>",
            x(a),
            x(b),
            py - 4.0,
            py + 4.0
        );
    }
    let _ = write!(
        s,
        "<circle cx=\"{:.1}\" cy=\"{py}\" r=\"4.5\" fill=\"#242933\"><title>published {}</title></circle>",
        x(check.published.value),
        escape(&num(check.published.value))
    );
    // Model value (lower row).
    let my = 37.0;
    if let Some(v) = result.value {
        let c = status_colour(&result.status);
        let xv = x(v);
        let _ = write!(
            s,
            "<path d=\"M{:.1} {:.1} L{:.1} {my} L{:.1} {:.1} L{:.1} {my} Z\" fill=\"{c}\"><title>model {}</title></path>",
            xv,
            my - 6.0,
            xv + 6.0,
            xv,
            my + 6.0,
            xv - 6.0,
            escape(&num(v))
        );
    }
    s.push_str("</svg>");
    s
}

/// The published time course (points and bars) over the model's curve.
fn time_course_svg(tc: &TimeCourse, series: &[(f64, f64)], colour: &str) -> String {
    let (w, h) = (440.0, 230.0);
    let (left, right, top, bottom) = (58.0, w - 14.0, 14.0, h - 40.0);
    let t_end = series
        .last()
        .map(|p| p.0)
        .unwrap_or(1.0)
        .max(tc.points.iter().map(|p| p.t_h).fold(0.0, f64::max));
    let mut vals: Vec<f64> = series.iter().map(|p| p.1).collect();
    for p in &tc.points {
        vals.push(p.value);
        vals.extend(p.low);
        vals.extend(p.high);
    }
    let (mut lo, mut hi) = vals
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let pad = 0.08 * (hi - lo).max(1e-6);
    lo -= pad;
    hi += pad;
    let x = |t: f64| left + t / t_end * (right - left);
    let y = |v: f64| bottom - (v - lo) / (hi - lo) * (bottom - top);
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" role=\"img\" aria-label=\"time course\">"
    );
    for t in ticks(lo, hi, 5) {
        let _ = write!(
            s,
            "<line x1=\"{left}\" y1=\"{0:.1}\" x2=\"{right}\" y2=\"{0:.1}\" stroke=\"#e6e9ec\"/><text x=\"{1}\" y=\"{2:.1}\" font-size=\"10.5\" text-anchor=\"end\" fill=\"#5b6470\">{3}</text>",
            y(t),
            left - 6.0,
            y(t) + 3.5,
            escape(&num(t))
        );
    }
    for t in ticks(0.0, t_end, 6) {
        x_tick(&mut s, x(t), bottom, t);
    }
    let _ = write!(
        s,
        "<line x1=\"{left}\" y1=\"{bottom}\" x2=\"{right}\" y2=\"{bottom}\" stroke=\"#8a929c\"/><line x1=\"{left}\" y1=\"{top}\" x2=\"{left}\" y2=\"{bottom}\" stroke=\"#8a929c\"/>\
         <text x=\"{0:.1}\" y=\"{1}\" font-size=\"11\" text-anchor=\"middle\" fill=\"#242933\">time, h</text>\
         <text x=\"14\" y=\"{2:.1}\" font-size=\"11\" text-anchor=\"middle\" fill=\"#242933\" transform=\"rotate(-90 14 {2:.1})\">{3} ({4})</text>",
        0.5 * (left + right),
        h - 6.0,
        0.5 * (top + bottom),
        escape(tc.series.name()),
        escape(tc.series.unit())
    );
    // Model curve, thinned to at most ~400 points.
    let stride = (series.len() / 400).max(1);
    let mut d = String::new();
    for (i, (t, v)) in series.iter().enumerate() {
        if i % stride == 0 || i + 1 == series.len() {
            let _ = write!(
                d,
                "{}{:.1} {:.1} ",
                if d.is_empty() { "M" } else { "L" },
                x(*t),
                y(*v)
            );
        }
    }
    let _ = write!(
        s,
        "<path d=\"{}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"2\"/>",
        d.trim_end()
    );
    for p in &tc.points {
        if let (Some(l), Some(hh)) = (p.low, p.high) {
            let _ = write!(
                s,
                "<line x1=\"{0:.1}\" y1=\"{1:.1}\" x2=\"{0:.1}\" y2=\"{2:.1}\" stroke=\"#242933\" stroke-width=\"1.4\"/><line x1=\"{3:.1}\" y1=\"{1:.1}\" x2=\"{4:.1}\" y2=\"{1:.1}\" stroke=\"#242933\" stroke-width=\"1.4\"/><line x1=\"{3:.1}\" y1=\"{2:.1}\" x2=\"{4:.1}\" y2=\"{2:.1}\" stroke=\"#242933\" stroke-width=\"1.4\"/>",
                x(p.t_h),
                y(l),
                y(hh),
                x(p.t_h) - 4.0,
                x(p.t_h) + 4.0
            );
        }
        let _ = write!(
            s,
            "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"4\" fill=\"#fff\" stroke=\"#242933\" stroke-width=\"1.8\"><title>published {} at {} h</title></circle>",
            x(p.t_h),
            y(p.value),
            escape(&num(p.value)),
            escape(&num(p.t_h))
        );
    }
    s.push_str("</svg>");
    s
}

fn args_text(check: &Check) -> String {
    check
        .metric
        .args
        .iter()
        .map(|(k, v)| format!("{k} = {}", num(*v)))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The page.
pub fn render(dossier: &Dossier, outcome: &Outcome) -> String {
    let mut out = String::with_capacity(400_000);
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>Validation dossier | Tidewater</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<main>\n"
    );
    let _ = write!(
        out,
        "<h1>Validation dossier</h1>\n<p class=\"muted\">Tidewater {} against published human data · {} checks in {}</p>\n",
        env!("CARGO_PKG_VERSION"),
        dossier.checks.len(),
        escape(&dossier.file())
    );
    let _ = write!(out, "<p class=\"caution\">{}</p>\n", escape(CAUTION));

    // Summary.
    let n = dossier.checks.len();
    let passes = outcome.count(|s| *s == Status::Pass);
    let xfail = outcome.count(|s| *s == Status::ExpectedFailure);
    let unexpected = n - outcome.as_expected();
    let common = dossier
        .checks
        .iter()
        .filter(|c| c.source_key == tidewater::validation::COMMON_PRACTICE)
        .count();
    out.push_str("<h2>Summary</h2>\n<div class=\"glance\">");
    for (value, label) in [
        (n.to_string(), "checks".to_string()),
        (
            dossier.distinct_sources().to_string(),
            format!("published sources (+ {common} checks on common practice)"),
        ),
        (passes.to_string(), "pass".to_string()),
        (xfail.to_string(), "expected failures".to_string()),
        (unexpected.to_string(), "unexpected results".to_string()),
    ] {
        let _ = write!(
            out,
            "<div class=\"tile\"><b>{}</b><span>{}</span></div>",
            escape(&value),
            escape(&label)
        );
    }
    out.push_str("</div>\n");
    out.push_str(
        "<p class=\"muted\">A check passes when the model's value lies in its acceptance range, set from the publication (mean ± about 2 SD, or the rule's own tolerance) before the model was run. An expected failure is a miss the dossier knows of, with the physiological reason; an unexpected result is a failure without that mark, a mark that is no longer needed, or a check that could not be evaluated.</p>\n",
    );

    // By topic.
    let mut topics: Vec<&str> = Vec::new();
    let mut by_topic: BTreeMap<&str, [usize; 4]> = BTreeMap::new();
    for (c, r) in dossier.checks.iter().zip(&outcome.results) {
        if !topics.contains(&c.topic.as_str()) {
            topics.push(&c.topic);
        }
        let e = by_topic.entry(&c.topic).or_default();
        e[0] += 1;
        match r.status {
            Status::Pass => e[1] += 1,
            Status::ExpectedFailure => e[2] += 1,
            _ => e[3] += 1,
        }
    }
    out.push_str("<table><tr><th>topic</th><th class=\"num\">checks</th><th class=\"num\">pass</th><th class=\"num\">expected failures</th><th class=\"num\">unexpected</th></tr>\n");
    for t in &topics {
        let e = by_topic[t];
        let _ = write!(
            out,
            "<tr><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>\n",
            escape(t), e[0], e[1], e[2], e[3]
        );
    }
    out.push_str("</table>\n");

    // Index.
    out.push_str("<h2>All checks</h2>\n<table><tr><th>check</th><th>topic</th><th>published</th><th>range</th><th>model</th><th>outcome</th></tr>\n");
    for (c, r) in dossier.checks.iter().zip(&outcome.results) {
        let _ = write!(
            out,
            "<tr><td><a href=\"#{0}\">{0}</a></td><td>{1}</td><td class=\"value\">{2} {3}</td><td class=\"num\">[{4}, {5}]</td><td class=\"num\">{6}</td><td>{7}</td></tr>\n",
            escape(&c.id),
            escape(&c.topic),
            escape(&num(c.published.value)),
            escape(&c.published.unit),
            escape(&num(c.range[0])),
            escape(&num(c.range[1])),
            r.value.map(|v| escape(&num(v))).unwrap_or_else(|| "-".into()),
            chip(&r.status)
        );
    }
    out.push_str("</table>\n");

    // Cards, by topic.
    for t in &topics {
        let _ = write!(out, "<h2>{}</h2>\n", escape(t));
        for (c, r) in dossier
            .checks
            .iter()
            .zip(&outcome.results)
            .filter(|(c, _)| c.topic == *t)
        {
            card(&mut out, c, r);
        }
    }
    let _ = write!(
        out,
        "<footer><p>{}</p><p>Generated by <code>tidewater validate</code> from {}; the scenarios are invented patients matching each study's population. Checks, sources, ranges and the metric vocabulary are documented in tests/validation/README.md.</p></footer>\n</main>\n</body>\n</html>\n",
        escape(CAUTION),
        escape(&dossier.file())
    );
    out
}

fn card(out: &mut String, c: &Check, r: &CheckResult) {
    let _ = write!(
        out,
        "<section class=\"card\" id=\"{0}\"><header><h3>{0}</h3><span class=\"chip topic\">{1}</span>{2}</header>\n",
        escape(&c.id),
        escape(&c.topic),
        chip(&r.status)
    );
    let bar = match (&c.published.bar, &c.published.bar_kind) {
        (Some([a, b]), Some(k)) => format!(
            " · bar [{}, {}] ({})",
            escape(&num(*a)),
            escape(&num(*b)),
            escape(k)
        ),
        _ => String::new(),
    };
    let _ = write!(
        out,
        "<dl><dt>source</dt><dd>{}</dd>\
         <dt>published</dt><dd>{}<br><span class=\"muted\">value {} {}{}</span></dd>\
         <dt>range</dt><dd>[{}, {}] {} <span class=\"muted\">· {}</span></dd>\
         <dt>model</dt><dd><b>{}</b> {} <span class=\"muted\">· {} ({}) on scenario {}</span></dd></dl>\n",
        escape(&c.source),
        escape(&c.published.text),
        escape(&num(c.published.value)),
        escape(&c.published.unit),
        bar,
        escape(&num(c.range[0])),
        escape(&num(c.range[1])),
        escape(&c.published.unit),
        escape(&c.range_basis),
        r.value.map(|v| escape(&num(v))).unwrap_or_else(|| "-".into()),
        escape(&c.published.unit),
        escape(c.metric.kind.info().name),
        escape(&args_text(c)),
        escape(&c.scenario)
    );
    match &r.status {
        Status::ExpectedFailure => {
            let _ = write!(
                out,
                "<p class=\"reason\"><b>Expected failure.</b> {}</p>\n",
                escape(c.expected_failure.as_deref().unwrap_or(""))
            );
        }
        Status::UnexpectedPass => {
            let _ = write!(
                out,
                "<p class=\"problem\"><b>Passes although marked as an expected failure</b>: remove the mark. (It read: {})</p>\n",
                escape(c.expected_failure.as_deref().unwrap_or(""))
            );
        }
        Status::Fail => {
            out.push_str("<p class=\"problem\"><b>Fails</b> without a known reason.</p>\n")
        }
        Status::Error(e) => {
            let _ = write!(
                out,
                "<p class=\"problem\"><b>Could not be evaluated:</b> {}</p>\n",
                escape(e)
            );
        }
        Status::Pass => {}
    }
    out.push_str("<div class=\"figs\"><div>");
    out.push_str(&axis_svg(c, r));
    out.push_str("<div class=\"muted\">● published, with its bar · ◆ model · green band: acceptance range</div></div>");
    if let (Some(tc), Some(series)) = (&c.time_course, &r.series) {
        let _ = write!(
            out,
            "<div>{}<div class=\"muted\">○ published ({}) · line: model</div></div>",
            time_course_svg(tc, series, status_colour(&r.status)),
            escape(&tc.spread)
        );
    }
    out.push_str("</div></section>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_cover_the_span() {
        assert_eq!(ticks(0.0, 10.0, 5), vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]);
        let t = ticks(-0.113, -0.03, 5);
        assert!(t.iter().all(|v| (-0.113..=-0.03).contains(v)), "{t:?}");
        assert!(t.len() >= 3, "{t:?}");
    }
}
