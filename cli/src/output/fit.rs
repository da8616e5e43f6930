//! The files of a fit: `forecast.csv` (the bands over time), `fit.json`
//! (estimates with intervals, residuals, the chance of crossing each
//! limit, the convergence report), `forecast.svg` (measured points with
//! error bars, the fitted course, the forecast fan, the Adrogué–Madias
//! forecast from the last measurement) and `report.html`, one page with
//! all of it and the caution.

use super::html::{escape, STYLE};
use super::svg::frame::{canvas, err, legend, padded, time_axes, Size};
use super::svg::{FLAG, FORMULA, PERMITTED, SODIUM, WIDTH};
use super::{Output, OutputFile};
use anyhow::Result;
use plotters::prelude::*;
use serde_json::json;
use std::fmt::Write as _;
use tidewater::fit::{measurement_sd, Fit, Forecast};
use tidewater::observations::{Lab, Observations};

/// What a fit's files are made from.
pub struct FitReport {
    /// Scenario title.
    pub title: String,
    /// Scenario path, as given.
    pub script: String,
    /// Observation file, as given.
    pub observed: String,
    /// Guideline set.
    pub guideline: String,
    /// The fit.
    pub fit: Fit,
    /// Its forecast.
    pub forecast: Forecast,
    /// The observations.
    pub observations: Observations,
}

impl FitReport {
    /// The chart, drawn once.
    pub fn chart(&self) -> Result<String> {
        chart(self)
    }
}

/// `forecast.csv`.
pub struct ForecastCsv;
/// `fit.json`.
pub struct FitJson;
/// `forecast.svg` and `report.html`.
pub struct FitPage;

impl Output<FitReport> for ForecastCsv {
    fn format(&self) -> &'static str {
        "csv"
    }
    fn files(&self, r: &FitReport) -> Result<Vec<OutputFile>> {
        let f = &r.forecast;
        let mut out = String::from("time_h,na_fit_mmol_l,na_p5_mmol_l,na_p25_mmol_l,na_p50_mmol_l,na_p75_mmol_l,na_p95_mmol_l,na_adrogue_madias_mmol_l\n");
        for (j, t) in f.time_h.iter().enumerate() {
            let am = f.na_formula[j];
            let _ = writeln!(
                out,
                "{t:.4},{:.3},{:.3},{:.3},{:.3},{:.3},{:.3},{}",
                f.na_fit[j],
                f.na_percentiles[0][j],
                f.na_percentiles[1][j],
                f.na_percentiles[2][j],
                f.na_percentiles[3][j],
                f.na_percentiles[4][j],
                if am.is_finite() {
                    format!("{am:.3}")
                } else {
                    String::new()
                }
            );
        }
        Ok(vec![self.file("forecast.csv", out)])
    }
}

impl Output<FitReport> for FitJson {
    fn format(&self) -> &'static str {
        "json"
    }
    fn files(&self, r: &FitReport) -> Result<Vec<OutputFile>> {
        let f = &r.forecast;
        let v = json!({
            "caution": tidewater::CAUTION,
            "scenario": r.script,
            "observed": r.observed,
            "guideline": r.guideline,
            "estimates": r.fit.estimates,
            "residuals": r.fit.residuals,
            "rms_scaled_residual": r.fit.rms_scaled_residual,
            "convergence": r.fit.convergence,
            "forecast": {
                "last_observation_h": f.last_observation_h,
                "draws": f.draws,
                "failed_draws": f.failed,
                "limits": f.limits,
            },
        });
        Ok(vec![self.file(
            "fit.json",
            serde_json::to_string_pretty(&v)? + "\n",
        )])
    }
}

impl Output<FitReport> for FitPage {
    fn format(&self) -> &'static str {
        "html"
    }
    fn files(&self, r: &FitReport) -> Result<Vec<OutputFile>> {
        let svg = r.chart()?;
        let html = page(r, &svg);
        Ok(vec![
            self.file("forecast.svg", svg),
            self.file("report.html", html),
        ])
    }
}

fn chart(r: &FitReport) -> Result<String> {
    let f = &r.forecast;
    let t = &f.time_h;
    let measured: Vec<(f64, f64)> = r
        .observations
        .rows
        .iter()
        .filter_map(|row| row.get(Lab::Na).map(|v| (row.time_h, v)))
        .collect();
    let lo = f.na_percentiles[0]
        .iter()
        .chain(measured.iter().map(|m| &m.1))
        .copied()
        .fold(f64::INFINITY, f64::min);
    let hi = f.na_percentiles[4]
        .iter()
        .chain(measured.iter().map(|m| &m.1))
        .chain(f.na_formula.iter().filter(|x| x.is_finite()))
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let end = t.last().copied().unwrap_or(1.0);
    canvas((WIDTH, 440), |area| {
        let mut c = time_axes(
            area,
            Size::Full,
            &format!("Serum sodium: fit and forecast, {}", r.title),
            0.0..end * 1.01,
            padded(lo - 1.5, hi + 1.5, 0.04, 4.0),
            "Serum sodium (mmol/L)",
        )?;
        let band = |a: &[f64], b: &[f64]| -> Vec<(f64, f64)> {
            let mut p: Vec<(f64, f64)> = t.iter().copied().zip(b.iter().copied()).collect();
            p.extend(t.iter().copied().zip(a.iter().copied()).rev());
            p
        };
        c.draw_series(std::iter::once(Polygon::new(
            band(&f.na_percentiles[0], &f.na_percentiles[4]),
            PERMITTED.mix(0.25).filled(),
        )))
        .map_err(err)?
        .label("Forecast, 5th-95th percentile")
        .legend(|(x, y)| {
            Rectangle::new([(x, y - 5), (x + 22, y + 5)], PERMITTED.mix(0.25).filled())
        });
        c.draw_series(std::iter::once(Polygon::new(
            band(&f.na_percentiles[1], &f.na_percentiles[3]),
            PERMITTED.mix(0.55).filled(),
        )))
        .map_err(err)?
        .label("Forecast, 25th-75th percentile")
        .legend(|(x, y)| {
            Rectangle::new([(x, y - 5), (x + 22, y + 5)], PERMITTED.mix(0.55).filled())
        });
        c.draw_series(LineSeries::new(
            t.iter().copied().zip(f.na_fit.iter().copied()),
            SODIUM.stroke_width(3),
        ))
        .map_err(err)?
        .label("Fitted patient")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], SODIUM.stroke_width(3)));
        let am: Vec<(f64, f64)> = t
            .iter()
            .copied()
            .zip(f.na_formula.iter().copied())
            .filter(|p| p.1.is_finite())
            .collect();
        if !am.is_empty() {
            c.draw_series(DashedLineSeries::new(am, 8, 5, FORMULA.stroke_width(2)))
                .map_err(err)?
                .label("Adrogué–Madias from the last sodium")
                .legend(|(x, y)| {
                    plotters::element::DashedPathElement::new(
                        vec![(x, y), (x + 22, y)],
                        6,
                        3,
                        FORMULA.stroke_width(2),
                    )
                });
        }
        let last = f.last_observation_h;
        c.draw_series(std::iter::once(PathElement::new(
            vec![(last, lo - 1.0), (last, hi + 1.0)],
            FLAG.stroke_width(1),
        )))
        .map_err(err)?;
        c.draw_series(measured.iter().map(|&(x, y)| {
            let sd = measurement_sd(Lab::Na, y);
            PathElement::new(vec![(x, y - sd), (x, y + sd)], BLACK.stroke_width(1))
        }))
        .map_err(err)?
        .label("Measured sodium (±1 SD of measurement)")
        .legend(|(x, y)| Circle::new((x + 11, y), 4, BLACK.filled()));
        c.draw_series(measured.iter().map(|&p| Circle::new(p, 4, BLACK.filled())))
            .map_err(err)?;
        legend(&mut c, SeriesLabelPosition::UpperLeft)
    })
}

fn page(r: &FitReport, svg: &str) -> String {
    let mut h = String::new();
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{} | Tidewater fit</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<main>\n<header class=\"band\"><h1>{}</h1><p>Tidewater fit and forecast · scenario {} · observations {} · guideline set {}</p></header>\n<div class=\"caution\">{}<span>The fit learns a simulated patient from the measurements given; it is no measurement and no prescription.</span></div>\n",
        escape(&r.title),
        escape(&r.title),
        escape(&r.script),
        escape(&r.observed),
        escape(&r.guideline),
        escape(tidewater::CAUTION)
    );
    h.push_str(&section(r, svg));
    h.push_str("</main>\n</body>\n</html>\n");
    h
}

/// The fit as a section of a page (the fit's own, or a run's report when
/// the run has observations): estimates, the chance of crossing each
/// rule, the chart, the residuals.
pub fn section(r: &FitReport, svg: &str) -> String {
    let mut h = String::new();
    let c = &r.fit.convergence;
    let _ = write!(
        h,
        "<h2>What the measurements taught</h2>\n<p>{} values fitted; root mean square of the scaled residuals {:.2} (about 1 when the model explains the labs within their measurement error). Optimiser: {} after {} evaluations ({} runs of the model).</p>\n<table><tr><th>Unknown</th><th>Prior median</th><th>Fitted</th><th>90 % interval</th><th>Posterior SD / prior SD</th><th>Prior</th></tr>\n",
        r.fit.residuals.len(),
        r.fit.rms_scaled_residual,
        escape(&c.termination),
        c.evaluations,
        c.runs
    );
    for e in &r.fit.estimates {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{:.3}</td><td><b>{:.3}</b></td><td>{:.3} to {:.3}</td><td>{:.2}</td><td>{}</td></tr>",
            escape(&e.name),
            e.prior_median,
            e.value,
            e.p5,
            e.p95,
            e.z_sd,
            escape(&e.why)
        );
    }
    h.push_str("</table>\n<h2>Forecast</h2>\n<p>The chance, over the draws from the fitted patient's uncertainty, that the scenario's plan crosses each rule:</p>\n<table><tr><th>Rule</th><th>Severity</th><th>At any time</th><th>First after the last observation</th></tr>\n");
    for l in &r.forecast.limits {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{:?}</td><td>{:.0} %</td><td>{:.0} %</td></tr>",
            escape(&l.label),
            l.severity,
            100.0 * l.p_any_time,
            100.0 * l.p_in_forecast
        );
    }
    let _ = write!(
        h,
        "</table>\n<figure>{}<figcaption>Measured sodium (points, ±1 SD of measurement), the fitted patient (line), the forecast fan over {} draws ({} failed), and the Adrogué–Madias forecast from the last measured sodium (dashed) for comparison. The thin vertical line marks the last observation.</figcaption></figure>\n",
        svg.replacen("<svg ", "<svg style=\"max-width:100%;height:auto\" ", 1),
        r.forecast.draws,
        r.forecast.failed
    );
    h.push_str("<h2>Residuals</h2>\n<table><tr><th>Line</th><th>Time (h)</th><th>Lab</th><th>Measured</th><th>Model</th><th>SD</th><th>Scaled</th></tr>\n");
    for x in &r.fit.residuals {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td>{}</td><td>{:.1}</td><td>{:.1}</td><td>{:.1}</td><td>{:+.2}</td></tr>",
            x.line, x.time_h, x.lab, x.observed, x.model, x.sd, x.scaled
        );
    }
    h.push_str("</table>\n");
    h
}
