//! The summary of a result file, in two streaming passes whatever the
//! member count: percentile bands of serum sodium, the probabilities of
//! crossing limits (any, and each rule of the guideline set), the
//! mass-balance check, and the sensitivity of every kept output to every
//! parameter (Spearman rank correlations).

use super::error::{ResultProblem, SweepError};
use super::random::normal_cdf;
use super::rows::split_csv;
use super::spec::{Distribution, SweepParameter, SweepSpec};
use super::stats::{Histogram, Moments};
use serde::Serialize;
use std::collections::BTreeMap;
use std::io::{BufRead, BufReader};
use std::path::Path;

/// The reduction of a result file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Members read.
    pub members: usize,
    /// Members whose run failed.
    pub failed: usize,
    /// Band times, h.
    pub band_times_h: Vec<f64>,
    /// Percentiles 5, 25, 50, 75, 95 of serum sodium at each band time.
    pub bands: Vec<[f64; 5]>,
    /// Share of members crossing a limit.
    pub p_limit: f64,
    /// Share of members crossing a caution edge.
    pub p_caution: f64,
    /// Share of members crossing each rule of the scenario's guideline set,
    /// by rule number (1-based, in the set's order); rules no member
    /// crossed are absent.
    pub p_by_rule: BTreeMap<usize, f64>,
    /// Parameters ranked by |Spearman rank correlation| with the largest
    /// 24 h rise: (name, correlation); empty when that output is not kept.
    pub sensitivity: Vec<(String, f64)>,
    /// The Spearman rank correlation of every parameter with every kept
    /// output (sodium at the chosen times, largest 24 h and 48 h rises,
    /// lowest brain volume index), in the result file's column order:
    /// (output, [(parameter, correlation)] in the spec's parameter order).
    /// A parameter's rank is its quantile in its distribution (exact for
    /// the designs); an output's rank is read off a fine histogram of that
    /// output (a second pass over the file), so memory stays independent
    /// of the member count.
    pub sensitivity_by_output: Vec<(String, Vec<(String, f64)>)>,
    /// Largest mass-balance residual among checked members.
    pub max_balance_residual: f64,
    /// Members checked for mass balance.
    pub balance_checked: usize,
}

impl Summary {
    /// Read a result file (of `spec`) in two streaming passes (the second
    /// ranks the outputs for the sensitivity).
    pub fn from_file(spec: &SweepSpec, path: &Path) -> Result<Summary, SweepError> {
        let name = path.display().to_string();
        let io = |e| SweepError::io(&name, e);
        let bad = |problem| SweepError::results(&name, problem);
        let open = || -> Result<_, SweepError> {
            let f = std::fs::File::open(path).map_err(io)?;
            Ok(BufReader::new(f).lines())
        };
        let mut lines = open()?;
        let header: Vec<String> = lines
            .next()
            .transpose()
            .map_err(io)?
            .ok_or_else(|| bad(ResultProblem::Empty))?
            .split(',')
            .map(str::to_string)
            .collect();
        let col = |n: &str| header.iter().position(|h| h == n);
        let band_cols: Vec<(f64, usize)> = header
            .iter()
            .enumerate()
            .filter_map(|(i, h)| {
                h.strip_prefix("band_na_")
                    .and_then(|t| t.strip_suffix("h_mmol_l"))
                    .and_then(|t| t.parse().ok())
                    .map(|t| (t, i))
            })
            .collect();
        let mut hist: Vec<Histogram> = band_cols
            .iter()
            .map(|_| Histogram::new(80.0, 200.0, 0.02))
            .collect();
        let (status, limit, caution, balance, by_rule) = (
            col("status"),
            col("limit_crossed"),
            col("caution_crossed"),
            col("balance_residual"),
            col("limits_crossed"),
        );
        let mut n_by_rule: BTreeMap<usize, usize> = BTreeMap::new();
        let output_cols: Vec<(String, usize)> = header
            .iter()
            .enumerate()
            .filter(|(_, h)| {
                h.starts_with("na_at_")
                    || h.starts_with("largest_rise_")
                    || *h == "min_brain_volume_index"
            })
            .map(|(i, h)| (h.clone(), i))
            .collect();
        // Fine histograms of each output, for ranking it in the second pass.
        let mut output_hist: Vec<Histogram> = output_cols
            .iter()
            .map(|(h, _)| {
                if h.starts_with("na_at_") {
                    Histogram::new(60.0, 220.0, 0.002)
                } else if h.starts_with("largest_rise_") {
                    Histogram::new(-20.0, 100.0, 0.001)
                } else {
                    Histogram::new(0.3, 1.7, 1e-5)
                }
            })
            .collect();
        let (mut members, mut failed, mut n_limit, mut n_caution, mut checked) =
            (0usize, 0usize, 0usize, 0usize, 0usize);
        let mut max_res: f64 = 0.0;
        // A row's cell count checked; and one cell as a number.
        let check_count = |cells: &[&str], n: usize| -> Result<(), SweepError> {
            if cells.len() != header.len() {
                return Err(bad(ResultProblem::CellCount {
                    line: n + 2,
                    found: cells.len(),
                    expected: header.len(),
                }));
            }
            Ok(())
        };
        let number = |cells: &[&str], c: usize, n: usize| -> Result<f64, SweepError> {
            if cells[c].is_empty() {
                return Ok(f64::NAN);
            }
            cells[c].parse::<f64>().map_err(|_| {
                bad(ResultProblem::NotANumber {
                    line: n + 2,
                    cell: cells[c].to_string(),
                    column: header[c].clone(),
                })
            })
        };
        for (n, line) in lines.enumerate() {
            let line = line.map_err(io)?;
            let cells = split_csv(&line);
            check_count(&cells, n)?;
            members += 1;
            if status.map(|c| cells[c]) != Some("ok") {
                failed += 1;
                continue;
            }
            let num = |c: usize| number(&cells, c, n);
            for (h, (_, c)) in hist.iter_mut().zip(band_cols.iter()) {
                h.add(num(*c)?);
            }
            if limit.map(|c| cells[c]) == Some("1") {
                n_limit += 1;
            }
            if caution.map(|c| cells[c]) == Some("1") {
                n_caution += 1;
            }
            if let Some(c) = by_rule {
                for k in cells[c].split(';').filter(|k| !k.is_empty()) {
                    let k: usize = k.parse().map_err(|_| {
                        bad(ResultProblem::NotRuleNumbers {
                            line: n + 2,
                            cell: cells[c].to_string(),
                        })
                    })?;
                    *n_by_rule.entry(k).or_default() += 1;
                }
            }
            if let Some(c) = balance {
                let r = num(c)?;
                if r.is_finite() {
                    checked += 1;
                    max_res = max_res.max(r);
                }
            }
            for ((_, c), h) in output_cols.iter().zip(output_hist.iter_mut()) {
                h.add(num(*c)?);
            }
        }
        // Second pass: the rank of each parameter (its quantile in its
        // distribution) against the rank of each output.
        let cumulative: Vec<Vec<u64>> = output_hist.iter().map(Histogram::cumulative).collect();
        let mut output_moments: Vec<Vec<Moments>> =
            vec![vec![Moments::default(); spec.parameters.len()]; output_cols.len()];
        if !output_cols.is_empty() {
            for (n, line) in open()?.skip(1).enumerate() {
                let line = line.map_err(io)?;
                let cells = split_csv(&line);
                check_count(&cells, n)?;
                if status.map(|c| cells[c]) != Some("ok") {
                    continue;
                }
                let mut ranks = Vec::with_capacity(spec.parameters.len());
                for (j, p) in spec.parameters.iter().enumerate() {
                    ranks.push(value_rank(p, number(&cells, 1 + j, n)?));
                }
                for (o, (_, c)) in output_cols.iter().enumerate() {
                    let y = number(&cells, *c, n)?;
                    let v = output_hist[o].mid_rank(&cumulative[o], y);
                    for (u, m) in ranks.iter().zip(output_moments[o].iter_mut()) {
                        if u.is_finite() && v.is_finite() {
                            m.add(*u, v);
                        }
                    }
                }
            }
        }
        let ok = (members - failed).max(1) as f64;
        let sensitivity_by_output: Vec<(String, Vec<(String, f64)>)> = output_cols
            .iter()
            .zip(output_moments.iter())
            .map(|((name, _), m)| {
                let by_param = spec
                    .parameters
                    .iter()
                    .zip(m.iter())
                    .map(|(p, mj)| (p.name.clone(), mj.correlation()))
                    .collect();
                (name.clone(), by_param)
            })
            .collect();
        let mut sensitivity: Vec<(String, f64)> = sensitivity_by_output
            .iter()
            .find(|(o, _)| o == "largest_rise_24h_mmol_l")
            .map(|(_, by)| by.clone())
            .unwrap_or_default();
        sensitivity.sort_by(|a, b| b.1.abs().total_cmp(&a.1.abs()));
        Ok(Summary {
            members,
            failed,
            band_times_h: band_cols.iter().map(|(t, _)| *t).collect(),
            bands: hist
                .iter()
                .map(|h| {
                    [
                        h.quantile(0.05),
                        h.quantile(0.25),
                        h.quantile(0.5),
                        h.quantile(0.75),
                        h.quantile(0.95),
                    ]
                })
                .collect(),
            p_limit: n_limit as f64 / ok,
            p_caution: n_caution as f64 / ok,
            p_by_rule: n_by_rule
                .into_iter()
                .map(|(k, n)| (k, n as f64 / ok))
                .collect(),
            sensitivity,
            sensitivity_by_output,
            max_balance_residual: max_res,
            balance_checked: checked,
        })
    }
}

/// The rank of a value within its parameter's distribution (0–1): the CDF
/// for distributions and ranges, the list position for lists.
fn value_rank(p: &SweepParameter, x: f64) -> f64 {
    match (&p.values, p.range, &p.distribution) {
        (Some(v), _, _) => {
            let below = v.iter().filter(|&&y| y < x).count() as f64;
            let equal = v.iter().filter(|&&y| y == x).count() as f64;
            (below + 0.5 * equal) / v.len() as f64
        }
        (None, Some([a, b]), _) => {
            if b > a {
                (x - a) / (b - a)
            } else {
                0.5
            }
        }
        (None, None, Some(Distribution::Uniform { min, max })) => (x - min) / (max - min),
        (None, None, Some(Distribution::Normal { mean, sd, .. })) => normal_cdf((x - mean) / sd),
        (None, None, Some(Distribution::LogNormal { median, sigma, .. })) => {
            normal_cdf((x.ln() - median.ln()) / sigma)
        }
        _ => f64::NAN,
    }
}
