//! Property tests of the data layer: records written by the `csv` crate's writer (RFC 4180
//! quoting) read back unchanged; arbitrary bytes never panic the reader or the profiler; a
//! column profiled in two parts and merged equals the one-pass profile.

use markwell::data::csv_reader::{scan_bytes, RecordReader};
use markwell::data::infer::{parse_iso_time, parse_number};
use markwell::data::profile::TableAccumulator;
use markwell::spec::model::DataFormat;
use proptest::prelude::*;

fn cell() -> impl Strategy<Value = String> {
    proptest::collection::vec(
        prop_oneof![
            Just('a'),
            Just('7'),
            Just(' '),
            Just(','),
            Just('"'),
            Just('\n'),
            Just('\r'),
            Just('é'),
            Just('.'),
        ],
        0..6,
    )
    .prop_map(|characters| characters.into_iter().collect())
}

fn records() -> impl Strategy<Value = Vec<Vec<String>>> {
    proptest::collection::vec(proptest::collection::vec(cell(), 1..5), 1..12)
}

fn written(records: &[Vec<String>], crlf: bool) -> Vec<u8> {
    let terminator = if crlf {
        csv::Terminator::CRLF
    } else {
        csv::Terminator::Any(b'\n')
    };
    let mut writer = csv::WriterBuilder::new()
        .flexible(true)
        .terminator(terminator)
        .from_writer(Vec::new());
    for record in records {
        // a record of one empty cell would be a blank line, which readers skip: quote it
        if record.len() == 1 && record[0].is_empty() {
            writer.write_record(["\"\""]).ok();
            continue;
        }
        writer.write_record(record).ok();
    }
    writer.into_inner().unwrap_or_default()
}

fn read_back(bytes: &[u8]) -> Vec<Vec<String>> {
    let mut reader = RecordReader::new(bytes, 0, b',');
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

proptest! {
    #[test]
    fn records_written_with_rfc_4180_quoting_read_back_unchanged(
        records in records(),
        crlf in any::<bool>(),
    ) {
        let mut expected = records.clone();
        for record in &mut expected {
            if record.len() == 1 && record[0].is_empty() {
                // written as `"""""` (the quoted text `""`): reads back as one quote pair
                record[0] = "\"\"".to_string();
            }
        }
        let bytes = written(&records, crlf);
        prop_assert_eq!(read_back(&bytes), expected);
    }

    #[test]
    fn arbitrary_bytes_never_panic_the_reader_or_the_profiler(
        bytes in proptest::collection::vec(any::<u8>(), 0..400),
        delimiter in prop_oneof![Just(b','), Just(b'\t'), Just(b';')],
    ) {
        let _ = read_back(&bytes);
        let _ = scan_bytes(&bytes, delimiter, None, false);
        let _ = scan_bytes(&bytes, delimiter, None, true);
        if let Ok(text) = std::str::from_utf8(&bytes) {
            let _ = parse_iso_time(text);
            let _ = parse_number(text);
        }
    }

    #[test]
    fn a_column_profiled_in_two_parts_equals_one_pass(
        cells in proptest::collection::vec(
            prop_oneof![
                "[0-9]{1,3}",
                "-?[0-9]{1,2}\\.[0-9]",
                "2024-0[1-9]-1[0-9]",
                "(NA|null|)",
                "[a-c]{1,2}",
            ],
            1..200,
        ),
        split in 0usize..200,
    ) {
        let split = split.min(cells.len());
        let names = vec!["value".to_string()];
        let mut whole = TableAccumulator::with_columns(&names);
        let mut left = TableAccumulator::with_columns(&names);
        let mut right = TableAccumulator::with_columns(&names);
        for (position, cell) in cells.iter().enumerate() {
            whole.rows += 1;
            whole.columns[0].add_text(cell);
            let part = if position < split { &mut left } else { &mut right };
            part.rows += 1;
            part.columns[0].add_text(cell);
        }
        left.merge(&right);
        let one_pass = whole.finish(None, DataFormat::Csv, false, &[]);
        let merged = left.finish(None, DataFormat::Csv, false, &[]);
        prop_assert_eq!(one_pass, merged);
    }
}
