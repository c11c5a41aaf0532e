//! Column profiles: ISO 8601 time columns, ordered vocabularies, missing tokens, zero hints,
//! JSON / NDJSON / inline rows, the HyperLogLog estimate on a million values, the cache
//! (sampled then full, size/mtime keys, invalidation), and the text and JSON rendering.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Arc;

use markwell::data::cache::profile_inline_rows;
use markwell::data::infer::parse_iso_time;
use markwell::data::profile::ColumnAccumulator;
use markwell::data::render::{render_profile_json, render_profile_text};
use markwell::data::sketch::{hash_bytes, HyperLogLog};
use markwell::data::{DataErrorKind, DataProfile, ProfileCache, ReadOptions};
use markwell::spec::model::{AttributeKind, DataFormat, InlineValue, ZeroMeaning};

fn temp_folder() -> tempfile::TempDir {
    tempfile::tempdir().unwrap_or_else(|error| panic!("tempdir: {error}"))
}

fn write_file(folder: &Path, name: &str, content: &[u8]) -> PathBuf {
    let path = folder.join(name);
    std::fs::write(&path, content).unwrap_or_else(|error| panic!("write {name}: {error}"));
    path
}

fn profile_of(name: &str, content: &str) -> DataProfile {
    let folder = temp_folder();
    let path = write_file(folder.path(), name, content.as_bytes());
    match ProfileCache::new().full_profile(&path, &ReadOptions::default(), &|_| true) {
        Ok(profile) => (*profile).clone(),
        Err(error) => panic!("{error}"),
    }
}

#[test]
fn iso_8601_forms_are_instants_in_order() {
    // ISO 8601-1:2019 calendar date, year-month, week date; RFC 3339 §5.6 date-time with
    // `Z`, offsets and fractional seconds. 2024-01-01 was a Monday (from memory), so week 10
    // day 2 of 2024 is 2024-03-05 (ISO week 1 holds January 4th).
    let date = parse_iso_time("2024-03-05");
    assert_eq!(parse_iso_time("2024-W10-2"), date);
    assert_eq!(parse_iso_time("2024-03"), parse_iso_time("2024-03-01"));
    let utc = parse_iso_time("2024-03-05T14:30:00Z");
    assert_eq!(parse_iso_time("2024-03-05T15:30:00+01:00"), utc);
    assert_eq!(parse_iso_time("2024-03-05T09:30:00-0500"), utc);
    assert_eq!(parse_iso_time("2024-03-05 14:30:00Z"), utc);
    let fractional = parse_iso_time("2024-03-05T14:30:00.250Z");
    assert!(fractional > utc);
    assert_eq!(fractional.map(|key| key.1), Some(250_000_000));
    assert!(date < utc);
    // 1970-01-01T00:00:00Z is the zero of the key
    assert_eq!(parse_iso_time("1970-01-01T00:00:00Z"), Some((0, 0)));
    // not dates: impossible days, bare years, free text
    for text in [
        "2023-02-29",
        "2024-13-01",
        "2024-W54",
        "2024",
        "March 5",
        "2024-03-05T25:00",
    ] {
        assert_eq!(parse_iso_time(text), None, "{text}");
    }
    assert!(parse_iso_time("2024-02-29").is_some()); // 2024 is a leap year
}

#[test]
fn a_column_of_dates_and_date_times_is_time_with_its_span() {
    let profile = profile_of(
        "sailings.csv",
        "departed,ship\n2024-03-05T14:30:00Z,alba\n2024-03-05T15:00:00+02:00,brig\n2024-03,cog\n2024-04-01,dory\n,eel\n",
    );
    let departed = profile.column("departed").cloned();
    let Some(departed) = departed else {
        panic!("no column")
    };
    assert_eq!(departed.kind, AttributeKind::Time);
    assert_eq!(departed.missing, 1);
    assert_eq!(
        departed.time_range,
        Some(("2024-03".to_string(), "2024-04-01".to_string()))
    );
    assert_eq!(departed.zero, Some(ZeroMeaning::Arbitrary));
    assert!(
        departed.kind_evidence.contains("ISO 8601"),
        "{}",
        departed.kind_evidence
    );
}

#[test]
fn ordered_vocabulary_and_plain_categories() {
    let profile = profile_of(
        "crust.csv",
        "crust,colour\nLow,red\nhigh,blue\nmedium,red\nlow,green\n",
    );
    assert_eq!(
        profile.column("crust").map(|c| c.kind),
        Some(AttributeKind::Ordered)
    );
    assert_eq!(
        profile.column("colour").map(|c| c.kind),
        Some(AttributeKind::Categorical)
    );
}

#[test]
fn mostly_numbers_with_a_few_words_is_a_kind_conflict_input() {
    let mut content = String::from("tonnes\n");
    for value in 0..90 {
        content.push_str(&format!("{value}\n"));
    }
    content.push_str("unknown\nsee notes\n");
    let profile = profile_of("cargo.csv", &content);
    let Some(tonnes) = profile.column("tonnes") else {
        panic!("no column")
    };
    // 90 of 92 = 97.8 % numbers: over the 95 % threshold (common practice, no source)
    assert_eq!(tonnes.kind, AttributeKind::Quantitative);
    assert!((tonnes.numeric_share - 90.0 / 92.0).abs() < 1e-12);
    assert_eq!(tonnes.non_numeric_examples, vec!["unknown", "see notes"]);

    content.push_str("n/k\nn/k\nn/k\n");
    let profile = profile_of("cargo.csv", &content);
    // 90 of 95 = 94.7 %: under the threshold, categorical
    assert_eq!(
        profile.column("tonnes").map(|c| c.kind),
        Some(AttributeKind::Categorical)
    );
}

#[test]
fn missing_tokens_and_temperature_units() {
    let profile = profile_of(
        "ovens.csv",
        "oven,temp_degC,year_built\na,180,1998\nb,NA,2004\nc,N/A,2011\nd,null,NaN\ne,,2020\nf,200.5,2021\n",
    );
    let Some(temperature) = profile.column("temp_degC") else {
        panic!("no column")
    };
    assert_eq!(temperature.missing, 4);
    assert_eq!(temperature.kind, AttributeKind::Quantitative);
    assert_eq!(temperature.zero, Some(ZeroMeaning::Arbitrary));
    let Some(year) = profile.column("year_built") else {
        panic!("no column")
    };
    assert_eq!(year.missing, 1);
    assert_eq!(year.zero, Some(ZeroMeaning::Arbitrary));
    assert_eq!(profile.column("oven").and_then(|c| c.zero), None);
}

#[test]
fn json_array_with_missing_keys_nulls_and_header_ranges() {
    let text = r#"[
  {"opened": "2019-05-01", "bakery": "north", "loaves": 120},
  {"bakery": "south", "loaves": null},
  {"bakery": "east", "loaves": "95", "opened": "2021-01-15", "note": {"x": 1}}
]"#;
    let profile = profile_of("bakeries.json", text);
    assert_eq!(profile.format, DataFormat::Json);
    assert_eq!(profile.rows, 3);
    let names: Vec<&str> = profile.columns.iter().map(|c| c.name.as_str()).collect();
    // keys in the order they first appear in the file, not sorted
    assert_eq!(names, ["opened", "bakery", "loaves", "note"]);
    let Some(loaves) = profile.column("loaves") else {
        panic!("no column")
    };
    assert_eq!(loaves.missing, 1);
    assert_eq!(loaves.kind, AttributeKind::Quantitative);
    assert_eq!(loaves.numeric.as_ref().map(|n| n.mean), Some(107.5));
    assert_eq!(profile.column("opened").map(|c| c.missing), Some(1));
    assert_eq!(profile.column("note").map(|c| c.missing), Some(2));
    let Some((start, end)) = profile.column("loaves").and_then(|c| c.header_range) else {
        panic!("no header range")
    };
    assert_eq!(&text[start as usize..end as usize], "\"loaves\"");
}

#[test]
fn json_that_is_not_an_array_of_objects() {
    let folder = temp_folder();
    let path = write_file(folder.path(), "one.json", br#"[{"a": 1}, 7, {"a": 2}]"#);
    let profile = ProfileCache::new().full_profile(&path, &ReadOptions::default(), &|_| true);
    let Ok(profile) = profile else {
        panic!("profile failed")
    };
    assert_eq!(profile.rows, 2);
    assert_eq!(profile.problems.len(), 1);
    assert!(profile.problems[0].message.contains("element 1"));

    let path = write_file(folder.path(), "broken.json", b"[{\"a\": 1},\n {\"a\": }]");
    let error = ProfileCache::new()
        .full_profile(&path, &ReadOptions::default(), &|_| true)
        .err();
    let Some(error) = error else {
        panic!("broken JSON profiled")
    };
    assert_eq!(error.kind, DataErrorKind::Malformed);
    assert_eq!(error.line, Some(1));

    let path = write_file(folder.path(), "object.txt", b"{\"a\": 1}");
    let declared = ReadOptions {
        format: Some(DataFormat::Json),
        delimiter: None,
    };
    let error = ProfileCache::new()
        .full_profile(&path, &declared, &|_| true)
        .err();
    assert_eq!(error.map(|e| e.kind), Some(DataErrorKind::Malformed));
}

#[test]
fn ndjson_lines_with_a_bad_line() {
    let profile = profile_of(
        "trips.ndjson",
        "{\"ferry\": \"alba\", \"minutes\": 35}\n\n{\"ferry\": \"brig\", \"minutes\": 41}\nnot json\n{\"ferry\": \"cog\"}\n{\"ferry\": \"dory\", \"minutes\": }\n",
    );
    assert_eq!(profile.format, DataFormat::Ndjson);
    assert_eq!(profile.rows, 3);
    // the two bad lines add nothing (not even a partial row)
    assert_eq!(profile.problems.len(), 2);
    assert_eq!(profile.problems[0].line, Some(3));
    assert_eq!(profile.problems[1].line, Some(5));
    assert_eq!(profile.column("minutes").map(|c| c.missing), Some(1));
    assert_eq!(profile.column("ferry").map(|c| c.distinct.value), Some(3));
}

#[test]
fn inline_rows_are_profiled_without_io() {
    let rows = vec![
        vec![
            ("orchard".to_string(), InlineValue::Text("hill".to_string())),
            ("crates".to_string(), InlineValue::Number(12.0)),
        ],
        vec![
            ("orchard".to_string(), InlineValue::Text("vale".to_string())),
            ("crates".to_string(), InlineValue::Null),
            ("organic".to_string(), InlineValue::Bool(true)),
        ],
    ];
    let profile = match profile_inline_rows(&rows) {
        Ok(profile) => profile,
        Err(error) => panic!("{error}"),
    };
    assert_eq!(profile.path, None);
    assert_eq!(profile.rows, 2);
    assert_eq!(profile.column("crates").map(|c| c.missing), Some(1));
    assert_eq!(profile.column("organic").map(|c| c.missing), Some(1));
    assert_eq!(profile.column("orchard").map(|c| c.distinct.value), Some(2));
    assert_eq!(
        profile_inline_rows(&[]).err().map(|e| e.kind),
        Some(DataErrorKind::Empty)
    );
}

#[test]
fn hyperloglog_on_a_million_distinct_values_is_within_three_standard_errors() {
    // Flajolet et al. 2007: standard error 1.04 / sqrt(m); m = 16384 gives 0.8125 %
    let standard_error = HyperLogLog::relative_standard_error();
    assert!((standard_error - 1.04 / 128.0).abs() < 1e-15);
    let truth = 1_000_000.0;
    let mut sketch = HyperLogLog::new();
    for value in 0..1_000_000u64 {
        sketch.add_hash(hash_bytes(format!("ticket-{value}").as_bytes()));
    }
    let relative = (sketch.estimate() - truth).abs() / truth;
    assert!(relative < 3.0 * standard_error, "relative error {relative}");

    // the same through a column, which switches from exact to estimated past its cap
    let mut column = ColumnAccumulator::default();
    let mut merged_part = ColumnAccumulator::default();
    for value in 0..1_000_000u64 {
        let text = format!("{:x}-{value}", value % 17);
        if value % 3 == 0 {
            merged_part.add_text(&text);
        } else {
            column.add_text(&text);
        }
    }
    column.merge(&merged_part);
    let mut table = markwell::data::profile::TableAccumulator::with_columns(&["id".to_string()]);
    table.rows = 1_000_000;
    table.columns[0] = column;
    let profile = table.finish(None, DataFormat::Csv, false, &[]);
    let distinct = &profile.columns[0].distinct;
    assert!(!distinct.exact);
    let relative = (distinct.value as f64 - truth).abs() / truth;
    assert!(
        relative < 3.0 * distinct.relative_error,
        "relative error {relative}"
    );
}

fn big_file(folder: &Path) -> PathBuf {
    let path = folder.join("harvest.csv");
    let mut file = std::fs::File::create(&path).unwrap_or_else(|error| panic!("{error}"));
    let mut content = String::from("orchard,picked_kg,day\n");
    for row in 0..300_000 {
        content.push_str(&format!(
            "plot-{},{}.{},2024-09-{:02}\n",
            row % 40,
            row % 300,
            (row / 300) % 10,
            row % 28 + 1
        ));
    }
    file.write_all(content.as_bytes())
        .unwrap_or_else(|error| panic!("{error}"));
    path
}

#[test]
fn sampled_then_full_profiles_and_the_cache() {
    let folder = temp_folder();
    let path = big_file(folder.path());
    let cache = ProfileCache::new();
    let read = ReadOptions::default();
    let sample = match cache.sample_profile(&path, &read) {
        Ok(profile) => profile,
        Err(error) => panic!("{error}"),
    };
    assert!(sample.is_sample);
    assert!(sample.rows > 1000 && sample.rows < 300_000);
    let progress_seen = std::cell::Cell::new(0.0f64);
    let full = match cache.full_profile(&path, &read, &|share| {
        progress_seen.set(share);
        true
    }) {
        Ok(profile) => profile,
        Err(error) => panic!("{error}"),
    };
    assert!(!full.is_sample);
    assert_eq!(full.rows, 300_000);
    assert_eq!(progress_seen.get(), 1.0);
    assert_eq!(
        full.column("day").map(|c| c.kind),
        Some(AttributeKind::Time)
    );
    assert_eq!(
        full.column("picked_kg").map(|c| c.distinct.value),
        Some(3000)
    );
    // cached: the same profile, and the sampled call now returns the full one
    let again = cache.full_profile(&path, &read, &|_| true);
    assert!(again.is_ok_and(|again| Arc::ptr_eq(&again, &full)));
    let sampled_again = cache.sample_profile(&path, &read);
    assert!(sampled_again.is_ok_and(|profile| !profile.is_sample));
    // a changed file is profiled anew
    std::fs::write(&path, "orchard,picked_kg\nhill,3\n").unwrap_or_else(|error| panic!("{error}"));
    let changed = cache.full_profile(&path, &read, &|_| true);
    assert!(changed.is_ok_and(|profile| profile.rows == 1));
    // invalidation forgets it
    assert_eq!(cache.len(), 1);
    cache.invalidate(&path);
    assert!(cache.is_empty());
}

#[test]
fn sampled_profile_is_fast_on_a_big_file() {
    let folder = temp_folder();
    let path = big_file(folder.path());
    let cache = ProfileCache::new();
    let started = std::time::Instant::now();
    let sample = cache.sample_profile(&path, &ReadOptions::default());
    let elapsed = started.elapsed();
    assert!(sample.is_ok_and(|profile| profile.is_sample));
    // generous bound for an unoptimised test build on a shared machine (target < 100 ms in
    // release, measured by the benchmark)
    assert!(elapsed.as_secs_f64() < 20.0, "{elapsed:?}");
}

#[test]
fn text_and_json_rendering() {
    let folder = temp_folder();
    let path = big_file(folder.path());
    let profile = match ProfileCache::new().full_profile(&path, &ReadOptions::default(), &|_| true)
    {
        Ok(profile) => profile,
        Err(error) => panic!("{error}"),
    };
    let text = render_profile_text(&profile);
    assert!(text.contains("300000 rows, 3 columns (csv)"), "{text}");
    let table_line = text
        .lines()
        .find(|line| line.starts_with("picked_kg"))
        .unwrap_or_default();
    assert!(table_line.contains("quantitative"), "{table_line}");
    assert!(table_line.contains("3000"), "{table_line}");
    assert!(table_line.contains("299.9"), "{table_line}");
    assert!(text.contains('█'), "{text}");
    let day_line = text
        .lines()
        .find(|line| line.starts_with("day"))
        .unwrap_or_default();
    assert!(
        day_line.contains("2024-09-01") && day_line.contains("2024-09-28"),
        "{day_line}"
    );

    let json = render_profile_json(&profile);
    assert_eq!(json["rows"], 300_000);
    assert_eq!(json["sampled"], false);
    assert_eq!(json["columns"][1]["name"], "picked_kg");
    assert_eq!(json["columns"][1]["kind"], "quantitative");
    assert_eq!(json["columns"][1]["distinct"]["exact"], true);
    assert_eq!(json["columns"][2]["time_span"]["latest"], "2024-09-28");
    let histogram = json["columns"][1]["numbers"]["histogram"]
        .as_array()
        .cloned();
    let total: u64 = histogram
        .unwrap_or_default()
        .iter()
        .filter_map(|count| count.as_u64())
        .sum();
    assert_eq!(total, 300_000);
}

#[test]
fn estimated_distinct_counts_render_with_a_tilde_and_error() {
    let mut content = String::from("ticket\n");
    for value in 0..150_000 {
        content.push_str(&format!("t{value}\n"));
    }
    let profile = profile_of("tickets.csv", &content);
    let text = render_profile_text(&profile);
    let line = text
        .lines()
        .find(|line| line.starts_with("ticket"))
        .unwrap_or_default();
    assert!(line.contains('~') && line.contains("±0.8%"), "{line}");
}

#[test]
fn concurrent_requests_for_one_file_share_one_scan() {
    let folder = temp_folder();
    let path = big_file(folder.path());
    let cache = ProfileCache::new();
    let read = ReadOptions::default();
    let (first, second) = std::thread::scope(|scope| {
        let first = scope.spawn(|| cache.full_profile(&path, &read, &|_| true));
        let second = scope.spawn(|| cache.full_profile(&path, &read, &|_| true));
        (first.join(), second.join())
    });
    let (Ok(Ok(first)), Ok(Ok(second))) = (first, second) else {
        panic!("a scan failed")
    };
    // one scan ran; the other caller waited for it and got the same profile
    assert!(Arc::ptr_eq(&first, &second));
    assert_eq!(first.rows, 300_000);
}
