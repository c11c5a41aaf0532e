//! `markwell draw` end to end: the demo folder draws one picture per drawable spec, every
//! picture passes a strict parse and our own checks (lie factor from the geometry, tick labels
//! inside their axis), the README's chart is current, and the output never leaves `-o DIR`.

#[path = "support/svg_checks.rs"]
mod svg_checks;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn markwell(args: &[&str], dir: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_markwell"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("the binary runs")
}

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn spec_stems(folder: &Path) -> Vec<String> {
    let mut stems: Vec<String> = std::fs::read_dir(folder)
        .unwrap()
        .filter_map(|entry| {
            let name = entry.ok()?.file_name().to_string_lossy().into_owned();
            name.strip_suffix(".chart.json").map(str::to_string)
        })
        .collect();
    stems.sort();
    stems
}

#[test]
fn the_demo_draws_one_faithful_picture_per_drawable_spec() {
    let out = tempfile::tempdir().unwrap();
    let result = markwell(
        &["draw", "demo-data", "-o", out.path().to_str().unwrap()],
        &repo(),
    );
    let stderr = String::from_utf8_lossy(&result.stderr);
    // some demo specs have errors on purpose: drawn what could be, so exit 1
    assert_eq!(result.status.code(), Some(1), "{stderr}");
    // the demo specs that truncate a baseline on purpose, as markwell's own check finds them
    let checked = markwell(&["check", "--format", "json", "demo-data"], &repo());
    let report: serde_json::Value =
        serde_json::from_slice(&checked.stdout).expect("check writes JSON");
    let truncated: Vec<String> = report["files"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|file| {
            file["diagnostics"]
                .as_array()
                .into_iter()
                .flatten()
                .any(|d| d["rule"] == "truncated-baseline")
        })
        .filter_map(|file| {
            let path = file["path"].as_str()?;
            let name = Path::new(path).file_name()?.to_string_lossy().into_owned();
            name.strip_suffix(".chart.json").map(str::to_string)
        })
        .collect();
    assert!(
        truncated
            .iter()
            .any(|stem| stem == "bakery-sourdough-from-400"),
        "{truncated:?}"
    );
    let mut drawn = 0;
    for stem in spec_stems(&repo().join("demo-data")) {
        let picture = out.path().join(format!("{stem}.svg"));
        if !picture.exists() {
            // a spec without a picture is named on stderr with the reason
            assert!(
                stderr.contains(&format!("{stem}.chart.json: nothing to draw")),
                "{stem}: no picture and no reason in\n{stderr}"
            );
            continue;
        }
        drawn += 1;
        let svg = std::fs::read_to_string(&picture).unwrap();
        markwell::draw::png::parse_svg(&svg).unwrap_or_else(|e| panic!("{stem}: {e}"));
        let read = svg_checks::read_chart(&svg).unwrap_or_else(|e| panic!("{stem}: {e}"));
        // every tick label lies within its axis
        for axis in &read.axes {
            let (low, high) = axis
                .extent
                .unwrap_or_else(|| panic!("{stem}: an axis without a line"));
            for (x, y, text) in &axis.labels_at {
                let along = if axis.vertical { *y } else { *x };
                assert!(
                    along >= low - 6.0 && along <= high + 6.0,
                    "{stem}: label {text} at {along} outside the axis {low}..{high}"
                );
            }
        }
        // Tufte's lie factor (Tufte 1983, p. 57) of every drawn bar and area, from the geometry
        let factors = svg_checks::chart_lie_factors(&read);
        if truncated.contains(&stem) {
            // the spec asks for an axis that does not start at zero (markwell's own
            // truncated-baseline rule flags it), and the picture draws what the spec says: the
            // factor shows the exaggeration
            assert!(factors.iter().any(|f| *f > 1.5), "{stem}: {factors:?}");
        } else {
            for factor in &factors {
                assert!((factor - 1.0).abs() <= 0.01, "{stem}: lie factor {factor}");
            }
        }
    }
    assert!(drawn >= 15, "{drawn} pictures");
}

#[test]
fn the_readme_chart_is_current() {
    // tests/regen-readme-chart.sh writes it with the same command
    let committed = repo().join("demo-data/pictures/ferry-monthly-trend.svg");
    let committed = std::fs::read_to_string(&committed).expect("the README chart is committed");
    let out = tempfile::tempdir().unwrap();
    let result = markwell(
        &[
            "draw",
            "demo-data/ferry-monthly-trend.chart.json",
            "-o",
            out.path().to_str().unwrap(),
        ],
        &repo(),
    );
    assert_eq!(
        result.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    let fresh = std::fs::read_to_string(out.path().join("ferry-monthly-trend.svg")).unwrap();
    assert!(
        fresh == committed,
        "demo-data/pictures/ferry-monthly-trend.svg is out of date: run tests/regen-readme-chart.sh"
    );
}

fn write(path: &Path, text: &str) {
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(path, text).unwrap();
}

const BAKERY_SPEC: &str = r#"{
  "title": "Rolls per oven",
  "source": { "rows": [ { "oven": "A", "rolls": 40 }, { "oven": "B", "rolls": 65 } ] },
  "mark": "bar",
  "bind": { "x": "oven", "y": "rolls" }
}"#;

#[test]
fn png_output_at_a_scale_and_bad_scales_refused() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join(".git/HEAD"), "ref: main\n");
    write(&dir.path().join("ovens.chart.json"), BAKERY_SPEC);
    let result = markwell(
        &[
            "draw",
            "ovens.chart.json",
            "--format",
            "png",
            "--scale",
            "2",
            "-o",
            "out",
        ],
        dir.path(),
    );
    assert_eq!(
        result.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    let png = std::fs::read(dir.path().join("out/ovens.png")).unwrap();
    let pixmap = resvg::tiny_skia::Pixmap::decode_png(&png).unwrap();
    assert_eq!((pixmap.width(), pixmap.height()), (1280, 800));
    for scale in ["0", "-1", "nan", "100"] {
        let result = markwell(
            &[
                "draw",
                "ovens.chart.json",
                "--format",
                "png",
                "--scale",
                scale,
                "-o",
                "out",
            ],
            dir.path(),
        );
        assert_eq!(result.status.code(), Some(2), "--scale {scale}");
    }
}

#[test]
fn missing_data_draws_nothing_and_says_why() {
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join(".git/HEAD"), "ref: main\n");
    write(
        &dir.path().join("lost.chart.json"),
        r#"{ "source": { "path": "gone.csv" }, "mark": "bar", "bind": { "x": "a", "y": "b" } }"#,
    );
    let result = markwell(&["draw", "lost.chart.json", "-o", "out"], dir.path());
    let stderr = String::from_utf8_lossy(&result.stderr);
    assert_eq!(result.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("gone.csv"), "{stderr}");
    assert!(stderr.contains("nothing to draw"), "{stderr}");
    assert!(!dir.path().join("out/lost.svg").exists());
}

#[test]
fn folders_keep_their_layout_below_the_output_and_never_write_outside_it() {
    let dir = tempfile::tempdir().unwrap();
    let outside = tempfile::tempdir().unwrap();
    write(&dir.path().join(".git/HEAD"), "ref: main\n");
    write(&dir.path().join("specs/a/ovens.chart.json"), BAKERY_SPEC);
    write(&dir.path().join("specs/b/ovens.chart.json"), BAKERY_SPEC);
    let result = markwell(&["draw", "specs", "-o", "out"], dir.path());
    assert_eq!(
        result.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    assert!(dir.path().join("out/a/ovens.svg").is_file());
    assert!(dir.path().join("out/b/ovens.svg").is_file());

    // a folder inside the output that links outside it is not written through
    #[cfg(unix)]
    {
        std::fs::remove_dir_all(dir.path().join("out/a")).unwrap();
        std::os::unix::fs::symlink(outside.path(), dir.path().join("out/a")).unwrap();
        let result = markwell(&["draw", "specs", "-o", "out"], dir.path());
        let stderr = String::from_utf8_lossy(&result.stderr);
        assert_eq!(result.status.code(), Some(2), "{stderr}");
        assert!(stderr.contains("outside the output folder"), "{stderr}");
        assert_eq!(std::fs::read_dir(outside.path()).unwrap().count(), 0);
    }

    // two specs of one name given as files would land on one picture: the second is refused
    let result = markwell(
        &[
            "draw",
            "specs/a/ovens.chart.json",
            "specs/b/ovens.chart.json",
            "-o",
            "flat",
        ],
        dir.path(),
    );
    let stderr = String::from_utf8_lossy(&result.stderr);
    assert_eq!(result.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("not overwritten"), "{stderr}");
}

#[test]
fn a_folder_without_specs_is_trouble() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir_all(dir.path().join("empty")).unwrap();
    let result = markwell(&["draw", "empty", "-o", "out"], dir.path());
    assert_eq!(result.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&result.stderr).contains("no chart specs"));
}

#[test]
fn legends_too_big_for_a_small_frame_are_cut_short_and_the_output_says_so() {
    // sixteen invented kiosks by colour and by shape on a 260 x 200 frame
    let rows: Vec<String> = (0..16)
        .map(|i| {
            format!(
                r#"{{ "kiosk": "Kiosk {i}", "pier": "Pier {i}", "cones": {}, "hour": {} }}"#,
                20 + (i * 7) % 50,
                9 + i % 8
            )
        })
        .collect();
    let spec = format!(
        r#"{{
  "title": "Cones sold",
  "frame": {{ "width": 260, "height": 200 }},
  "source": {{ "rows": [ {} ] }},
  "mark": "point",
  "bind": {{ "x": "hour", "y": "cones", "hue": "kiosk", "shape": "pier" }}
}}"#,
        rows.join(", ")
    );
    let dir = tempfile::tempdir().unwrap();
    write(&dir.path().join(".git/HEAD"), "ref: main\n");
    write(&dir.path().join("kiosks.chart.json"), &spec);
    let result = markwell(&["draw", "kiosks.chart.json", "-o", "out"], dir.path());
    let stderr = String::from_utf8_lossy(&result.stderr);
    assert!(
        stderr.contains("the legend `kiosk`") && stderr.contains("the frame is too small"),
        "{stderr}"
    );
    // drawn, but not all of it: the same exit as any other note
    assert_eq!(result.status.code(), Some(1), "{stderr}");
    let svg = std::fs::read_to_string(dir.path().join("out/kiosks.svg")).unwrap();
    assert!(svg.contains("more</text>"), "a '+N more' line");
}
