//! `tidewater sweep` and `tidewater merge`: run a parameter sweep over a
//! base scenario (in parallel, resumable, shardable), and join shards.
//! Presentation of the summary (tables, fan chart, sensitivity chart) lives
//! here; the sweep machinery is `tidewater::sweep`.

use anyhow::{bail, Context, Result};
use clap::Args;
use plotters::prelude::*;
use std::io::Write;
use std::path::{Path, PathBuf};
use tidewater::limits::{Direction, LimitChoice, Rule, Severity};
use tidewater::scenario::Scenario;
use tidewater::sweep::{self, ScenarioRunner, Shard, Summary, SweepSpec};

/// Options of `tidewater sweep`.
#[derive(Args, Debug)]
pub struct SweepArgs {
    /// Sweep specification (YAML).
    pub spec: PathBuf,
    /// Result file (CSV, one row per member; resumed if it exists).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Run only shard K of N (1-based, e.g. 2/8). Inside a Slurm array job
    /// the shard is taken from SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT
    /// when this option is absent.
    #[arg(long)]
    pub shard: Option<String>,
    /// Worker threads (default: all cores).
    #[arg(long)]
    pub threads: Option<usize>,
    /// Write the summary (JSON and SVG charts) next to the result file.
    #[arg(long, default_value_t = true, action = clap::ArgAction::Set)]
    pub summary: bool,
    /// Print the members (number and parameter values, CSV) of the design,
    /// or of the shard, and run nothing: check a design before a long run.
    #[arg(long)]
    pub design_only: bool,
}

/// Options of `tidewater merge`.
#[derive(Args, Debug)]
pub struct MergeArgs {
    /// Shard result files.
    #[arg(required = true)]
    pub inputs: Vec<PathBuf>,
    /// Merged result file.
    #[arg(long)]
    pub out: PathBuf,
    /// The sweep spec, to write the summary of the merged result.
    #[arg(long)]
    pub spec: Option<PathBuf>,
}

/// Progress of a sweep on a bar (shared between worker threads).
struct BarProgress(indicatif::ProgressBar);

impl sweep::Progress for BarProgress {
    fn advance(&self, done: usize) {
        self.0.inc(done as u64);
    }
}

fn shard_from(args: &SweepArgs) -> Result<Shard> {
    if let Some(s) = &args.shard {
        return Ok(Shard::parse(s)?);
    }
    match (
        std::env::var("SLURM_ARRAY_TASK_ID"),
        std::env::var("SLURM_ARRAY_TASK_COUNT"),
    ) {
        (Ok(id), Ok(count)) => {
            // Array indices may start at 0 or 1: use the minimum if given.
            let min: usize = std::env::var("SLURM_ARRAY_TASK_MIN")
                .ok()
                .and_then(|m| m.parse().ok())
                .unwrap_or(1);
            let id: usize = id.parse().context("SLURM_ARRAY_TASK_ID is not a number")?;
            let count: usize = count
                .parse()
                .context("SLURM_ARRAY_TASK_COUNT is not a number")?;
            Ok(Shard::parse(&format!("{}/{}", id + 1 - min, count))?)
        }
        _ => Ok(Shard::ALL),
    }
}

/// Read a sweep spec and load its base scenario (the script path is
/// relative to the spec file).
fn load_spec(spec_path: &Path) -> Result<(SweepSpec, PathBuf, Scenario)> {
    let text = std::fs::read_to_string(spec_path)
        .with_context(|| format!("cannot read {}", spec_path.display()))?;
    let spec = SweepSpec::from_yaml(&text, &spec_path.display().to_string())?;
    let script = spec_path
        .parent()
        .unwrap_or(Path::new("."))
        .join(&spec.scenario);
    let scenario = Scenario::load(&script).map_err(|e| anyhow::anyhow!("{e}"))?;
    Ok((spec, script, scenario))
}

/// Run `tidewater sweep`.
pub fn sweep_command(args: SweepArgs, style: crate::options::Style) -> Result<()> {
    // The scenario is loaded once here to report script errors before any
    // work starts.
    let (spec, script, scenario) = load_spec(&args.spec)?;
    let duration_h = scenario.plan().duration_h;
    let shard = shard_from(&args)?;
    if args.design_only {
        let mut out = std::io::stdout().lock();
        writeln!(out, "{}", sweep::design_header(&spec).join(","))?;
        for i in (0..spec.member_count()).filter(|i| shard.contains(*i)) {
            writeln!(out, "{}", sweep::design_cells(&spec.member(i)).join(","))?;
        }
        return Ok(());
    }
    let out = args.out.clone().unwrap_or_else(|| {
        let stem = args
            .spec
            .file_stem()
            .and_then(|s| s.to_str())
            .unwrap_or("sweep");
        if shard.count > 1 {
            PathBuf::from(format!(
                "runs/{stem}/shard-{}-of-{}.csv",
                shard.index + 1,
                shard.count
            ))
        } else {
            PathBuf::from(format!("runs/{stem}/results.csv"))
        }
    });
    if let Some(dir) = out.parent() {
        if !dir.as_os_str().is_empty() {
            std::fs::create_dir_all(dir)
                .with_context(|| format!("cannot create {}", dir.display()))?;
        }
    }
    // Rows are resumed or merged only with rows of this very spec, script
    // and engine.
    sweep::claim_output(&out, &sweep::fingerprint(&spec, scenario.source()))?;
    let threads = args
        .threads
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()));
    let total = (0..spec.member_count())
        .filter(|i| shard.contains(*i))
        .count();
    eprintln!(
        "sweep: {} members ({} in this shard) of {} on {threads} thread{} -> {}",
        spec.member_count(),
        total,
        script.display(),
        if threads == 1 { "" } else { "s" },
        out.display()
    );
    let bar = crate::progress::bar(total as u64, "members", style);
    if let Some(s) = indicatif::ProgressStyle::with_template(
        "{msg:>12} [{bar:32}] {pos}/{len} {per_sec} eta {eta}",
    )
    .ok()
    .filter(|_| style.progress)
    {
        bar.set_style(s.progress_chars("=> "));
    }
    let progress = BarProgress(bar.clone());
    let start = std::time::Instant::now();
    let ran = sweep::run_sweep(
        &spec,
        duration_h,
        &out,
        shard,
        threads,
        || {
            Scenario::load(&script)
                .map(|scenario| ScenarioRunner {
                    scenario,
                    rtol: spec.rtol,
                })
                .map_err(|e| e.to_string())
        },
        &progress,
    )?;
    bar.finish_and_clear();
    let secs = start.elapsed().as_secs_f64();
    eprintln!(
        "sweep: ran {ran} members in {secs:.1} s ({:.0} members/s)",
        ran as f64 / secs.max(1e-9)
    );
    if args.summary && shard.count == 1 {
        write_summary(&spec, &out, &scenario.plan().limits)?;
    }
    Ok(())
}

/// Run `tidewater merge`.
pub fn merge_command(args: MergeArgs) -> Result<()> {
    let inputs: Vec<&Path> = args.inputs.iter().map(|p| p.as_path()).collect();
    let n = sweep::merge(&inputs, &args.out)?;
    eprintln!("merge: {n} members -> {}", args.out.display());
    if let Some(spec_path) = &args.spec {
        // The scenario names the guideline set whose rules the rows count.
        let (spec, _, scenario) = load_spec(spec_path)?;
        write_summary(&spec, &args.out, &scenario.plan().limits)?;
    }
    Ok(())
}

fn write_summary(spec: &SweepSpec, results: &Path, limits: &LimitChoice) -> Result<()> {
    let summary = Summary::from_file(spec, results)?;
    let dir = results.parent().unwrap_or(Path::new("."));
    // Every rule of the set, with the share of members that crossed it
    // (0 when none did).
    let by_rule: Vec<(usize, &Rule, f64)> = limits
        .rules()
        .iter()
        .enumerate()
        .map(|(i, r)| {
            (
                i + 1,
                r,
                summary.p_by_rule.get(&(i + 1)).copied().unwrap_or(0.0),
            )
        })
        .collect();
    if let Some(k) = summary
        .p_by_rule
        .keys()
        .find(|k| **k == 0 || **k > by_rule.len())
    {
        bail!(
            "{}: column limits_crossed names rule {k}, but {} has {} rules: was the file written for another scenario?",
            results.display(),
            limits.guideline.id,
            by_rule.len()
        );
    }
    let json = serde_json::json!({
        "members": summary.members,
        "failed": summary.failed,
        "probability_limit_crossed": summary.p_limit,
        "probability_caution_crossed": summary.p_caution,
        "guideline": { "id": limits.guideline.id, "source": limits.guideline.source, "high_risk": limits.high_risk },
        "probability_by_limit": by_rule.iter().map(|(k, r, p)| serde_json::json!({
            "rule": k,
            "label": r.label,
            "severity": r.severity,
            "direction": r.direction,
            "max_mmol_l": r.max_mmol_l,
            "window_h": r.window_h,
            "probability": p,
        })).collect::<Vec<_>>(),
        "sodium_percentiles": summary.band_times_h.iter().zip(summary.bands.iter()).map(|(t, b)| serde_json::json!({
            "time_h": t, "p5": b[0], "p25": b[1], "p50": b[2], "p75": b[3], "p95": b[4]
        })).collect::<Vec<_>>(),
        "sensitivity_largest_rise_24h": summary.sensitivity.iter().map(|(n, r)| serde_json::json!({"parameter": n, "rank_correlation": r})).collect::<Vec<_>>(),
        "sensitivity_by_output": summary.sensitivity_by_output.iter().map(|(o, by)| serde_json::json!({
            "output": o,
            "rank_correlation": by.iter().map(|(n, r)| serde_json::json!({"parameter": n, "rank_correlation": r})).collect::<Vec<_>>(),
        })).collect::<Vec<_>>(),
        "mass_balance": { "members_checked": summary.balance_checked, "max_relative_residual": summary.max_balance_residual },
        "caution": tidewater::CAUTION,
    });
    // Each file is written whole or not at all (a temporary file renamed).
    let path = dir.join("summary.json");
    crate::report::write_whole(&path, &(serde_json::to_string_pretty(&json)? + "\n"))?;
    if !summary.band_times_h.is_empty() {
        write_chart(&dir.join("sodium_bands.svg"), |svg| {
            draw_fan_chart(&summary, svg)
        })?;
    }
    if !summary.sensitivity.is_empty() {
        write_chart(&dir.join("sensitivity.svg"), |svg| {
            draw_sensitivity_chart(&summary, svg)
        })?;
    }
    if !summary.sensitivity_by_output.is_empty() {
        write_chart(&dir.join("sensitivity_by_output.svg"), |svg| {
            draw_sensitivity_matrix(&summary, svg)
        })?;
    }
    println!("Caution: {}", tidewater::CAUTION);
    println!("members\tfailed\tP(limit crossed)\tP(caution crossed)");
    println!(
        "{}\t{}\t{:.3}\t{:.3}",
        summary.members, summary.failed, summary.p_limit, summary.p_caution
    );
    println!(
        "limit of {}{}\tP(crossed)",
        limits.guideline.id,
        if limits.high_risk { " (high risk)" } else { "" }
    );
    for (k, r, p) in &by_rule {
        let change = match r.direction {
            Direction::Rise => "rise",
            Direction::Fall => "fall",
        };
        let severity = match r.severity {
            Severity::Limit => "limit",
            Severity::Caution => "caution",
        };
        println!(
            "{k}. {} ({change} <= {} mmol/L in {} h, {severity})\t{p:.3}",
            r.label, r.max_mmol_l, r.window_h
        );
    }
    println!("parameter\trank correlation with the largest 24 h rise");
    for (n, r) in &summary.sensitivity {
        println!("{n}\t{r:+.3}");
    }
    if !summary.sensitivity_by_output.is_empty() {
        // Every kept output: which parameters drive what.
        let outputs: Vec<&str> = summary
            .sensitivity_by_output
            .iter()
            .map(|(o, _)| o.as_str())
            .collect();
        println!("rank correlation with each kept output");
        println!("parameter\t{}", outputs.join("\t"));
        for (j, p) in spec.parameters.iter().enumerate() {
            let cells: Vec<String> = summary
                .sensitivity_by_output
                .iter()
                .map(|(_, by)| format!("{:+.3}", by[j].1))
                .collect();
            println!("{}\t{}", p.name, cells.join("\t"));
        }
    }
    eprintln!("summary: {} (and charts beside it)", path.display());
    Ok(())
}

/// Draw a chart into an SVG string and write it whole.
fn write_chart(path: &Path, draw: impl FnOnce(&mut String) -> Result<()>) -> Result<()> {
    let mut svg = String::new();
    draw(&mut svg)?;
    crate::report::write_whole(path, &svg)
}

fn draw_fan_chart(summary: &Summary, buf: &mut String) -> Result<()> {
    let root = SVGBackend::with_string(buf, (820, 460)).into_drawing_area();
    root.fill(&WHITE)?;
    let root = crate::report::svg::caution_footer(&root)?;
    let t_max = summary.band_times_h.last().copied().unwrap_or(1.0).max(1.0);
    let lo = summary
        .bands
        .iter()
        .map(|b| b[0])
        .fold(f64::INFINITY, f64::min)
        .floor()
        - 1.0;
    let hi = summary
        .bands
        .iter()
        .map(|b| b[4])
        .fold(f64::NEG_INFINITY, f64::max)
        .ceil()
        + 1.0;
    let mut chart = ChartBuilder::on(&root)
        .caption(
            "Serum sodium across the sweep (5-95 and 25-75 % bands, median)",
            ("sans-serif", 18),
        )
        .margin(14)
        .x_label_area_size(40)
        .y_label_area_size(56)
        .build_cartesian_2d(0.0..t_max * 1.001, lo..hi)?;
    chart
        .configure_mesh()
        .x_desc("time (h)")
        .y_desc("serum sodium (mmol/L)")
        .x_label_formatter(&|x| format!("{x:.0}"))
        .y_label_formatter(&|y| format!("{y:.0}"))
        .draw()?;
    let band = |i: usize, j: usize| -> Vec<(f64, f64)> {
        let mut pts: Vec<(f64, f64)> = summary
            .band_times_h
            .iter()
            .zip(summary.bands.iter())
            .map(|(t, b)| (*t, b[i]))
            .collect();
        pts.extend(
            summary
                .band_times_h
                .iter()
                .zip(summary.bands.iter())
                .rev()
                .map(|(t, b)| (*t, b[j])),
        );
        pts
    };
    let outer = RGBColor(158, 202, 225);
    let inner = RGBColor(66, 146, 198);
    chart
        .draw_series(std::iter::once(Polygon::new(
            band(0, 4),
            outer.mix(0.5).filled(),
        )))?
        .label("5-95 %")
        .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 14, y + 5)], outer.filled()));
    chart
        .draw_series(std::iter::once(Polygon::new(
            band(1, 3),
            inner.mix(0.6).filled(),
        )))?
        .label("25-75 %")
        .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 14, y + 5)], inner.filled()));
    chart
        .draw_series(LineSeries::new(
            summary
                .band_times_h
                .iter()
                .zip(summary.bands.iter())
                .map(|(t, b)| (*t, b[2])),
            ShapeStyle::from(&RGBColor(8, 48, 107)).stroke_width(2),
        ))?
        .label("median")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 14, y)], RGBColor(8, 48, 107)));
    chart
        .configure_series_labels()
        .border_style(BLACK.mix(0.3))
        .background_style(WHITE.mix(0.9))
        .position(SeriesLabelPosition::LowerRight)
        .draw()?;
    root.present()?;
    Ok(())
}

fn draw_sensitivity_chart(summary: &Summary, buf: &mut String) -> Result<()> {
    if summary.sensitivity.is_empty() {
        bail!("no parameters to rank");
    }
    let n = summary.sensitivity.len();
    let root = SVGBackend::with_string(buf, (820, (120 + 34 * n) as u32)).into_drawing_area();
    root.fill(&WHITE)?;
    let root = crate::report::svg::caution_footer(&root)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(
            "What drives the largest 24 h rise (rank correlation)",
            ("sans-serif", 18),
        )
        .margin(14)
        .x_label_area_size(40)
        .y_label_area_size(230)
        .build_cartesian_2d(-1.0..1.0, (0..n).into_segmented())?;
    let names: Vec<String> = summary.sensitivity.iter().map(|(n, _)| n.clone()).collect();
    chart
        .configure_mesh()
        .x_desc("rank correlation with the largest 24 h rise")
        .y_label_formatter(&|v| match v {
            SegmentValue::CenterOf(i) => names.get(*i).cloned().unwrap_or_default(),
            _ => String::new(),
        })
        .x_label_formatter(&|x| format!("{x:+.1}"))
        .draw()?;
    chart.draw_series(summary.sensitivity.iter().enumerate().map(|(i, (_, r))| {
        let color = if *r >= 0.0 { POSITIVE } else { NEGATIVE };
        Rectangle::new(
            [
                (0.0, SegmentValue::Exact(i)),
                (*r, SegmentValue::Exact(i + 1)),
            ],
            color.mix(0.8).filled(),
        )
    }))?;
    root.present()?;
    Ok(())
}

/// Colour of a positive correlation.
const POSITIVE: RGBColor = RGBColor(203, 24, 29);
/// Colour of a negative correlation.
const NEGATIVE: RGBColor = RGBColor(33, 113, 181);

/// Colour of a correlation: [`NEGATIVE`] or [`POSITIVE`], paler towards
/// zero.
fn correlation_colour(r: f64) -> RGBColor {
    let a = r.abs().clamp(0.0, 1.0);
    let RGBColor(base_r, base_g, base_b) = if r >= 0.0 { POSITIVE } else { NEGATIVE };
    let mix = |c: u8| (255.0 + (f64::from(c) - 255.0) * a).round() as u8;
    RGBColor(mix(base_r), mix(base_g), mix(base_b))
}

/// Every parameter against every kept output: a grid of cells coloured by
/// the rank correlation, with its value written in.
fn draw_sensitivity_matrix(summary: &Summary, buf: &mut String) -> Result<()> {
    let outputs = &summary.sensitivity_by_output;
    let n_out = outputs.len();
    let n_par = outputs.first().map_or(0, |(_, by)| by.len());
    if n_par == 0 {
        bail!("no parameters to rank");
    }
    let (cell_w, cell_h, left, top) = (110i32, 34i32, 240i32, 70i32);
    let width = (left + cell_w * n_out as i32 + 20) as u32;
    let height = (top + cell_h * n_par as i32 + 40) as u32;
    let root = SVGBackend::with_string(buf, (width.max(520), height)).into_drawing_area();
    root.fill(&WHITE)?;
    let root = crate::report::svg::caution_footer(&root)?;
    root.draw(&Text::new(
        "What drives each output (rank correlation)",
        (14, 12),
        ("sans-serif", 18).into_font(),
    ))?;
    let label = ("sans-serif", 12).into_font();
    for (o, (name, by)) in outputs.iter().enumerate() {
        let x = left + cell_w * o as i32;
        root.draw(&Text::new(name.clone(), (x + 4, top - 18), label.clone()))?;
        for (p, (param, r)) in by.iter().enumerate() {
            let y = top + cell_h * p as i32;
            if o == 0 {
                root.draw(&Text::new(param.clone(), (14, y + 10), label.clone()))?;
            }
            root.draw(&Rectangle::new(
                [(x, y), (x + cell_w - 2, y + cell_h - 2)],
                correlation_colour(*r).filled(),
            ))?;
            let ink = if r.abs() > 0.6 { WHITE } else { BLACK };
            root.draw(&Text::new(
                format!("{r:+.2}"),
                (x + cell_w / 2 - 16, y + 10),
                label.clone().color(&ink),
            ))?;
        }
    }
    root.present()?;
    Ok(())
}
