//! Fuzzing the loaders of user input through the public API: the scenario
//! script loader (and a short run of each loaded script), the fluids and
//! patient YAML loaders, the guideline choice, the observed-labs CSV loader
//! and the sweep spec.
//!
//! Inputs are mutations of the bundled files under `scenarios/` (lines
//! deleted, duplicated or swapped; numbers replaced by extreme values;
//! string literals replaced; random tokens inserted) and, for the YAML
//! loaders, random YAML from a small grammar. The property for every case:
//! the loader returns `Ok` or an error value whose message is not empty and
//! names the file, it does not panic, and it finishes within a bound (a
//! hang is a failure too).
//!
//! `cargo test` runs a small number of cases per target. The longer run is
//! the `#[ignore]`d `fuzz_long_all_targets`, timed by `TIDEWATER_FUZZ_SECS`
//! (see DEVELOPERS.md, "Fuzzing"). The tolerance files of `tidewater
//! check` are read by the command-line crate, not here; the guideline
//! limits are bundled data, so only the choice among them is user input.

use proptest::prelude::*;
use proptest::sample::Index;
use proptest::strategy::ValueTree;
use proptest::test_runner::{Config, TestRunner};
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::{Duration, Instant};
use tidewater::observations::Observations;
use tidewater::patient_from_yaml;
use tidewater::scenario::Scenario;
use tidewater::sweep::SweepSpec;
use tidewater::{FluidLibrary, Params};

// ---------------------------------------------------------------- corpus

fn scenarios_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios")
}

/// The texts of the files in `dir` whose names end with `ext`, sorted.
fn texts(dir: &Path, ext: &str) -> Vec<String> {
    let mut paths: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .map(|e| e.expect("directory entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == ext))
        .collect();
    paths.sort();
    assert!(!paths.is_empty(), "no .{ext} files in {}", dir.display());
    paths
        .iter()
        .map(|p| std::fs::read_to_string(p).unwrap_or_else(|e| panic!("{}: {e}", p.display())))
        .collect()
}

fn scripts() -> Vec<String> {
    texts(&scenarios_dir(), "rhai")
}

fn fluid_files() -> Vec<String> {
    texts(&scenarios_dir(), "yaml")
}

fn sweep_files() -> Vec<String> {
    let mut v = texts(&scenarios_dir().join("sweeps"), "yaml");
    v.extend(texts(&scenarios_dir(), "yaml"));
    v
}

fn observation_files() -> Vec<String> {
    texts(&scenarios_dir().join("observations"), "csv")
}

/// Patient files are not bundled; these seeds are invented patients in the
/// file's shape (the fields of `tidewater::Patient`).
fn patient_files() -> Vec<String> {
    vec![
        "sex: female\nage_years: 58\nweight_kg: 66\nheight_cm: 164\nna: 122\n\
         onset: chronic\ncause: inappropriate_antidiuresis\n"
            .to_string(),
        "sex: male\nage_years: 81\nweight_kg: 54\nna: 158\nk: 3.9\nglucose_mmol_l: 6.1\n\
         urea_mmol_l: 14\nalbumin_g_l: 31\nhematocrit: 0.44\nonset: acute\nsymptoms: moderate\n"
            .to_string(),
        "sex: female\nage_years: 30\nweight_kg: 70\nwater_fraction: 0.5\nna: 128\n\
         glucose_mg_dl: 540\nbun_mg_dl: 20\nsymptoms: severe\n"
            .to_string(),
    ]
}

// ------------------------------------------------------------- mutations

/// Extreme values put in place of a number in a script.
const SCRIPT_NUMBERS: &[&str] = &[
    "0",
    "-1",
    "1e300",
    "-1e300",
    "1e-300",
    "(0.0/0.0)",
    "(1.0/0.0)",
    "4294967296",
    "9223372036854775807",
    "99999999999999999999999",
    "0.0",
    "-0.0",
];

/// Extreme values put in place of a number in a YAML or CSV file.
const DATA_NUMBERS: &[&str] = &[
    "0",
    "-1",
    "1e300",
    "-1e300",
    "1e-300",
    ".inf",
    "-.inf",
    ".nan",
    "NaN",
    "inf",
    "4294967296",
    "18446744073709551616",
    "99999999999999999999999",
    "~",
    "[]",
    "{}",
    "0x10",
    "",
];

const STRINGS: &[&str] = &[
    "",
    " ",
    "saline_3",
    "no_such_thing",
    "\\u0000",
    "\\x1b[31m",
    "ÿ",
    "../../../etc/passwd",
    "/dev/null",
    "female",
    "chronic",
    "latin_hypercube",
    "patient.na",
    "patient.water_fracction",
];

const SCRIPT_TOKENS: &[&str] = &[
    "(",
    ")",
    "{",
    "}",
    "[",
    "]",
    ";",
    ",",
    "\"",
    "//",
    "/*",
    "#{",
    "fn f() { f() }",
    "f();",
    "loop {}",
    "while true { }",
    "let x = ",
    "x",
    "at(hours(1), ",
    "every(hours(0), |s| print(\"x\"));",
    "print(\"\\x1b[2J\");",
    "run_for(hours(1));",
    "patient(#{});",
    "infuse(\"saline_3\", ml(1e300), minutes(0));",
    "bolus(\"saline_3\", ml(-1));",
    "fluids_file(\"/dev/null\");",
    "fluids_file(\"fluids.yaml\");",
    "limits(\"europe-2014\", true);",
    "throw \"x\";",
    "0.0/0.0",
    "\n",
];

const DATA_TOKENS: &[&str] = &[
    ":",
    "- ",
    "[",
    "]",
    "{",
    "}",
    ",",
    "\"",
    "'",
    "#",
    "&a",
    "*a",
    "!!str",
    "<<: *a",
    "---",
    "...",
    "\t",
    "  ",
    "? ",
    "|",
    ">",
    "%YAML 1.2",
    "\n",
    "key: value",
];

/// One change to a text.
#[derive(Clone, Debug)]
enum Mutation {
    DeleteLine(Index),
    DuplicateLine(Index),
    SwapLines(Index, Index),
    ReplaceNumber(Index, Index, Index),
    ReplaceString(Index, Index, Index),
    InsertToken(Index, Index, Index),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    let i = any::<Index>;
    prop_oneof![
        i().prop_map(Mutation::DeleteLine),
        i().prop_map(Mutation::DuplicateLine),
        (i(), i()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        (i(), i(), i()).prop_map(|(a, b, c)| Mutation::ReplaceNumber(a, b, c)),
        (i(), i(), i()).prop_map(|(a, b, c)| Mutation::ReplaceString(a, b, c)),
        (i(), i(), i()).prop_map(|(a, b, c)| Mutation::InsertToken(a, b, c)),
    ]
}

/// Byte ranges of the numbers in a line (a digit run with `.`, `e`, `_`,
/// not inside a word).
fn numbers(line: &str) -> Vec<(usize, usize)> {
    let b = line.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let starts = b[i].is_ascii_digit()
            && (i == 0 || !(b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_'));
        if starts {
            let s = i;
            while i < b.len() && (b[i].is_ascii_digit() || matches!(b[i], b'.' | b'e' | b'_')) {
                i += 1;
            }
            out.push((s, i));
        } else {
            i += 1;
        }
    }
    out
}

/// Byte ranges of the insides of double-quoted strings in a line.
fn strings(line: &str) -> Vec<(usize, usize)> {
    let quotes: Vec<usize> = line.match_indices('"').map(|(i, _)| i).collect();
    quotes
        .chunks(2)
        .filter(|c| c.len() == 2)
        .map(|c| (c[0] + 1, c[1]))
        .collect()
}

/// Every line whose place was picked, with the ranges of kind `find`;
/// falls back to any line that has one.
fn pick_range(
    lines: &[String],
    line: Index,
    which: Index,
    find: fn(&str) -> Vec<(usize, usize)>,
) -> Option<(usize, (usize, usize))> {
    let n = lines.len();
    let first = line.index(n);
    (0..n).map(|k| (first + k) % n).find_map(|l| {
        let r = find(&lines[l]);
        (!r.is_empty()).then(|| (l, r[which.index(r.len())]))
    })
}

/// Apply mutations to a text; `numbers_pool` and `tokens` are the values
/// and tokens put in.
fn mutate(text: &str, muts: &[Mutation], numbers_pool: &[&str], tokens: &[&str]) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    for m in muts {
        if lines.is_empty() {
            lines.push(String::new());
        }
        let n = lines.len();
        match m {
            Mutation::DeleteLine(i) => {
                lines.remove(i.index(n));
            }
            Mutation::DuplicateLine(i) => {
                let l = lines[i.index(n)].clone();
                lines.insert(i.index(n), l);
            }
            Mutation::SwapLines(a, b) => lines.swap(a.index(n), b.index(n)),
            Mutation::ReplaceNumber(l, w, v) => {
                if let Some((l, (s, e))) = pick_range(&lines, *l, *w, numbers) {
                    lines[l].replace_range(s..e, v.get::<&str>(numbers_pool));
                }
            }
            Mutation::ReplaceString(l, w, v) => {
                if let Some((l, (s, e))) = pick_range(&lines, *l, *w, strings) {
                    lines[l].replace_range(s..e, v.get::<&str>(STRINGS));
                }
            }
            Mutation::InsertToken(l, at, t) => {
                let line = &mut lines[l.index(n)];
                let mut pos = at.index(line.len() + 1);
                while !line.is_char_boundary(pos) {
                    pos -= 1;
                }
                line.insert_str(pos, t.get::<&str>(tokens));
            }
        }
    }
    lines.join("\n")
}

/// The length of a script's run capped to a few hours, so that a case is
/// a short run: every `run_for` line becomes `run_for(hours(h));`.
fn cap_run_for(script: &str, hours: u8) -> String {
    script
        .lines()
        .map(|l| {
            if l.contains("run_for(") {
                format!("run_for(hours({hours}));")
            } else {
                l.to_string()
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
}

fn mutated(
    corpus: Vec<String>,
    numbers_pool: &'static [&'static str],
    tokens: &'static [&'static str],
) -> impl Strategy<Value = String> {
    (any::<Index>(), proptest::collection::vec(mutation(), 1..6))
        .prop_map(move |(f, muts)| mutate(f.get::<String>(&corpus), &muts, numbers_pool, tokens))
}

fn script_case() -> impl Strategy<Value = String> {
    (mutated(scripts(), SCRIPT_NUMBERS, SCRIPT_TOKENS), 0u8..6)
        .prop_map(|(s, h)| cap_run_for(&s, h))
}

// ------------------------------------------------------ random YAML

fn yaml_scalar() -> impl Strategy<Value = String> {
    prop_oneof![
        proptest::sample::select(DATA_NUMBERS).prop_map(str::to_string),
        proptest::sample::select(STRINGS).prop_map(|s| format!("\"{s}\"")),
        any::<f64>().prop_map(|x| format!("{x:e}")),
        any::<i64>().prop_map(|x| x.to_string()),
        "[a-z_.]{0,12}",
        Just("true".to_string()),
    ]
}

/// Keys: the loaders' own field names (so that some cases get past the
/// first unknown key) and random words.
const KEYS: &[&str] = &[
    "fluids",
    "id",
    "name",
    "na_mmol_l",
    "k_mmol_l",
    "glucose_mmol_l",
    "urea_mmol_l",
    "scenario",
    "design",
    "members",
    "seed",
    "parameters",
    "distribution",
    "kind",
    "mean",
    "sd",
    "min",
    "max",
    "range",
    "values",
    "outputs",
    "na_at_h",
    "band_every_h",
    "rtol",
    "check_balance_share",
    "sex",
    "age_years",
    "weight_kg",
    "height_cm",
    "na",
    "onset",
    "patient.na",
    "script.x",
];

/// A YAML value in flow style from a small grammar: scalars, lists, maps,
/// nested up to a few levels.
fn yaml_value() -> impl Strategy<Value = String> {
    yaml_scalar().prop_recursive(6, 48, 6, |inner| {
        prop_oneof![
            proptest::collection::vec(inner.clone(), 0..6)
                .prop_map(|v| format!("[{}]", v.join(", "))),
            proptest::collection::vec(
                (
                    prop_oneof![
                        proptest::sample::select(KEYS).prop_map(str::to_string),
                        "[a-z]{1,6}"
                    ],
                    inner
                ),
                0..6
            )
            .prop_map(|v| {
                let items: Vec<String> = v.into_iter().map(|(k, x)| format!("{k}: {x}")).collect();
                format!("{{{}}}", items.join(", "))
            }),
        ]
    })
}

/// A YAML document: a block map of grammar values, or a deep nest.
fn yaml_document() -> impl Strategy<Value = String> {
    prop_oneof![
        4 => proptest::collection::vec((proptest::sample::select(KEYS), yaml_value()), 0..10)
            .prop_map(|v| v.into_iter().map(|(k, x)| format!("{k}: {x}\n")).collect::<String>()),
        1 => (1usize..3000, any::<bool>()).prop_map(|(d, list)| if list {
            format!("{}{}", "[".repeat(d), "]".repeat(d))
        } else {
            format!("{}0{}", "{a: ".repeat(d), "}".repeat(d))
        }),
    ]
}

fn data_case(corpus: Vec<String>) -> impl Strategy<Value = String> {
    prop_oneof![
        3 => mutated(corpus, DATA_NUMBERS, DATA_TOKENS),
        1 => yaml_document(),
    ]
}

fn csv_case() -> impl Strategy<Value = String> {
    mutated(
        observation_files(),
        DATA_NUMBERS,
        &[",", ",,", "\"", "\n", "time_h", "#", "\u{feff}", "\r"],
    )
}

fn guideline_case() -> impl Strategy<Value = (String, bool)> {
    (
        prop_oneof![
            Just("europe-2014".to_string()),
            proptest::sample::select(STRINGS).prop_map(str::to_string),
            ".{0,20}",
        ],
        any::<bool>(),
    )
}

// --------------------------------------------------------- the property

/// Longest a case may take before it counts as a hang: 20 s in release;
/// an unoptimised build is several times slower, so 60 s there.
fn bound() -> Duration {
    Duration::from_secs(if cfg!(debug_assertions) { 60 } else { 20 })
}

/// How a case ended when it broke the property.
#[derive(Debug)]
enum Broken {
    Panic(String),
    Hang,
    BadError(String),
}

/// Run one case on its own thread within [`bound`]. The case returns
/// `Ok(())` or the message of the error value it got, with the file name
/// the message must hold. A thread that hangs is left behind (it cannot be
/// stopped); the hang is reported.
fn run_case<F>(case: F) -> Result<bool, Broken>
where
    F: FnOnce() -> Result<(), (String, String)> + Send + 'static,
{
    let (tx, rx) = mpsc::channel();
    let handle = std::thread::Builder::new()
        .stack_size(64 << 20)
        .spawn(move || {
            let _ = tx.send(case());
        })
        .expect("spawn a fuzz case thread");
    match rx.recv_timeout(bound()) {
        Ok(Ok(())) => Ok(true),
        Ok(Err((message, file))) => {
            if message.trim().is_empty() {
                Err(Broken::BadError("an empty error message".into()))
            } else if !message.contains(&file) {
                Err(Broken::BadError(format!(
                    "the message does not name {file}: {message}"
                )))
            } else {
                Ok(false)
            }
        }
        Err(mpsc::RecvTimeoutError::Disconnected) => {
            let why = match handle.join() {
                Err(p) => p
                    .downcast_ref::<String>()
                    .cloned()
                    .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
                    .unwrap_or_else(|| "a panic".into()),
                Ok(()) => "the case ended without an answer".into(),
            };
            Err(Broken::Panic(why))
        }
        Err(mpsc::RecvTimeoutError::Timeout) => Err(Broken::Hang),
    }
}

fn err<E: std::fmt::Display>(file: &str) -> impl Fn(E) -> (String, String) + '_ {
    move |e| (e.to_string(), file.to_string())
}

/// Load a script from text and, when it loads, run it.
fn script_target(source: String) -> Result<bool, Broken> {
    run_case(move || {
        let file = "fuzz_case.rhai";
        let s = Scenario::from_source(file, &source, &scenarios_dir()).map_err(err(file))?;
        s.run().map(|_| ()).map_err(err(file))
    })
}

fn fluids_target(text: String) -> Result<bool, Broken> {
    run_case(move || {
        let file = "fuzz_fluids.yaml";
        FluidLibrary::from_yaml(&text, file)
            .map(|_| ())
            .map_err(err(file))
    })
}

/// Parse a patient and, when it parses, resolve it (the checks of its
/// values live there).
fn patient_target(text: String) -> Result<bool, Broken> {
    run_case(move || {
        let file = "fuzz_patient.yaml";
        let p = patient_from_yaml(&text, file).map_err(err(file))?;
        // Resolving names fields, not the file, which it never sees.
        p.resolve(&Params::default())
            .map(|_| ())
            .map_err(|e| (e.to_string(), String::new()))
    })
}

fn sweep_target(text: String) -> Result<bool, Broken> {
    run_case(move || {
        let file = "fuzz_sweep.yaml";
        SweepSpec::from_yaml(&text, file)
            .map(|_| ())
            .map_err(err(file))
    })
}

fn observations_target(text: String) -> Result<bool, Broken> {
    run_case(move || {
        let file = "fuzz_labs.csv";
        Observations::from_csv(&text, file)
            .map(|_| ())
            .map_err(err(file))
    })
}

/// The guideline choice names the id, not a file.
fn guideline_target((id, high_risk): (String, bool)) -> Result<bool, Broken> {
    run_case(move || {
        tidewater::limits::choose(&id, high_risk)
            .map(|_| ())
            .map_err(|e| (e.to_string(), String::new()))
    })
}

// ------------------------------------------------------ short budget

/// Cases per target in `cargo test`: small, so that the whole file stays
/// well under 30 s in a debug build.
fn short() -> ProptestConfig {
    ProptestConfig {
        cases: 32,
        failure_persistence: None,
        ..ProptestConfig::default()
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 12, ..short() })]
    #[test]
    fn fuzz_script_loader_and_short_run(source in script_case()) {
        let r = script_target(source.clone());
        prop_assert!(r.is_ok(), "{r:?} for the script:\n{source}");
    }
}

proptest! {
    #![proptest_config(short())]
    #[test]
    fn fuzz_fluids_yaml(text in data_case(fluid_files())) {
        let r = fluids_target(text.clone());
        prop_assert!(r.is_ok(), "{r:?} for:\n{text}");
    }

    #[test]
    fn fuzz_patient_yaml(text in data_case(patient_files())) {
        let r = patient_target(text.clone());
        prop_assert!(r.is_ok(), "{r:?} for:\n{text}");
    }

    #[test]
    fn fuzz_sweep_spec(text in data_case(sweep_files())) {
        let r = sweep_target(text.clone());
        prop_assert!(r.is_ok(), "{r:?} for:\n{text}");
    }

    #[test]
    fn fuzz_observations_csv(text in csv_case()) {
        let r = observations_target(text.clone());
        prop_assert!(r.is_ok(), "{r:?} for:\n{text}");
    }

    #[test]
    fn fuzz_guideline_choice(case in guideline_case()) {
        let r = guideline_target(case.clone());
        prop_assert!(r.is_ok(), "{r:?} for {case:?}");
    }
}

// -------------------------------------------------------- long run

/// A target of the long run: its name, a strategy as a boxed generator and
/// the check.
struct Target {
    name: &'static str,
    generate: Box<dyn Fn(&mut TestRunner) -> String>,
    check: Box<dyn Fn(String) -> Result<bool, Broken>>,
    loaded: u64,
    tried: u64,
    panics: u64,
    hangs: u64,
    bad_errors: u64,
}

fn target<S: Strategy<Value = String> + 'static>(
    name: &'static str,
    strategy: S,
    check: fn(String) -> Result<bool, Broken>,
) -> Target {
    Target {
        name,
        generate: Box::new(move |r| strategy.new_tree(r).expect("generate a case").current()),
        check: Box::new(check),
        loaded: 0,
        tried: 0,
        panics: 0,
        hangs: 0,
        bad_errors: 0,
    }
}

/// The process's peak resident memory (VmHWM) in kB, on Linux.
fn peak_memory_kb() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// The longer run: loops over the targets generating cases until
/// `TIDEWATER_FUZZ_SECS` (default 60) are up, then prints inputs tried per
/// target, panics, hangs and the peak memory, and fails if any case broke
/// the property (each broken input is printed as it is found).
#[test]
#[ignore = "long fuzz run: TIDEWATER_FUZZ_SECS=600 cargo test --release -p tidewater-engine --test fuzz -- --ignored fuzz_long --nocapture"]
fn fuzz_long_all_targets() {
    let secs: u64 = std::env::var("TIDEWATER_FUZZ_SECS")
        .ok()
        .map(|s| {
            s.parse()
                .expect("TIDEWATER_FUZZ_SECS is a whole number of seconds")
        })
        .unwrap_or(60);
    let mut targets = vec![
        target("script", script_case(), script_target),
        target("fluids_yaml", data_case(fluid_files()), fluids_target),
        target("patient_yaml", data_case(patient_files()), patient_target),
        target("sweep_spec", data_case(sweep_files()), sweep_target),
        target("observations_csv", csv_case(), observations_target),
        target(
            "guideline_choice",
            guideline_case().prop_map(|(id, h)| format!("{h}\n{id}")),
            |s| {
                let (h, id) = s.split_once('\n').expect("two parts");
                guideline_target((id.to_string(), h == "true"))
            },
        ),
    ];
    let mut runner = TestRunner::new(Config::default());
    let start = Instant::now();
    let end = start + Duration::from_secs(secs);
    while Instant::now() < end {
        for t in targets.iter_mut() {
            let input = (t.generate)(&mut runner);
            t.tried += 1;
            match (t.check)(input.clone()) {
                Ok(loaded) => t.loaded += u64::from(loaded),
                Err(b) => {
                    let what = match b {
                        Broken::Panic(why) => {
                            t.panics += 1;
                            format!("panic: {why}")
                        }
                        Broken::Hang => {
                            t.hangs += 1;
                            format!("no answer within {} s", bound().as_secs())
                        }
                        Broken::BadError(why) => {
                            t.bad_errors += 1;
                            why
                        }
                    };
                    eprintln!("FUZZ {}: {what}; input:\n----\n{input}\n----", t.name);
                }
            }
        }
    }
    let elapsed = start.elapsed().as_secs_f64();
    println!("fuzz_long: {elapsed:.0} s");
    println!(
        "{:<18} {:>9} {:>9} {:>7} {:>6} {:>10}",
        "target", "inputs", "loaded", "panics", "hangs", "bad errors"
    );
    for t in &targets {
        println!(
            "{:<18} {:>9} {:>9} {:>7} {:>6} {:>10}",
            t.name, t.tried, t.loaded, t.panics, t.hangs, t.bad_errors
        );
    }
    let total = |f: fn(&Target) -> u64| targets.iter().map(f).sum::<u64>();
    println!(
        "total              {:>9} {:>9} {:>7} {:>6} {:>10}",
        total(|t| t.tried),
        total(|t| t.loaded),
        total(|t| t.panics),
        total(|t| t.hangs),
        total(|t| t.bad_errors)
    );
    match peak_memory_kb() {
        Some(kb) => println!(
            "peak memory (VmHWM, the whole test process): {:.1} MB",
            kb as f64 / 1024.0
        ),
        None => println!("peak memory: /proc/self/status not readable"),
    }
    let broken = total(|t| t.panics + t.hangs + t.bad_errors);
    assert_eq!(
        broken, 0,
        "{broken} inputs broke the property (printed above)"
    );
}
