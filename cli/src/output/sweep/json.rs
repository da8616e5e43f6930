//! A sweep's `summary.json`: member counts, the share of members crossing
//! each rule, sodium percentiles over time, sensitivities, mass balance.

use super::SweepReport;
use crate::output::{Output, OutputFile};
use anyhow::Result;
use serde_json::json;

/// The file name.
pub const FILE_NAME: &str = "summary.json";

/// The JSON output of a sweep.
pub struct SweepJson;

impl Output<SweepReport> for SweepJson {
    fn format(&self) -> &'static str {
        "json"
    }

    fn files(&self, report: &SweepReport) -> Result<Vec<OutputFile>> {
        let (summary, limits) = (&report.summary, &report.limits);
        let value = json!({
            "members": summary.members,
            "failed": summary.failed,
            "probability_limit_crossed": summary.p_limit,
            "probability_caution_crossed": summary.p_caution,
            "guideline": { "id": limits.guideline.id, "source": limits.guideline.source, "high_risk": limits.high_risk },
            "probability_by_limit": report.by_rule.iter().map(|s| json!({
                "rule": s.number,
                "label": s.rule.label,
                "severity": s.rule.severity,
                "direction": s.rule.direction,
                "max_mmol_l": s.rule.max_mmol_l,
                "window_h": s.rule.window_h,
                "probability": s.probability,
            })).collect::<Vec<_>>(),
            "sodium_percentiles": summary.band_times_h.iter().zip(summary.bands.iter()).map(|(t, b)| json!({
                "time_h": t, "p5": b[0], "p25": b[1], "p50": b[2], "p75": b[3], "p95": b[4]
            })).collect::<Vec<_>>(),
            "sensitivity_largest_rise_24h": summary.sensitivity.iter().map(|(n, r)| json!({"parameter": n, "rank_correlation": r})).collect::<Vec<_>>(),
            "sensitivity_by_output": summary.sensitivity_by_output.iter().map(|(o, by)| json!({
                "output": o,
                "rank_correlation": by.iter().map(|(n, r)| json!({"parameter": n, "rank_correlation": r})).collect::<Vec<_>>(),
            })).collect::<Vec<_>>(),
            "mass_balance": { "members_checked": summary.balance_checked, "max_relative_residual": summary.max_balance_residual },
            "caution": tidewater::CAUTION,
        });
        Ok(vec![self.file(
            FILE_NAME,
            serde_json::to_string_pretty(&value)? + "\n",
        )])
    }
}
