//! The CSV/TSV record reader against RFC 4180 (Y. Shafranovich, 2005, "Common Format and MIME
//! Type for Comma-Separated Values (CSV) Files"), section 2, rules 1-7 and their examples (quoted
//! from memory), plus the byte-order mark, delimiters and the two-thread scan of a big file whose
//! cut points fall inside quoted cells.

use std::io::Write;

use markwell::data::csv_reader::RecordReader;
use markwell::data::{DataProfile, ProfileCache, ReadOptions};
use markwell::spec::model::{AttributeKind, DataFormat};

/// Every record of `input` as strings.
fn records(input: &[u8], delimiter: u8) -> Vec<Vec<String>> {
    let mut reader = RecordReader::new(input, 0, delimiter);
    let mut out = Vec::new();
    while let Ok(Some(_)) = reader.next_record(u64::MAX) {
        out.push(
            (0..reader.field_count())
                .map(|index| String::from_utf8_lossy(reader.field(index)).into_owned())
                .collect(),
        );
    }
    out
}

fn strings(rows: &[&[&str]]) -> Vec<Vec<String>> {
    rows.iter()
        .map(|row| row.iter().map(|cell| cell.to_string()).collect())
        .collect()
}

#[test]
fn rule_1_records_end_with_crlf() {
    // RFC 4180 §2 rule 1: "aaa,bbb,ccc CRLF zzz,yyy,xxx CRLF"
    assert_eq!(
        records(b"aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n", b','),
        strings(&[&["aaa", "bbb", "ccc"], &["zzz", "yyy", "xxx"]])
    );
}

#[test]
fn rule_2_last_record_may_lack_a_line_break() {
    // RFC 4180 §2 rule 2: "aaa,bbb,ccc CRLF zzz,yyy,xxx"
    assert_eq!(
        records(b"aaa,bbb,ccc\r\nzzz,yyy,xxx", b','),
        strings(&[&["aaa", "bbb", "ccc"], &["zzz", "yyy", "xxx"]])
    );
}

#[test]
fn rule_3_header_line_has_the_same_format() {
    // RFC 4180 §2 rule 3: "field_name,field_name,field_name CRLF aaa,bbb,ccc CRLF ..."
    let rows = records(
        b"field_name,field_name,field_name\r\naaa,bbb,ccc\r\nzzz,yyy,xxx\r\n",
        b',',
    );
    assert_eq!(rows.len(), 3);
    assert_eq!(rows[0], vec!["field_name"; 3]);
}

#[test]
fn rule_4_spaces_are_part_of_a_field_and_no_trailing_comma() {
    // RFC 4180 §2 rule 4: "Spaces are considered part of a field and should not be ignored."
    assert_eq!(
        records(b"aaa , bbb,ccc\n", b','),
        strings(&[&["aaa ", " bbb", "ccc"]])
    );
    // a trailing comma makes one more (empty) field
    assert_eq!(records(b"a,b,\n", b','), strings(&[&["a", "b", ""]]));
}

#[test]
fn rule_5_fields_may_be_quoted() {
    // RFC 4180 §2 rule 5: "\"aaa\",\"bbb\",\"ccc\" CRLF zzz,yyy,xxx"
    assert_eq!(
        records(b"\"aaa\",\"bbb\",\"ccc\"\r\nzzz,yyy,xxx", b','),
        strings(&[&["aaa", "bbb", "ccc"], &["zzz", "yyy", "xxx"]])
    );
}

#[test]
fn rule_6_quoted_fields_hold_line_breaks_quotes_and_commas() {
    // RFC 4180 §2 rule 6: "\"aaa\",\"b CRLF bb\",\"ccc\" CRLF zzz,yyy,xxx"
    assert_eq!(
        records(b"\"aaa\",\"b\r\nbb\",\"ccc\"\r\nzzz,yyy,xxx", b','),
        strings(&[&["aaa", "b\r\nbb", "ccc"], &["zzz", "yyy", "xxx"]])
    );
    assert_eq!(records(b"\"a,b\",c\n", b','), strings(&[&["a,b", "c"]]));
}

#[test]
fn rule_7_doubled_quotes_inside_a_quoted_field() {
    // RFC 4180 §2 rule 7: "\"aaa\",\"b\"\"bb\",\"ccc\""
    assert_eq!(
        records(b"\"aaa\",\"b\"\"bb\",\"ccc\"", b','),
        strings(&[&["aaa", "b\"bb", "ccc"]])
    );
    assert_eq!(records(b"\"\"\"\"\n", b','), strings(&[&["\""]]));
}

#[test]
fn blank_lines_are_skipped_and_empty_quoted_fields_kept() {
    assert_eq!(
        records(b"a,b\n\n\r\nc,d\n\"\",\"\"\n", b','),
        strings(&[&["a", "b"], &["c", "d"], &["", ""]])
    );
}

#[test]
fn records_longer_than_the_buffer_are_read_whole() {
    let long_cell = "x".repeat(3 << 20);
    let input = format!("a,\"{long_cell}\"\nb,c\n");
    let rows = records(input.as_bytes(), b',');
    assert_eq!(rows.len(), 2);
    assert_eq!(rows[0][1].len(), 3 << 20);
    assert_eq!(rows[1], vec!["b", "c"]);
}

#[test]
fn line_numbers_count_line_breaks_inside_quotes() {
    let input = b"h1,h2\n\"x\ny\",1\nlast,2\n";
    let mut reader = RecordReader::new(&input[..], 0, b',');
    let mut lines = Vec::new();
    while let Ok(Some(record)) = reader.next_record(u64::MAX) {
        lines.push((record.line, record.byte_offset));
    }
    assert_eq!(lines, vec![(0, 0), (1, 6), (3, 14)]);
}

fn profile_text(name: &str, content: &[u8], read: ReadOptions) -> DataProfile {
    let folder = tempfile::tempdir().unwrap_or_else(|error| panic!("tempdir: {error}"));
    let path = folder.path().join(name);
    std::fs::write(&path, content).unwrap_or_else(|error| panic!("write: {error}"));
    match ProfileCache::new().full_profile(&path, &read, &|_| true) {
        Ok(profile) => (*profile).clone(),
        Err(error) => panic!("profile failed: {error}"),
    }
}

#[test]
fn byte_order_mark_is_not_part_of_the_first_name() {
    let profile = profile_text(
        "orchard.csv",
        b"\xEF\xBB\xBFtree,apples\r\nfuji,12\r\ngala,9\r\n",
        ReadOptions::default(),
    );
    assert_eq!(profile.columns[0].name, "tree");
    assert_eq!(profile.columns[0].header_range, Some((3, 7)));
    assert_eq!(profile.rows, 2);
}

#[test]
fn tsv_semicolon_and_declared_delimiters() {
    let tsv = profile_text(
        "ferries.tsv",
        b"route\tminutes\nnorth\t35\n",
        ReadOptions::default(),
    );
    assert_eq!(tsv.format, DataFormat::Tsv);
    assert_eq!(tsv.columns.len(), 2);
    let semicolon = profile_text(
        "loaves.csv",
        b"loaf;grams\nrye;800\n",
        ReadOptions::default(),
    );
    assert_eq!(semicolon.columns[1].name, "grams");
    let piped = profile_text(
        "loaves.txt",
        b"loaf|grams\nrye|800\n",
        ReadOptions {
            format: None,
            delimiter: Some('|'),
        },
    );
    assert_eq!(piped.columns[1].kind, AttributeKind::Quantitative);
}

#[test]
fn ragged_rows_are_problems_with_line_and_offset_and_the_rest_is_profiled() {
    let content =
        b"boat,seats,port\nalba,40,north\n\"long\nname\",12\nbrig,30,south,extra\nskiff,8,east\n";
    let profile = profile_text("boats.csv", content, ReadOptions::default());
    assert_eq!(profile.rows, 4);
    assert_eq!(profile.problems.len(), 2);
    // the short row starts on line 2 (0-based) at byte 30
    assert_eq!(profile.problems[0].line, Some(2));
    assert_eq!(profile.problems[0].byte_offset, Some(30));
    // the long row is on line 4, after the quoted line break
    assert_eq!(profile.problems[1].line, Some(4));
    assert_eq!(
        profile.problems[1].byte_offset,
        Some(content.windows(4).position(|w| w == b"brig").unwrap_or(0) as u64)
    );
    let port = profile.column("port").map(|c| c.missing);
    assert_eq!(port, Some(1));
    assert_eq!(
        profile
            .column("seats")
            .and_then(|c| c.numeric.as_ref())
            .map(|n| n.count),
        Some(4)
    );
}

/// A file over the parallel threshold whose rows hold quoted line breaks, so that the cut
/// between the two threads is likely to fall inside a quoted cell: the result must equal the
/// one-thread reading.
#[test]
fn two_thread_scan_with_quoted_line_breaks_matches_the_truth() {
    let folder = tempfile::tempdir().unwrap_or_else(|error| panic!("tempdir: {error}"));
    let path = folder.path().join("notes.csv");
    let mut file = std::fs::File::create(&path).unwrap_or_else(|error| panic!("create: {error}"));
    let row_count = 250_000u64;
    let mut expected_sum = 0u64;
    let mut content = Vec::new();
    writeln!(content, "note,weight,kind").ok();
    for row in 0..row_count {
        // a long quoted note with three line breaks and a doubled quote, then numbers
        let weight = row % 997;
        expected_sum += weight;
        writeln!(
            content,
            "\"crate {row}\nstacked \"\"high\"\"\nthird line of the note\nend\",{weight},k{}",
            row % 7
        )
        .ok();
    }
    // one ragged row at the very end, to check line numbers across the cut
    writeln!(content, "\"tail\",1").ok();
    file.write_all(&content)
        .unwrap_or_else(|error| panic!("write: {error}"));
    drop(file);
    assert!(
        content.len() > 12 << 20,
        "the file must be big enough for two threads"
    );

    let profile = match ProfileCache::new().full_profile(&path, &ReadOptions::default(), &|_| true)
    {
        Ok(profile) => profile,
        Err(error) => panic!("{error}"),
    };
    assert_eq!(profile.rows, row_count + 1);
    let weight = profile.column("weight").and_then(|c| c.numeric.clone());
    let Some(weight) = weight else {
        panic!("no weights")
    };
    assert_eq!(weight.count, row_count + 1);
    let expected_mean = (expected_sum + 1) as f64 / (row_count + 1) as f64;
    assert!((weight.mean - expected_mean).abs() < 1e-9);
    assert_eq!(profile.column("kind").map(|c| c.distinct.value), Some(7));
    assert_eq!(profile.problems.len(), 1);
    // header = line 0; each row spans 4 lines; the tail row starts at line 1 + 4 * rows
    assert_eq!(profile.problems[0].line, Some(1 + 4 * row_count as usize));
}

/// The sampled head of a big file may end inside a quoted cell that holds line breaks: that
/// cut is not the file's fault, so the sample reports no problem for it.
#[test]
fn a_sample_cut_inside_a_quoted_cell_is_not_a_problem() {
    let folder = tempfile::tempdir().unwrap_or_else(|error| panic!("tempdir: {error}"));
    let path = folder.path().join("logbook.csv");
    let mut content = b"entry,text\n".to_vec();
    let mut row = 0u64;
    while content.len() < 6 << 20 {
        writeln!(content, "{row},\"calm\nwind\nrain\nfog\nsun\nhail\nsleet\"").ok();
        row += 1;
    }
    std::fs::write(&path, &content).unwrap_or_else(|error| panic!("write: {error}"));
    // the sample is cut after the last line break of the first 4 MiB: check that this line
    // break sits inside quotes (an odd number of quotes before it)
    let head = &content[..markwell::data::cache::SAMPLE_BYTES];
    let last_break = head.iter().rposition(|&byte| byte == b'\n').unwrap_or(0);
    let quotes_before = head[..last_break]
        .iter()
        .filter(|&&byte| byte == b'"')
        .count();
    assert_eq!(
        quotes_before % 2,
        1,
        "the test file must put the cut inside quotes"
    );

    let sample = ProfileCache::new().sample_profile(&path, &ReadOptions::default());
    let Ok(sample) = sample else {
        panic!("sample failed")
    };
    assert!(sample.is_sample);
    assert!(sample.problems.is_empty(), "{:?}", sample.problems);
    let full = ProfileCache::new().full_profile(&path, &ReadOptions::default(), &|_| true);
    let Ok(full) = full else {
        panic!("full profile failed")
    };
    assert_eq!(full.rows, row);
    assert!(full.problems.is_empty());
    assert!(sample.rows < full.rows);
}
