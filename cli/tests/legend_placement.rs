//! No legend box of a run's charts sits on a data line: every bundled
//! scenario is rendered and each SVG read back; a legend is the white
//! box (opacity 0.9) the chart library draws, a data line a polyline of
//! more than two points (axes, ticks, grid lines and legend keys have two).

use std::path::{Path, PathBuf};
use std::process::Command;

/// The value of attribute `name` in an SVG element's text.
fn attr<'a>(element: &'a str, name: &str) -> Option<&'a str> {
    let key = format!(" {name}=\"");
    let start = element.find(&key)? + key.len();
    let end = start + element[start..].find('"')?;
    Some(&element[start..end])
}

/// A box: x0, y0, x1, y1 (px).
type LegendBox = (f64, f64, f64, f64);
/// A line: its points (px).
type Polyline = Vec<(f64, f64)>;

/// Legend boxes and data lines of an SVG.
fn geometry(svg: &str) -> (Vec<LegendBox>, Vec<Polyline>) {
    let mut boxes = Vec::new();
    let mut lines = Vec::new();
    for element in svg.split('<') {
        let num = |n: &str| attr(element, n).and_then(|v| v.parse::<f64>().ok());
        if element.starts_with("rect ")
            && attr(element, "opacity") == Some("0.9")
            && attr(element, "fill") == Some("#FFFFFF")
        {
            if let (Some(x), Some(y), Some(w), Some(h)) =
                (num("x"), num("y"), num("width"), num("height"))
            {
                boxes.push((x, y, x + w, y + h));
            }
        } else if element.starts_with("polyline ") {
            let points: Vec<(f64, f64)> = attr(element, "points")
                .unwrap_or("")
                .split_whitespace()
                .filter_map(|p| {
                    let (a, b) = p.split_once(',')?;
                    Some((a.parse().ok()?, b.parse().ok()?))
                })
                .collect();
            if points.len() > 2 {
                lines.push(points);
            }
        }
    }
    (boxes, lines)
}

#[test]
fn no_legend_covers_a_data_line_in_any_bundled_report() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let out = tempfile::tempdir().unwrap();
    let status = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .arg("render-reports")
        .arg(root.join("scenarios"))
        .arg(out.path())
        .output()
        .unwrap();
    assert!(
        status.status.success(),
        "{}",
        String::from_utf8_lossy(&status.stderr)
    );
    let mut svgs: Vec<PathBuf> = Vec::new();
    for dir in std::fs::read_dir(out.path()).unwrap() {
        for f in std::fs::read_dir(dir.unwrap().path()).unwrap() {
            let p = f.unwrap().path();
            if p.extension().is_some_and(|e| e == "svg") {
                svgs.push(p);
            }
        }
    }
    assert!(svgs.len() >= 13 * 5, "{} charts", svgs.len());
    let mut covered = Vec::new();
    let mut legends = 0;
    for path in &svgs {
        let (boxes, lines) = geometry(&std::fs::read_to_string(path).unwrap());
        legends += boxes.len();
        for &(x0, y0, x1, y1) in &boxes {
            let hits = lines
                .iter()
                .flatten()
                .filter(|&&(x, y)| x > x0 && x < x1 && y > y0 && y < y1)
                .count();
            if hits > 0 {
                covered.push(format!("{}: {hits} points under a legend", path.display()));
            }
        }
    }
    assert!(
        legends >= svgs.len(),
        "{legends} legends in {} charts",
        svgs.len()
    );
    assert!(covered.is_empty(), "{}", covered.join("\n"));
}
