//! Sweeps: determinism across thread counts, shards merging to the
//! unsharded result, resuming after an interruption, failures recorded,
//! summaries and sensitivity.

use tidewater::{Cause, Sex};

use std::path::PathBuf;
use tidewater::sweep::{self, PlanRunner, Shard, Summary, SweepSpec};
use tidewater::{Action, Patient, Plan};
use tidewater_checks::*;

fn base_plan() -> Plan {
    // Invented patient: chronic hypovolemic hyponatremia given isotonic
    // saline (the overcorrection case), 24 h.
    let p = Patient {
        na: Some(118.0),
        cause: Some(Cause::Hypovolemic),
        ..Patient::healthy(Sex::Female, 60.0, 60.0)
    };
    Plan::new(p)
        .run_for(24.0)
        .sample_every(0.5)
        .at(0.0, Action::Stop("habitual".into()))
        .start(0.0, give("saline_0_9", 2.0, 12.0))
}

// The volume threshold stays below the cause's 12 % deficit, so that the
// cause holds vasopressin up in every member (above it the start at 118
// would need primary polydipsia and is refused).
fn spec(members: usize) -> SweepSpec {
    let text = format!(
        "scenario: in-code\ndesign: latin_hypercube\nmembers: {members}\nseed: 11\ncheck_balance_share: 0.2\n\
         parameters:\n  - name: patient.weight_kg\n    range: [45, 95]\n  - name: volume_avp_threshold_fraction\n    distribution: {{ kind: normal, mean: 0.08, sd: 0.02, min: 0.02, max: 0.11 }}\n  - name: desmopressin_half_life_h\n    range: [2, 4]\n\
         outputs:\n  na_at_h: [6, 12, 24]\n  band_every_h: 4\n"
    );
    SweepSpec::from_yaml(&text, "spec.yaml").unwrap()
}

fn tmp(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("tidewater-sweep-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn run_into(spec: &SweepSpec, path: &std::path::Path, shard: Shard, threads: usize) -> usize {
    sweep::run_sweep(
        spec,
        24.0,
        path,
        shard,
        threads,
        || Ok(PlanRunner { base: base_plan() }),
        &(),
    )
    .unwrap()
}

#[test]
fn threads_shards_and_resume_give_identical_files() {
    let spec = spec(24);
    let dir = tmp("same");
    let one = dir.join("one.csv");
    let two = dir.join("two.csv");
    assert_eq!(run_into(&spec, &one, Shard::ALL, 1), 24);
    assert_eq!(run_into(&spec, &two, Shard::ALL, 2), 24);
    let reference = std::fs::read(&one).unwrap();
    assert_eq!(reference, std::fs::read(&two).unwrap(), "1 vs 2 threads");

    // Shards 1/2 and 2/2, merged, equal the unsharded run.
    let (a, b, merged) = (dir.join("a.csv"), dir.join("b.csv"), dir.join("merged.csv"));
    run_into(&spec, &a, Shard::parse("1/2").unwrap(), 2);
    run_into(&spec, &b, Shard::parse("2/2").unwrap(), 2);
    assert_eq!(
        sweep::merge(&[a.as_path(), b.as_path()], &merged).unwrap(),
        24
    );
    assert_eq!(reference, std::fs::read(&merged).unwrap(), "merged shards");

    // Interrupted half-way, mid-row: keep 10 complete rows and half of the
    // 11th, then resume.
    let text = String::from_utf8(reference.clone()).unwrap();
    let lines: Vec<&str> = text.split_inclusive('\n').collect();
    let mut cut: String = lines[..11].concat();
    cut.push_str(&lines[11][..lines[11].len() / 2]);
    let resumed = dir.join("resumed.csv");
    std::fs::write(&resumed, cut).unwrap();
    assert_eq!(
        run_into(&spec, &resumed, Shard::ALL, 2),
        14,
        "only the missing members run"
    );
    assert_eq!(reference, std::fs::read(&resumed).unwrap(), "resumed run");
    assert_eq!(
        run_into(&spec, &resumed, Shard::ALL, 2),
        0,
        "nothing left to run"
    );
    std::fs::remove_dir_all(dir).ok();
}

#[test]
fn failed_members_are_recorded_and_the_sweep_goes_on() {
    let text = "scenario: in-code\ndesign: grid\nparameters:\n  - name: patient.na\n    values: [118, 300, 125]\n";
    let spec = SweepSpec::from_yaml(text, "s.yaml").unwrap();
    let dir = tmp("fail");
    let out = dir.join("r.csv");
    run_into(&spec, &out, Shard::ALL, 2);
    let text = std::fs::read_to_string(&out).unwrap();
    let rows: Vec<&str> = text.lines().skip(1).collect();
    assert_eq!(rows.len(), 3);
    assert!(
        rows[1].contains("failed") && rows[1].contains("na = 300"),
        "{}",
        rows[1]
    );
    assert!(rows[0].contains(",ok,") && rows[2].contains(",ok,"));
    std::fs::remove_dir_all(dir).ok();
}

#[test]
fn summary_gives_bands_probabilities_and_a_sensible_ranking() {
    let spec = spec(40);
    let dir = tmp("summary");
    let out = dir.join("r.csv");
    run_into(&spec, &out, Shard::ALL, 2);
    let s = Summary::from_file(&spec, &out).unwrap();
    assert_eq!((s.members, s.failed), (40, 0));
    for b in &s.bands {
        assert!(b.windows(2).all(|w| w[0] <= w[1]), "{b:?}");
    }
    assert!(
        (0.0..=1.0).contains(&s.p_limit) && s.p_limit > 0.0,
        "the overcorrection case crosses limits"
    );
    // Per rule: the run lasts 24 h, so of the European rules only the
    // first-24-h rise limit (rule 1) can be crossed, by exactly the members
    // that crossed any limit.
    let rule_1 = s.p_by_rule.get(&1).copied().unwrap_or(0.0);
    assert_eq!(rule_1, s.p_limit, "{:?}", s.p_by_rule);
    assert!(s.p_by_rule.keys().all(|k| *k == 1), "{:?}", s.p_by_rule);
    // Mass balance on the checked share of members.
    assert!(s.balance_checked > 0 && s.max_balance_residual < 1e-6);
    // Body size drives the 24 h rise far more than a drug half-life that
    // plays no part (no desmopressin is given).
    let rank = |name: &str| s.sensitivity.iter().position(|(n, _)| n == name).unwrap();
    assert!(rank("desmopressin_half_life_h") == 2, "{:?}", s.sensitivity);
    let weight = s
        .sensitivity
        .iter()
        .find(|(n, _)| n == "patient.weight_kg")
        .unwrap()
        .1;
    assert!(weight.abs() > 0.5, "{:?}", s.sensitivity);
    // Every kept output has its own ranking; the one of the largest 24 h
    // rise is the ranking above.
    let outputs: Vec<&str> = s
        .sensitivity_by_output
        .iter()
        .map(|(o, _)| o.as_str())
        .collect();
    assert_eq!(
        outputs,
        [
            "na_at_6h_mmol_l",
            "na_at_12h_mmol_l",
            "na_at_24h_mmol_l",
            "largest_rise_24h_mmol_l",
            "largest_rise_48h_mmol_l",
            "min_brain_volume_index"
        ]
    );
    let (_, rise) = &s.sensitivity_by_output[3];
    for (name, r) in &s.sensitivity {
        let same = rise.iter().find(|(n, _)| n == name).unwrap().1;
        assert_eq!(*r, same, "{name}");
    }
    // They are Spearman rank correlations: the same as ranking the
    // parameter values and the outputs of the file directly (average ranks
    // for ties, Pearson on the ranks; Spearman 1904, the textbook
    // definition), to the histogram's resolution.
    let text = std::fs::read_to_string(&out).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let column = |name: &str| -> Vec<f64> {
        let c = header.iter().position(|h| *h == name).unwrap();
        rows.iter().map(|r| r[c].parse().unwrap()).collect()
    };
    for (output, by) in &s.sensitivity_by_output {
        let y = column(output);
        for (param, r) in by {
            let exact = spearman(&column(param), &y);
            assert!(
                (r - exact).abs() < 0.03,
                "{param} vs {output}: {r:.4}, exact {exact:.4}"
            );
        }
    }
    std::fs::remove_dir_all(dir).ok();
}

#[test]
fn the_documented_example_spec_is_valid_and_runs() {
    // The YAML block of scenarios/sweeps/README.md, with every key.
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("scenarios/sweeps/README.md")).unwrap();
    let start = readme.find("```yaml\n").expect("a yaml block") + "```yaml\n".len();
    let end = start + readme[start..].find("```").unwrap();
    let spec = SweepSpec::from_yaml(&readme[start..end], "scenarios/sweeps/README.md").unwrap();
    assert_eq!(spec.member_count(), 500);
    assert_eq!(spec.rtol, Some(1e-5));
    assert_eq!(spec.parameters.len(), 5);
    // Its first members run on the scenario it names, as `tidewater sweep`
    // runs them.
    let script = root.join("scenarios/sweeps").join(&spec.scenario);
    let mut runner = sweep::ScenarioRunner {
        scenario: tidewater::scenario::Scenario::load(&script).unwrap(),
        rtol: spec.rtol,
    };
    for i in 0..3 {
        let m = spec.member(i);
        let overrides: Vec<(String, f64)> = spec
            .parameters
            .iter()
            .zip(&m.values)
            .map(|(p, v)| (p.name.clone(), *v))
            .collect();
        let traj = sweep::MemberRunner::run(&mut runner, &overrides).unwrap();
        assert_balanced(&traj);
    }
}

/// Spearman's rank correlation with average ranks for ties.
fn spearman(x: &[f64], y: &[f64]) -> f64 {
    fn ranks(v: &[f64]) -> Vec<f64> {
        let mut idx: Vec<usize> = (0..v.len()).collect();
        idx.sort_by(|a, b| v[*a].total_cmp(&v[*b]));
        let mut r = vec![0.0; v.len()];
        let mut i = 0;
        while i < idx.len() {
            let mut j = i;
            while j + 1 < idx.len() && v[idx[j + 1]] == v[idx[i]] {
                j += 1;
            }
            let avg = (i + j) as f64 / 2.0 + 1.0;
            for k in &idx[i..=j] {
                r[*k] = avg;
            }
            i = j + 1;
        }
        r
    }
    let (rx, ry) = (ranks(x), ranks(y));
    let n = x.len() as f64;
    let (mx, my) = (rx.iter().sum::<f64>() / n, ry.iter().sum::<f64>() / n);
    let cov: f64 = rx.iter().zip(&ry).map(|(a, b)| (a - mx) * (b - my)).sum();
    let vx: f64 = rx.iter().map(|a| (a - mx).powi(2)).sum();
    let vy: f64 = ry.iter().map(|b| (b - my).powi(2)).sum();
    if vx == 0.0 || vy == 0.0 {
        0.0
    } else {
        cov / (vx * vy).sqrt()
    }
}
