//! The comparison's `report.html`: the caution, the headline figures of
//! every scenario side by side, the shared charts, and each scenario's
//! description and plan.

#![allow(clippy::write_with_newline)] // HTML is written line by line

use super::{Comparison, Headline};
use crate::format::{fixed, hours_text};
use crate::output::html::{escape, scalable, STYLE};
use std::fmt::Write as _;

/// One row of the table: a label and each scenario's value as text.
type Row = (&'static str, fn(&Headline) -> String);

const ROWS: [Row; 13] = [
    ("Serum sodium at start (mmol/L)", |h| {
        fixed(h.na_start_mmol_l, 1)
    }),
    ("Serum sodium at end (mmol/L)", |h| {
        fixed(h.na_end_mmol_l, 1)
    }),
    ("Lowest serum sodium (mmol/L)", |h| {
        fixed(h.na_min_mmol_l, 1)
    }),
    ("Highest serum sodium (mmol/L)", |h| {
        fixed(h.na_max_mmol_l, 1)
    }),
    ("Largest rise in 24 h (mmol/L)", |h| {
        fixed(h.largest_rise_24h_mmol_l, 1)
    }),
    ("Largest rise in 48 h (mmol/L)", |h| {
        fixed(h.largest_rise_48h_mmol_l, 1)
    }),
    ("Lowest brain-cell volume index", |h| {
        fixed(h.brain_index_min, 3)
    }),
    ("Highest brain-cell volume index", |h| {
        fixed(h.brain_index_max, 3)
    }),
    ("Guideline limits crossed", |h| h.limits_crossed.to_string()),
    ("Given, habitual intake aside (mL)", |h| {
        fixed(h.given_ml, 0)
    }),
    ("Sodium given, habitual intake aside (mmol)", |h| {
        fixed(h.na_given_mmol, 1)
    }),
    ("Urine passed (mL)", |h| fixed(h.urine_ml, 0)),
    ("Length of the run", |h| hours_text(h.duration_h)),
];

/// The page.
pub fn render(c: &Comparison) -> String {
    let heads = c.headlines();
    let names: Vec<String> = heads.iter().map(|h| escape(&h.scenario)).collect();
    let mut out = String::new();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{} | Tidewater comparison</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<main>\n<header class=\"band\"><h1>Scenarios side by side</h1><p>Tidewater comparison · {}</p></header>\n<p class=\"caution\" id=\"caution\">{}<span>These are simulated values from invented or user-described patients; they are no measurement and no prescription.</span></p>\n",
        names.join(" vs "),
        names.join(" · "),
        escape(tidewater::CAUTION)
    );
    out.push_str("<h2 id=\"figures\">Headline figures</h2>\n<table><tr><th></th>");
    for n in &names {
        let _ = write!(out, "<th>{n}</th>");
    }
    out.push_str("</tr>\n");
    for (label, value) in ROWS {
        let _ = write!(out, "<tr><th>{}</th>", escape(label));
        for h in &heads {
            let alert = label.starts_with("Guideline limits") && h.limits_crossed > 0;
            let _ = write!(
                out,
                "<td class=\"num{}\">{}</td>",
                if alert { " fail" } else { "" },
                escape(&value(h))
            );
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</table>\n");
    for chart in &c.charts {
        let _ = write!(
            out,
            "<figure>{}<figcaption>{}</figcaption></figure>\n",
            scalable(&chart.svg),
            escape(&chart.title)
        );
    }
    out.push_str("<h2 id=\"scenarios\">The scenarios</h2>\n");
    for m in &c.members {
        let _ = write!(
            out,
            "<h3>{}: {}</h3>\n<p>{}</p>\n<p><small>Source: {} · guideline set {}</small></p>\n<table><tr><th>Time</th><th>Action</th></tr>\n",
            escape(&m.input.name),
            escape(&m.input.title),
            escape(&m.input.description),
            escape(&m.input.source),
            escape(&m.summary.guideline.id)
        );
        for e in &m.input.plan.events {
            let _ = write!(
                out,
                "<tr><td class=\"num\">{}</td><td>{}</td></tr>\n",
                hours_text(e.time_h),
                escape(&e.text)
            );
        }
        out.push_str("</table>\n");
    }
    let _ = write!(
        out,
        "<footer>{}</footer>\n</main>\n</body>\n</html>\n",
        escape(tidewater::CAUTION)
    );
    out
}
