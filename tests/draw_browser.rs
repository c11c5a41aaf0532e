//! Every SVG we write opens in a real browser: headless Chromium (Debian's `chromium` package)
//! takes a screenshot of each hand-built chart's SVG, and it must match resvg's rendering of
//! the same SVG within a stated pixel tolerance.
//!
//! Without `/usr/bin/chromium` (or `chromium` on PATH) the test prints a notice and passes,
//! except when `CI=true`, where it fails (`.ci/setup` installs the package).

#[path = "support/charts.rs"]
mod charts;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use markwell::draw::layout::layout;
use markwell::draw::png::rasterise;
use markwell::draw::svg::write_svg;
use resvg::tiny_skia::Pixmap;

/// A pixel "differs" when a colour channel is off by more than this many levels of 255. The
/// two rasterisers hint and antialias text and edges differently; common practice for such
/// cross-renderer comparisons, no published source.
const CHANNEL_TOLERANCE: u8 = 48;
/// At most this share of pixels may differ (text edges, antialiased outlines, the smoothing of
/// the density image); measured here: 0.07 % to 1.1 %.
const MAX_DIFFERING_SHARE: f64 = 0.02;
/// And the mean absolute difference over all channels stays under this many levels.
const MAX_MEAN_DIFFERENCE: f64 = 2.5;

fn chromium() -> Option<PathBuf> {
    let fixed = PathBuf::from("/usr/bin/chromium");
    if fixed.is_file() {
        return Some(fixed);
    }
    std::env::var_os("PATH").and_then(|paths| {
        std::env::split_paths(&paths)
            .map(|dir| dir.join("chromium"))
            .find(|candidate| candidate.is_file())
    })
}

fn screenshot(browser: &Path, svg: &Path, out: &Path, width: u32, height: u32) -> Pixmap {
    let profile = tempfile::tempdir().unwrap();
    let mut child = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            "--force-device-scale-factor=1",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--screenshot={}", out.display()))
        .arg(format!("--window-size={width},{height}"))
        .arg(format!("file://{}", svg.display()))
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("chromium starts");
    let started = Instant::now();
    loop {
        match child.try_wait().expect("chromium can be waited for") {
            Some(_) => break,
            None if started.elapsed() > Duration::from_secs(90) => {
                let _ = child.kill();
                let _ = child.wait();
                panic!("chromium took more than 90 s for {}", svg.display());
            }
            None => std::thread::sleep(Duration::from_millis(50)),
        }
    }
    Pixmap::load_png(out).unwrap_or_else(|e| panic!("screenshot of {}: {e}", svg.display()))
}

/// (share of differing pixels, mean absolute channel difference)
fn difference(first: &Pixmap, second: &Pixmap) -> (f64, f64) {
    assert_eq!(
        (first.width(), first.height()),
        (second.width(), second.height()),
        "the pictures have different sizes"
    );
    let mut differing = 0usize;
    let mut total = 0u64;
    let pixels = first.pixels().len();
    for (a, b) in first.pixels().iter().zip(second.pixels()) {
        // the backgrounds are opaque, so premultiplied and straight colours agree
        let (a, b) = (a.demultiply(), b.demultiply());
        let channels = [
            a.red().abs_diff(b.red()),
            a.green().abs_diff(b.green()),
            a.blue().abs_diff(b.blue()),
        ];
        if channels.iter().any(|d| *d > CHANNEL_TOLERANCE) {
            differing += 1;
        }
        total += channels.iter().map(|d| u64::from(*d)).sum::<u64>();
    }
    (
        differing as f64 / pixels as f64,
        total as f64 / (pixels * 3) as f64,
    )
}

#[test]
fn chromium_and_resvg_draw_the_same_picture() {
    let Some(browser) = chromium() else {
        if std::env::var("CI").as_deref() == Ok("true") {
            panic!("chromium is missing on CI: .ci/setup installs Debian's `chromium` package");
        }
        eprintln!("NOTICE: chromium not found; the browser comparison is skipped (CI fails)");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let mut screenshots = Vec::new();
    let mut resvg_pictures = Vec::new();
    for (name, chart) in charts::all_charts() {
        let svg = write_svg(&layout(&chart));
        let svg_path = dir.path().join(format!("{name}.svg"));
        std::fs::write(&svg_path, &svg).unwrap();
        let ours = rasterise(&svg, 1.0).unwrap();
        let theirs = screenshot(
            &browser,
            &svg_path,
            &dir.path().join(format!("{name}.png")),
            ours.width(),
            ours.height(),
        );
        let (share, mean) = difference(&ours, &theirs);
        eprintln!(
            "{name}: {:.2} % of pixels differ, mean difference {mean:.2}",
            share * 100.0
        );
        assert!(
            share <= MAX_DIFFERING_SHARE && mean <= MAX_MEAN_DIFFERENCE,
            "{name}: chromium and resvg differ on {:.2} % of pixels (mean {mean:.2})",
            share * 100.0
        );
        screenshots.push(theirs);
        resvg_pictures.push(ours);
    }
    // the comparison is not blind: another chart's picture is far outside the tolerance
    let (share, mean) = difference(&resvg_pictures[0], &screenshots[2]);
    assert!(share > MAX_DIFFERING_SHARE || mean > MAX_MEAN_DIFFERENCE);
}
