//! Opens `report.html` in headless Chromium: the page must render (a
//! screenshot with many distinct colours) and carry its key text (the
//! caution and the title in the DOM). Without Chromium the check fails
//! when `CI` is set and is skipped with a message otherwise.

use std::collections::HashSet;
use std::path::{Path, PathBuf};
use std::process::Command;

fn chromium() -> Option<PathBuf> {
    for name in ["chromium", "chromium-browser"] {
        if let Ok(out) = Command::new("sh")
            .args(["-c", &format!("command -v {name}")])
            .output()
        {
            let path = String::from_utf8_lossy(&out.stdout).trim().to_string();
            if out.status.success() && !path.is_empty() {
                return Some(PathBuf::from(path));
            }
        }
    }
    None
}

fn headless(browser: &Path, profile: &Path) -> Command {
    let mut cmd = Command::new(browser);
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--no-first-run",
        "--hide-scrollbars",
    ])
    .arg(format!("--user-data-dir={}", profile.display()));
    cmd
}

/// Distinct RGB colours of a PNG.
fn distinct_colours(png_path: &Path) -> (usize, u32, u32) {
    let decoder = png::Decoder::new(std::io::BufReader::new(
        std::fs::File::open(png_path).expect("screenshot exists"),
    ));
    let mut reader = decoder.read_info().expect("a PNG");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("a PNG frame");
    let channels = info.color_type.samples();
    let mut colours = HashSet::new();
    for px in buf[..info.buffer_size()].chunks(channels) {
        let rgb = match channels {
            1 | 2 => (px[0], px[0], px[0]),
            _ => (px[0], px[1], px[2]),
        };
        colours.insert(rgb);
    }
    (colours.len(), info.width, info.height)
}

#[test]
fn report_renders_in_headless_chromium() {
    let Some(browser) = chromium() else {
        let msg = "chromium not found: install it (apt-get install -y chromium) to check that report.html renders";
        if std::env::var_os("CI").is_some() {
            panic!("{msg}");
        }
        eprintln!("skipped: {msg}");
        return;
    };
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("demo");
    let out = Command::new(env!("CARGO_BIN_EXE_tidewater"))
        .args(["run", "--demo", "--quiet", "--out"])
        .arg(&dir)
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let page = dir.join("report.html");
    let url = format!("file://{}", page.display());

    // The page is self-contained: no network, no external resources.
    let html = std::fs::read_to_string(&page).unwrap();
    for banned in [
        "http://", "https://", "<script", "<link", "@import", "src=\"",
    ] {
        let hits: Vec<_> = html
            .match_indices(banned)
            .filter(|(i, _)| !html[..*i].ends_with("xmlns=\""))
            .collect();
        assert!(hits.is_empty(), "report.html refers to {banned}");
    }

    // Screenshot.
    let shot = root.path().join("report.png");
    let status = headless(&browser, &root.path().join("profile-shot"))
        .arg("--window-size=1100,1600")
        .arg(format!("--screenshot={}", shot.display()))
        .arg(&url)
        .output()
        .unwrap();
    assert!(
        shot.is_file(),
        "chromium wrote no screenshot: {}",
        String::from_utf8_lossy(&status.stderr)
    );
    let (colours, w, h) = distinct_colours(&shot);
    assert_eq!((w, h), (1100, 1600));
    assert!(
        colours > 200,
        "the screenshot looks blank: {colours} distinct colours"
    );
    if let Ok(keep) = std::env::var("TIDEWATER_KEEP_SCREENSHOT") {
        std::fs::copy(&shot, keep).unwrap();
    }

    // The DOM as rendered carries the title and the caution.
    let dom = headless(&browser, &root.path().join("profile-dom"))
        .arg("--dump-dom")
        .arg(&url)
        .output()
        .unwrap();
    let dom = String::from_utf8_lossy(&dom.stdout);
    assert!(
        dom.contains("id=\"caution\""),
        "no caution block in the DOM"
    );
    assert!(dom.contains("not a medical device"), "caution text missing");
    assert!(
        dom.contains("re-measure serum sodium"),
        "caution text missing"
    );
    assert!(
        dom.contains("Demonstration: chronic hyponatremia"),
        "title missing"
    );
    assert!(dom.matches("<svg").count() >= 4, "charts missing");
}
