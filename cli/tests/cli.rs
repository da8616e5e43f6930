//! End-to-end checks of the `tidewater` command: exit codes, the CSV column
//! contract, atomic output, `fluids` and `patient`.

use std::path::Path;
use std::process::{Command, Output};

fn tidewater(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(args)
        .env("NO_COLOR", "1")
        .output()
        .expect("the tidewater binary runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

const COLUMNS: &str = "time_h,na_mmol_l,k_mmol_l,glucose_mmol_l,urea_mmol_l,albumin_g_l,osmolality_mosm_kg,tonicity_mosm_kg,cells_l,red_cells_l,interstitium_l,plasma_l,brain_volume_index,urine_ml_h,urine_osm_mosm_kg,urine_na_mmol_l,efwc_ml_h,hematocrit,na_change_24h_mmol_l,water_in_cum_l,water_out_cum_l,na_in_cum_mmol,na_out_cum_mmol";

fn run_demo(out: &Path) -> Output {
    tidewater(&["run", "--demo", "--out", out.to_str().unwrap()])
}

#[test]
fn bad_option_exits_with_two() {
    let out = tidewater(&["run", "--demo", "--no-such-option"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("--no-such-option"));
    let out = tidewater(&["fluidz"]);
    assert_eq!(out.status.code(), Some(2));
    // clap suggests the closest command.
    assert!(
        text(&out.stderr).contains("fluids"),
        "{}",
        text(&out.stderr)
    );
    // run needs a script or --demo.
    assert_eq!(tidewater(&["run"]).status.code(), Some(2));
}

#[test]
fn help_documents_exit_codes() {
    let out = tidewater(&["--help"]);
    assert_eq!(out.status.code(), Some(0));
    let help = text(&out.stdout);
    assert!(
        help.contains("Exit codes:") && help.contains("NO_COLOR"),
        "{help}"
    );
    assert!(help.contains("render-reports") && help.contains("completions"));
}

#[test]
fn demo_report_has_the_column_contract() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("demo");
    let out = run_demo(&dir);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(text(&out.stdout).trim().ends_with("report.html"));
    for f in [
        "samples.csv",
        "summary.json",
        "report.html",
        "sodium.svg",
        "volumes.svg",
        "urine.svg",
        "intake_output.svg",
    ] {
        assert!(dir.join(f).is_file(), "{f} missing");
    }
    let csv = std::fs::read_to_string(dir.join("samples.csv")).unwrap();
    let mut lines = csv.lines();
    assert_eq!(lines.next(), Some(COLUMNS));
    let n_cols = COLUMNS.split(',').count();
    let rows: Vec<Vec<f64>> = lines
        .map(|l| {
            let cells: Vec<f64> = l
                .split(',')
                .map(|c| {
                    c.parse::<f64>()
                        .unwrap_or_else(|_| panic!("not a number: {c}"))
                })
                .collect();
            assert_eq!(cells.len(), n_cols, "{l}");
            assert!(cells.iter().all(|x| x.is_finite()), "{l}");
            cells
        })
        .collect();
    // One row per sample: 48 h sampled every 5 min gives 48 * 12 + 1 rows,
    // the number summary.json reports.
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    assert_eq!(rows.len(), 48 * 12 + 1);
    assert_eq!(summary["samples"].as_u64(), Some(rows.len() as u64));
    // Times increase; the first row is the patient's stated sodium.
    assert!(rows.windows(2).all(|w| w[1][0] > w[0][0]));
    assert!((rows[0][1] - 118.0).abs() < 1e-6);
    assert_eq!(rows[0][18], 0.0);
    // summary.json agrees with the CSV.
    let end_na = summary["sodium"]["end"]["mmol_l"].as_f64().unwrap();
    assert!((end_na - rows.last().unwrap()[1]).abs() < 1e-3);
    assert!(summary["caution"]
        .as_str()
        .unwrap()
        .contains("not a medical device"));
    assert_eq!(summary["guideline"]["id"], "europe-2014");
    // Each chart carries the short caution too (it may be copied alone).
    for chart in [
        "sodium.svg",
        "volumes.svg",
        "urine.svg",
        "intake_output.svg",
    ] {
        let svg = std::fs::read_to_string(dir.join(chart)).unwrap();
        assert!(svg.contains("not a medical device"), "{chart}");
    }
    // Hematocrit is a fraction; serum osmolality at 118 mmol/L sodium with
    // normal glucose and urea is about 2 * 118 + 5 + 5 (the textbook
    // estimate 2 Na + glucose + urea, common practice).
    assert!(rows[0][17] > 0.2 && rows[0][17] < 0.6);
    assert!(
        (rows[0][6] - (2.0 * 118.0 + 10.0)).abs() < 8.0,
        "{}",
        rows[0][6]
    );
}

#[test]
fn reports_are_byte_identical_across_runs() {
    let root = tempfile::tempdir().unwrap();
    let (a, b) = (root.path().join("a"), root.path().join("b"));
    assert_eq!(run_demo(&a).status.code(), Some(0));
    assert_eq!(run_demo(&b).status.code(), Some(0));
    for f in ["samples.csv", "summary.json", "report.html", "sodium.svg"] {
        let (x, y) = (
            std::fs::read(a.join(f)).unwrap(),
            std::fs::read(b.join(f)).unwrap(),
        );
        assert!(x == y, "{f} differs between runs");
    }
}

#[test]
fn failed_run_leaves_no_output_folder() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("never");
    let script = root.path().join("missing.rhai");
    let out = tidewater(&[
        "run",
        script.to_str().unwrap(),
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("missing.rhai"),
        "{}",
        text(&out.stderr)
    );
    assert!(!dir.exists());
    // No staging folder is left behind either.
    assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 0);

    // An output path that is a file: refused, the file untouched.
    let file = root.path().join("taken");
    std::fs::write(&file, "keep me").unwrap();
    let out = run_demo(&file);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(std::fs::read_to_string(&file).unwrap(), "keep me");
    assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 1);
}

#[test]
fn rerun_replaces_the_folder_whole() {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("demo");
    std::fs::create_dir(&dir).unwrap();
    // A chart an older run drew and this one does not is replaced with the
    // folder (a folder holding anything Tidewater does not write is
    // refused: see the test below).
    std::fs::write(dir.join("stale_chart.svg"), "from an older run").unwrap();
    assert_eq!(run_demo(&dir).status.code(), Some(0));
    assert!(!dir.join("stale_chart.svg").exists());
    assert!(dir.join("samples.csv").exists());
    assert_eq!(std::fs::read_dir(root.path()).unwrap().count(), 1);
}

#[test]
fn a_folder_holding_other_files_is_never_replaced() {
    // `run --out DIR` replaces DIR as a whole: a folder holding a script,
    // notes or a subfolder is refused (exit 2), and every file stays.
    let dir = std::env::temp_dir().join(format!("tidewater-cli-foreign-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(dir.join("data")).unwrap();
    std::fs::write(dir.join("my.rhai"), "// mine\n").unwrap();
    let out = run_demo(&dir);
    assert_eq!(out.status.code(), Some(2), "{}", text(&out.stderr));
    let err = text(&out.stderr);
    assert!(
        err.contains("did not write") && err.contains("my.rhai"),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(dir.join("my.rhai")).unwrap(),
        "// mine\n"
    );
    assert!(dir.join("data").is_dir());
    assert!(!dir.join("report.html").exists());
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn fluids_table_and_json() {
    let out = tidewater(&["fluids"]);
    assert_eq!(out.status.code(), Some(0));
    let table = text(&out.stdout);
    let line = table
        .lines()
        .find(|l| l.starts_with("saline_3 "))
        .expect("saline_3 listed");
    // 3 % saline: 30 g/L NaCl / 58.44 g/mol = 513 mmol/L (common practice).
    assert!(line.contains(" 513 "), "{line}");
    let out = tidewater(&["fluids", "--json"]);
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let list = v["fluids"].as_array().unwrap();
    let normal = list.iter().find(|f| f["id"] == "saline_0_9").unwrap();
    // 0.9 % saline: 154 mmol/L each of Na and Cl, osmolarity 308 (common practice).
    assert_eq!(normal["na"].as_f64(), Some(154.0));
    assert_eq!(normal["osmolarity_mosm_l"].as_f64(), Some(308.0));
}

#[test]
fn fluids_file_errors_name_file_and_line() {
    let root = tempfile::tempdir().unwrap();
    let path = root.path().join("mine.yaml");
    std::fs::write(
        &path,
        "fluids:\n  - id: mine\n    name: Mine\n    kind: given\n    sodium: 100\n",
    )
    .unwrap();
    let out = tidewater(&["fluids", "--file", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(
        err.contains("mine.yaml:5") && err.contains("sodium"),
        "{err}"
    );
    assert!(out.stdout.is_empty());
}

#[test]
fn yaml_files_that_would_hang_or_mislead_are_refused_at_their_line() {
    let root = tempfile::tempdir().unwrap();
    let path = root.path().join("mine.yaml");
    let refused = |content: String, want: &str| {
        std::fs::write(&path, content).unwrap();
        let out = tidewater(&["fluids", "--file", path.to_str().unwrap()]);
        assert_eq!(out.status.code(), Some(2));
        let err = text(&out.stderr);
        assert!(err.contains(want), "want `{want}` in {err}");
    };
    // A field given twice: pointed at the line that repeats it (line 6),
    // not at the start of its map (line 2).
    refused(
        "fluids:\n  - id: mine\n    name: Mine\n    kind: given\n    na: 100\n    na: 154\n".into(),
        "mine.yaml:6:5: fluids[0]: duplicate field `na`",
    );
    // 100,000 nested brackets took minutes in the parser.
    refused(
        format!("fluids: {}{}\n", "[".repeat(100_000), "]".repeat(100_000)),
        "mine.yaml:1:",
    );
    // 300,000 fluids (15 MB): the id check was quadratic and ran for
    // minutes; now a count bound.
    let many: String = std::iter::once("fluids:\n".to_string())
        .chain((0..300_000).map(|i| format!("  - {{id: f{i}, name: F, kind: given, na: 100}}\n")))
        .collect();
    refused(many, "300000 fluids: a fluid file holds at most 10000");
}

#[test]
fn render_reports_names_folders_after_scripts_and_adds_the_demo_only_when_asked() {
    let root = tempfile::tempdir().unwrap();
    let scripts = root.path().join("s");
    std::fs::create_dir(&scripts).unwrap();
    std::fs::write(
        scripts.join("acute_120.rhai"),
        "patient(#{ sex: \"female\", age_years: 30, weight_kg: 60, na: 140 });\nrun_for(hours(1));\n",
    )
    .unwrap();
    let reports = root.path().join("r");
    let dirs = || {
        let mut d: Vec<String> = std::fs::read_dir(&reports)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
            .collect();
        d.sort();
        d
    };
    let args = [
        "render-reports",
        scripts.to_str().unwrap(),
        reports.to_str().unwrap(),
    ];
    let out = tidewater(&args);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(dirs(), ["acute_120"]);
    let out = tidewater(&[&args[..], &["--demo"]].concat());
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert_eq!(dirs(), ["acute_120", "demo"]);
}

#[test]
fn compare_lays_scenarios_side_by_side_and_refuses_bad_input_whole() {
    let root = tempfile::tempdir().unwrap();
    let write = |name: &str, na: u32, ml: u32| {
        let path = root.path().join(name);
        std::fs::write(
            &path,
            format!("patient(#{{ sex: \"female\", age_years: 60, weight_kg: 60, na: {na}, cause: \"SIADH\" }});\nrun_for(hours(6));\nat(hours(0), infuse(\"saline_3\", ml({ml}), minutes(20)));\n"),
        )
        .unwrap();
        path.to_str().unwrap().to_string()
    };
    let (a, b) = (
        write("plan_a.rhai", 120, 100),
        write("plan_b.rhai", 120, 300),
    );
    let out_dir = root.path().join("cmp");
    let out = tidewater(&["compare", &a, &b, "--out", out_dir.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    for f in [
        "report.html",
        "summary.json",
        "sodium.svg",
        "brain.svg",
        "volumes.svg",
    ] {
        assert!(out_dir.join(f).is_file(), "{f}");
    }
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out_dir.join("summary.json")).unwrap())
            .unwrap();
    // A run states what it gave: 300 mL of 3 % saline, 153.9 mmol of sodium.
    let run = tidewater(&[
        "run",
        &b,
        "--out",
        root.path().join("run_b").to_str().unwrap(),
    ]);
    assert!(
        text(&run.stderr).contains("given: 300 mL of saline_3 (153.9 mmol of sodium)"),
        "{}",
        text(&run.stderr)
    );
    let s = summary["scenarios"].as_array().unwrap();
    assert_eq!(s.len(), 2);
    // 3 % saline carries 513 mmol/L (fluid table): 100 and 300 mL.
    assert!(
        (s[0]["na_given_mmol"].as_f64().unwrap() - 51.3).abs() < 1e-6,
        "{}",
        s[0]
    );
    assert!(
        (s[1]["na_given_mmol"].as_f64().unwrap() - 153.9).abs() < 1e-6,
        "{}",
        s[1]
    );
    // More hypertonic saline raises sodium more.
    assert!(s[1]["na_max_mmol_l"].as_f64() > s[0]["na_max_mmol_l"].as_f64());
    let html = std::fs::read_to_string(out_dir.join("report.html")).unwrap();
    assert!(
        html.contains("not a medical device") && html.contains("plan-a") && html.contains("plan-b")
    );
    // One script is no comparison; a broken one leaves nothing behind.
    let out = tidewater(&["compare", &a]);
    assert_eq!(out.status.code(), Some(2));
    let broken = root.path().join("broken.rhai");
    std::fs::write(&broken, "patient(#{ sex: \"female\" });\n").unwrap();
    let none = root.path().join("none");
    let out = tidewater(&[
        "compare",
        &a,
        broken.to_str().unwrap(),
        "--out",
        none.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("broken.rhai"),
        "{}",
        text(&out.stderr)
    );
    assert!(!none.exists());
}

fn patient_json(args: &[&str]) -> serde_json::Value {
    let mut all = vec!["patient", "--json"];
    all.extend_from_slice(args);
    let out = tidewater(&all);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn patient_volumes_follow_published_rules() {
    // Total body water 0.6 x weight for a young man (common practice).
    let v = patient_json(&["--sex", "male", "--age", "40", "--weight", "70"]);
    let tbw = v["volumes_l"]["total_water"].as_f64().unwrap();
    assert!((tbw - 42.0).abs() < 1e-6, "{tbw}");
    let parts: f64 = [
        "tissue_cells",
        "red_cells",
        "brain_cells",
        "interstitium",
        "plasma",
    ]
    .iter()
    .map(|k| v["volumes_l"][k].as_f64().unwrap())
    .sum();
    assert!((parts - tbw).abs() < 1e-4, "{parts} vs {tbw}");
    // Extracellular water about a third of total body water (common practice).
    let ecf = v["volumes_l"]["interstitium"].as_f64().unwrap()
        + v["volumes_l"]["plasma"].as_f64().unwrap();
    assert!(ecf / tbw > 0.25 && ecf / tbw < 0.42, "{}", ecf / tbw);

    // Watson et al. 1980, men: TBW = 2.447 - 0.09516 age + 0.1074 height + 0.3362 weight.
    let v = patient_json(&[
        "--sex",
        "male",
        "--age",
        "40",
        "--weight",
        "70",
        "--height",
        "175",
        "--water-method",
        "watson",
    ]);
    let expected = 2.447 - 0.09516 * 40.0 + 0.1074 * 175.0 + 0.3362 * 70.0;
    let tbw = v["volumes_l"]["total_water"].as_f64().unwrap();
    assert!((tbw - expected).abs() < 1e-3, "{tbw} vs {expected}");
}

#[test]
fn patient_table_from_yaml_and_bad_yaml() {
    let root = tempfile::tempdir().unwrap();
    let good = root.path().join("p.yaml");
    std::fs::write(
        &good,
        "sex: female\nage_years: 70\nweight_kg: 50\nna: 121\ncause: inappropriate_antidiuresis\n",
    )
    .unwrap();
    let out = tidewater(&["patient", "--file", good.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let table = text(&out.stdout);
    assert!(
        table.contains("Serum sodium") && table.contains("121.0 mmol/L"),
        "{table}"
    );
    // Elderly woman: 0.45 x weight (common practice rule of thumb) = 22.5 L.
    assert!(table.contains("22.5 L"), "{table}");

    let bad = root.path().join("bad.yaml");
    std::fs::write(
        &bad,
        "sex: female\nage_years: 70\nweight_kg: 50\nsodium: 121\n",
    )
    .unwrap();
    let out = tidewater(&["patient", "--file", bad.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(
        err.contains("bad.yaml:4") && err.contains("sodium"),
        "{err}"
    );

    let out = tidewater(&[
        "patient", "--sex", "female", "--age", "70", "--weight", "-5",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("weight_kg"),
        "{}",
        text(&out.stderr)
    );
}

#[test]
fn completions_are_generated() {
    for shell in ["bash", "zsh", "fish"] {
        let out = tidewater(&["completions", shell]);
        assert_eq!(out.status.code(), Some(0));
        let script = text(&out.stdout);
        assert!(
            script.contains("tidewater") && script.contains("render-reports"),
            "{shell}"
        );
    }
}

#[test]
fn strict_turns_a_crossed_limit_into_exit_one() {
    // The built-in case overshoots: its rise in the first 24 h exceeds the
    // 10 mmol/L limit of the European guideline (Spasovski et al. 2014).
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("strict");
    let out = tidewater(&["run", "--demo", "--strict", "--out", dir.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    // The report is still written: the run itself succeeded.
    assert!(dir.join("report.html").is_file());
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let rise = summary["sodium"]["largest_rise_24h"]["mmol_l"]
        .as_f64()
        .unwrap();
    assert!(rise > 10.0, "{rise}");
    assert_eq!(summary["flags"][0]["severity"], "limit");
    assert_eq!(summary["flags"][0]["max_mmol_l"].as_f64(), Some(10.0));
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains("Caution:") && stderr.contains("flag (limit)"),
        "{stderr}"
    );
    // Without --strict the same run exits 0.
    let out = tidewater(&["run", "--demo", "--quiet", "--out", dir.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0));
    assert!(
        out.stderr.is_empty(),
        "--quiet printed: {}",
        text(&out.stderr)
    );
}

/// Write `script_text` to `root/name` and run it into `root/out`: the
/// command's output and the report folder.
fn run_script_text(root: &Path, name: &str, script_text: &str) -> (Output, std::path::PathBuf) {
    let script = root.join(name);
    std::fs::write(&script, script_text).unwrap();
    let dir = root.join("out");
    let out = tidewater(&[
        "run",
        script.to_str().unwrap(),
        "--out",
        dir.to_str().unwrap(),
    ]);
    (out, dir)
}

#[test]
fn control_bytes_from_a_script_are_escaped_on_the_terminal() {
    // A fluid id holding an escape sequence (ESC [31m) and a title with a
    // bell: echoed as visible escapes, never as raw control bytes.
    let root = tempfile::tempdir().unwrap();
    let script = root.path().join("esc.rhai");
    std::fs::write(
        &script,
        "patient(#{ sex: \"female\", age_years: 58, weight_kg: 66, na: 140 });\nrun_for(hours(1));\nat(hours(0), infuse(\"sal\\x1b[31mine\", ml(100), minutes(20)));\n",
    )
    .unwrap();
    let out = tidewater(&["run", script.to_str().unwrap(), "--quiet"]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(err.contains("unknown fluid \"sal\\u{1b}[31mine\""), "{err}");
    assert!(!err.contains('\u{1b}'), "{err}");

    let (out, _) = run_script_text(
        root.path(),
        "ring.rhai",
        "title(\"ring\\x07\");\npatient(#{ sex: \"female\", age_years: 58, weight_kg: 66, na: 140 });\nrun_for(hours(1));\n",
    );
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let err = text(&out.stderr);
    assert!(
        err.contains("ring\\u{7}") && !err.contains('\u{7}'),
        "{err}"
    );
}

#[test]
fn leaving_the_models_range_is_warned_with_its_time() {
    // 20 L of 5 % saline in 1 h drives serum sodium far above anything the
    // model was built for (95-190 mmol/L): the run ends, with a warning.
    let root = tempfile::tempdir().unwrap();
    let (out, dir) = run_script_text(
        root.path(),
        "salt.rhai",
        "patient(#{ sex: \"female\", age_years: 58, weight_kg: 66, na: 140 });\nrun_for(hours(3));\nat(hours(0), infuse(\"saline_5\", litres(20), hours(1)));\n",
    );
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let err = text(&out.stderr);
    assert!(
        err.contains(
            "warning: serum sodium left the range the model was built for (95-190 mmol/L) at "
        ),
        "{err}"
    );
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    let w = &summary["outside_model_range"];
    assert!(w["first_mmol_l"].as_f64().unwrap() > 190.0, "{w}");
    assert!(w["first_time_h"].as_f64().unwrap() < 1.0, "{w}");
    let html = std::fs::read_to_string(dir.join("report.html")).unwrap();
    assert!(html.contains("what follows is extrapolation"));
    // An ordinary run carries no such warning.
    let demo = root.path().join("demo");
    assert!(!text(&run_demo(&demo).stderr).contains("range the model was built for"));
}

#[test]
fn no_color_keeps_escapes_out() {
    let out = tidewater(&["fluids", "--file", "/no/such/file.yaml"]);
    assert_eq!(out.status.code(), Some(2));
    let err = text(&out.stderr);
    assert!(
        err.contains("/no/such/file.yaml") && !err.contains('\u{1b}'),
        "{err}"
    );
}

#[test]
#[cfg(unix)]
fn output_piped_into_a_reader_that_stops_early_ends_quietly() {
    // `tidewater params | head -1`: the reader goes away after one line.
    use std::io::{BufRead, BufReader};
    use std::process::Stdio;
    let mut child = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .arg("params")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = String::new();
    BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut first)
        .unwrap();
    assert!(first.starts_with("name"), "{first}");
    // The pipe is closed here, with most of the table unread.
    let out = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert_ne!(out.status.code(), Some(101), "no panic exit");
}
