//! Reading the dossier: `checks.yaml` checked field by field, with the
//! line of every problem, and the scenarios it names.

use super::*;

/// Line (1-based) of every `- id: X` in the text, by id.
fn id_lines(text: &str) -> BTreeMap<String, usize> {
    let mut out = BTreeMap::new();
    for (i, line) in text.lines().enumerate() {
        let t = line.trim_start();
        if let Some(rest) = t.strip_prefix("- id:") {
            let id = rest
                .trim()
                .trim_matches(|c| c == '"' || c == '\'')
                .to_string();
            out.entry(id).or_insert(i + 1);
        }
    }
    out
}

/// Line of `key:` inside the block of the check starting at `from` (up to
/// the next check), or the check's own line.
fn field_line(text: &str, from: usize, key: &str) -> usize {
    let needle = format!("{key}:");
    for (i, line) in text.lines().enumerate().skip(from) {
        let t = line.trim_start();
        if t.starts_with("- id:") {
            break;
        }
        let t = t.trim_start_matches("- ").trim_start_matches('{');
        if t.starts_with(&needle)
            || line.contains(&format!(" {needle}"))
            || line.contains(&format!("{{{needle}"))
        {
            return i + 1;
        }
    }
    from
}

impl Dossier {
    /// Read and check `dir/checks.yaml`.
    pub fn load(dir: &Path) -> Result<Dossier, ValidationError> {
        let path = dir.join(CHECKS_FILE);
        let file = path.display().to_string();
        let text = crate::textfile::read_text(&path).map_err(|e| ValidationError::Read {
            file: file.clone(),
            message: e.to_string(),
        })?;
        Dossier::from_text(dir, &file, &text)
    }

    /// Check the text of a checks file; scenarios are looked up in
    /// `dir/scenarios/`.
    pub fn from_text(dir: &Path, file: &str, text: &str) -> Result<Dossier, ValidationError> {
        let raw: RawDossier = crate::yaml::from_str(text).map_err(|e| ValidationError::Parse {
            file: file.to_string(),
            location: e.location,
            message: e.message,
        })?;
        let lines = id_lines(text);
        let mut seen = BTreeSet::new();
        let mut citations: BTreeMap<String, (String, String)> = BTreeMap::new();
        let mut checks = Vec::with_capacity(raw.checks.len());
        for rc in raw.checks {
            let line = lines.get(&rc.id).copied().unwrap_or(0);
            let bad = |field: &str, message: String| ValidationError::Field {
                file: file.to_string(),
                line: if line == 0 {
                    0
                } else {
                    field_line(text, line, field.rsplit('.').next().unwrap_or(field))
                },
                check: rc.id.clone(),
                field: field.to_string(),
                message,
            };
            if rc.id.trim().is_empty() || rc.id.contains(char::is_whitespace) {
                return Err(bad("id", "an id must be one word".into()));
            }
            if !seen.insert(rc.id.clone()) {
                return Err(bad("id", "this id is used by an earlier check".into()));
            }
            for (field, value) in [
                ("topic", &rc.topic),
                ("source_key", &rc.source_key),
                ("source", &rc.source),
                ("published.text", &rc.published.text),
                ("published.unit", &rc.published.unit),
                ("range_basis", &rc.range_basis),
            ] {
                if value.trim().is_empty() {
                    return Err(bad(field, "must not be empty".into()));
                }
            }
            if rc.source_key != COMMON_PRACTICE {
                match citations.get(&rc.source_key) {
                    Some((other, first)) if *first != rc.source => {
                        return Err(bad(
                            "source",
                            format!(
                                "source_key {} is cited differently by check {other}",
                                rc.source_key
                            ),
                        ))
                    }
                    Some(_) => {}
                    None => {
                        citations.insert(rc.source_key.clone(), (rc.id.clone(), rc.source.clone()));
                    }
                }
            }
            let [lo, hi] = rc.range;
            if !(lo.is_finite() && hi.is_finite() && lo < hi) {
                return Err(bad(
                    "range",
                    format!("[{lo}, {hi}] must be two finite numbers, low before high"),
                ));
            }
            if !rc.published.value.is_finite() {
                return Err(bad("published.value", "must be a finite number".into()));
            }
            if let Some([a, b]) = rc.published.bar {
                if !(a.is_finite() && b.is_finite() && a <= b) {
                    return Err(bad(
                        "published.bar",
                        format!("[{a}, {b}] must be finite, low before high"),
                    ));
                }
                if rc
                    .published
                    .bar_kind
                    .as_deref()
                    .map(str::trim)
                    .unwrap_or("")
                    .is_empty()
                {
                    return Err(bad(
                        "published.bar_kind",
                        "a bar needs to say what it is (± 1 SD, range, ...)".into(),
                    ));
                }
            }
            if rc.scenario.contains('/')
                || rc.scenario.contains('\\')
                || !rc.scenario.ends_with(".rhai")
            {
                return Err(bad(
                    "scenario",
                    format!(
                        "\"{}\" must be a .rhai file name inside {SCENARIOS_DIR}/",
                        rc.scenario
                    ),
                ));
            }
            if !dir.join(SCENARIOS_DIR).join(&rc.scenario).is_file() {
                return Err(bad(
                    "scenario",
                    format!(
                        "{} does not exist",
                        dir.join(SCENARIOS_DIR).join(&rc.scenario).display()
                    ),
                ));
            }
            let kind = MetricKind::from_name(&rc.metric).ok_or_else(|| {
                let names: Vec<&str> = metrics::METRICS.iter().map(|(_, i)| i.name).collect();
                let hint = crate::suggest::closest(&rc.metric, names.iter().copied())
                    .map(|s| format!(" (did you mean \"{s}\"?)"))
                    .unwrap_or_default();
                bad("metric", format!("unknown metric \"{}\"{hint}; see tests/validation/README.md for the vocabulary", rc.metric))
            })?;
            let info = kind.info();
            for a in info.args {
                match rc.args.get(*a) {
                    None => {
                        return Err(bad(
                            "args",
                            format!(
                                "{} needs {a} (its arguments: {})",
                                info.name,
                                info.args.join(", ")
                            ),
                        ))
                    }
                    Some(v) if !v.is_finite() || *v < 0.0 => {
                        return Err(bad(
                            &format!("args.{a}"),
                            format!("{v} must be a finite number, not negative"),
                        ))
                    }
                    Some(_) => {}
                }
            }
            if let Some(extra) = rc.args.keys().find(|k| !info.args.contains(&k.as_str())) {
                return Err(bad(
                    &format!("args.{extra}"),
                    format!(
                        "{} takes no argument {extra} (its arguments: {})",
                        info.name,
                        info.args.join(", ")
                    ),
                ));
            }
            for a in ["load_ml", "load_mmol"] {
                if rc.args.get(a).is_some_and(|v| *v <= 0.0) {
                    return Err(bad(&format!("args.{a}"), "a load must be positive".into()));
                }
            }
            if let (Some(f), Some(t)) = (rc.args.get("from_h"), rc.args.get("to_h")) {
                if f >= t {
                    return Err(bad("args.to_h", format!("the window {f}..{t} h is empty")));
                }
            }
            for a in ["within_h", "over_h"] {
                if rc.args.get(a).is_some_and(|v| *v <= 0.0) {
                    return Err(bad(
                        &format!("args.{a}"),
                        "the window must be longer than 0 h".into(),
                    ));
                }
            }
            let time_course = match rc.time_course {
                None => None,
                Some(tc) => {
                    let series = Series::from_name(&tc.series).ok_or_else(|| {
                        let names: Vec<&str> = metrics::SERIES.iter().map(|(_, n, _)| *n).collect();
                        bad(
                            "time_course.series",
                            format!(
                                "unknown series \"{}\" (known: {})",
                                tc.series,
                                names.join(", ")
                            ),
                        )
                    })?;
                    if tc.points.is_empty() {
                        return Err(bad(
                            "time_course.points",
                            "a time course needs at least one point".into(),
                        ));
                    }
                    let mut last = f64::NEG_INFINITY;
                    for p in &tc.points {
                        let ok = p.t_h.is_finite()
                            && p.t_h >= 0.0
                            && p.value.is_finite()
                            && !matches!(p.low, Some(l) if !(l.is_finite() && l <= p.value))
                            && !matches!(p.high, Some(h) if !(h.is_finite() && h >= p.value));
                        if !ok || p.t_h < last {
                            return Err(bad("time_course.points", format!("the point at {} h must have t_h >= 0 in time order and low <= value <= high", p.t_h)));
                        }
                        last = p.t_h;
                    }
                    Some(TimeCourse {
                        series,
                        spread: tc.spread,
                        points: tc.points,
                    })
                }
            };
            if let Some(r) = &rc.expected_failure {
                if r.trim().len() < 10 {
                    return Err(bad(
                        "expected_failure",
                        "give the physiological reason (what mechanism is missing or off)".into(),
                    ));
                }
            }
            checks.push(Check {
                id: rc.id,
                topic: rc.topic,
                source_key: rc.source_key,
                source: rc.source,
                published: rc.published,
                range: rc.range,
                range_basis: rc.range_basis,
                scenario: rc.scenario,
                metric: Metric {
                    kind,
                    args: rc.args,
                },
                time_course,
                expected_failure: rc.expected_failure,
                line,
            });
        }
        if checks.is_empty() {
            return Err(ValidationError::Parse {
                file: file.to_string(),
                location: None,
                message: "the dossier has no checks".into(),
            });
        }
        Ok(Dossier {
            dir: dir.to_path_buf(),
            checks,
        })
    }

    /// The checks file, for messages.
    pub fn file(&self) -> String {
        self.dir.join(CHECKS_FILE).display().to_string()
    }

    /// Distinct published sources (common practice not counted).
    pub fn distinct_sources(&self) -> usize {
        self.checks
            .iter()
            .map(|c| c.source_key.as_str())
            .filter(|k| *k != COMMON_PRACTICE)
            .collect::<BTreeSet<_>>()
            .len()
    }

    /// The scenarios the checks name, each once, in first-use order.
    pub fn scenarios(&self) -> Vec<&str> {
        let mut seen = BTreeSet::new();
        self.checks
            .iter()
            .map(|c| c.scenario.as_str())
            .filter(|s| seen.insert(*s))
            .collect()
    }

    /// Run every scenario once (on up to `threads` threads) and read every
    /// check. A scenario that fails to load or run makes its checks
    /// [`Status::Error`] with the scenario's message.
    pub fn run(&self, threads: usize) -> Outcome {
        let names = self.scenarios();
        let runs = run_scenarios(&self.dir.join(SCENARIOS_DIR), &names, threads.max(1));
        let by_name: BTreeMap<&str, &RunResult> = names.iter().copied().zip(runs.iter()).collect();
        let results = self
            .checks
            .iter()
            .map(|c| evaluate(c, by_name[c.scenario.as_str()]))
            .collect();
        Outcome { results }
    }
}
