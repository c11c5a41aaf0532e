//! The CSV/TSV/JSON/NDJSON readers and the profiler, in memory. The first byte chooses the
//! format, the delimiter and whether the input is a sampled head; the rest is the file.
#![no_main]

use libfuzzer_sys::fuzz_target;
use markwell::data::cache::detect_format;
use markwell::data::csv_reader::{scan_bytes, ScanControl};
use markwell::data::json_reader::{scan_json_array, scan_ndjson};
use markwell::data::ReadOptions;
use markwell::spec::model::DataFormat;

fuzz_target!(|data: &[u8]| {
    let Some((&selector, bytes)) = data.split_first() else {
        return;
    };
    let truncated = selector & 0x80 != 0;
    let control = ScanControl {
        truncated_input: truncated,
        ..ScanControl::default()
    };
    let path = std::path::Path::new("fuzz.data");
    let _ = detect_format(path, bytes, &ReadOptions::default());
    let (format, table) = match selector & 0x07 {
        0 => (DataFormat::Csv, scan_bytes(bytes, b',', None, truncated).map(|(_, t)| t)),
        1 => (DataFormat::Tsv, scan_bytes(bytes, b'\t', None, truncated).map(|(_, t)| t)),
        2 => (DataFormat::Csv, scan_bytes(bytes, b';', None, truncated).map(|(_, t)| t)),
        3 | 4 => (DataFormat::Json, scan_json_array(bytes, truncated, &control, None)),
        _ => (DataFormat::Ndjson, scan_ndjson(bytes, truncated, &control, None)),
    };
    if let Ok(table) = table {
        let profile = table.finish(None, format, truncated, &[]);
        for column in &profile.columns {
            assert!(column.missing <= profile.rows.max(column.rows));
            if let Some(numeric) = &column.numeric {
                assert!(numeric.count <= column.rows);
            }
        }
        let _ = markwell::data::render::render_profile_text(&profile);
        let value = markwell::data::render::render_profile_json(&profile);
        // the streamed JSON of `markwell profile` is byte for byte the pretty-printed value
        let mut streamed = Vec::new();
        let written = markwell::data::render::write_profile_json(&profile, 0, &mut streamed);
        if let (Ok(()), Ok(whole)) = (written, serde_json::to_string_pretty(&value)) {
            assert_eq!(streamed, whole.into_bytes());
        }
    }
});
