//! Reading single cells and deciding what a column holds: missing-value tokens, numbers, ISO 8601
//! dates and date-times, ordinal vocabularies, and hints about whether zero means "none".
//!
//! Decisions (documented here, used by the profiler):
//! - **Missing**: after trimming ASCII spaces, a cell is missing when it is empty or exactly one of
//!   `NA`, `N/A`, `n/a`, `NaN`, `nan`, `null`, `NULL`, `None`, `#N/A`. Case matters (`Na` is sodium).
//!   Common practice (R writes `NA`, spreadsheets `#N/A`, JSON `null`), no single source.
//! - **Numbers**: decimal text that Rust's `f64` parser accepts (`42`, `-3.5`, `.5`, `1e6`, `+2`),
//!   finite, starting with a digit, a sign or a point. `inf`/`NaN` are not numbers. Integers
//!   written without a point in a float column are numbers like any other.
//! - **Quantitative**: at least 95 % of the non-missing values are numbers (common practice,
//!   no source). A column of few distinct integers (years 2007-2009) stays quantitative.
//! - **Time**: at least 95 % of the non-missing values are ISO 8601 dates or date-times
//!   (ISO 8601-1:2019 extended format; RFC 3339 §5.6 for the date-time with offset).
//! - **Ordered**: every distinct value (case-insensitive) comes from one known ordinal vocabulary
//!   ("low/medium/high", Likert agreement, ...), with at least two distinct values. Common
//!   practice, no source; anything else stays categorical.

use crate::spec::model::ZeroMeaning;

/// The kind-decision threshold: share of non-missing values that must be numbers (or times).
/// Common practice, no source.
pub const MAJORITY_SHARE: f64 = 0.95;

const MISSING_TOKENS: &[&str] = &[
    "NA", "N/A", "n/a", "NaN", "nan", "null", "NULL", "None", "#N/A",
];

/// The cell with ASCII spaces (and tabs, CR) trimmed from both ends.
pub fn trim_cell(cell: &str) -> &str {
    let bytes = cell.as_bytes();
    let is_space = |byte: &u8| *byte == b' ' || *byte == b'\t' || *byte == b'\r';
    if !bytes.first().is_some_and(is_space) && !bytes.last().is_some_and(is_space) {
        return cell;
    }
    cell.trim_matches(|character: char| character == ' ' || character == '\t' || character == '\r')
}

/// Whether a trimmed cell stands for a missing value.
pub fn is_missing_token(trimmed: &str) -> bool {
    trimmed.is_empty() || (trimmed.len() <= 4 && MISSING_TOKENS.contains(&trimmed))
}

/// Exact powers of ten as `f64` (every one up to 10^22 is exact in binary64).
const EXACT_POWERS_OF_TEN: [f64; 16] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
];

/// What the quick decimal reader made of a cell.
#[derive(Clone, Copy, Debug, PartialEq)]
enum PlainDecimal {
    Number(f64),
    /// Certainly not a number (a date, a word, two points, ...).
    NotANumber,
    /// An exponent or more than 15 digits: the general parser decides.
    NeedsGeneralParser,
}

/// Plain decimals (`-12.345`, at most 15 digits, no exponent) without the general parser:
/// the digits as an integer below 2^53 divided by an exact power of ten is correctly rounded
/// (W. D. Clinger 1990, "How to read floating point numbers accurately", the fast path; from
/// memory).
fn parse_plain_decimal(bytes: &[u8]) -> PlainDecimal {
    let (negative, digits) = match bytes.first() {
        Some(b'-') => (true, &bytes[1..]),
        Some(b'+') => (false, &bytes[1..]),
        _ => (false, bytes),
    };
    let mut mantissa: u64 = 0;
    let mut digit_count = 0usize;
    let mut fraction_digits = 0usize;
    let mut seen_point = false;
    for &byte in digits {
        match byte {
            b'0'..=b'9' => {
                if digit_count == 15 {
                    return PlainDecimal::NeedsGeneralParser;
                }
                mantissa = mantissa * 10 + u64::from(byte - b'0');
                digit_count += 1;
                if seen_point {
                    fraction_digits += 1;
                }
            }
            b'.' if !seen_point => seen_point = true,
            b'e' | b'E' => return PlainDecimal::NeedsGeneralParser,
            _ => return PlainDecimal::NotANumber,
        }
    }
    if digit_count == 0 {
        return PlainDecimal::NotANumber;
    }
    let magnitude = mantissa as f64 / EXACT_POWERS_OF_TEN[fraction_digits];
    PlainDecimal::Number(if negative { -magnitude } else { magnitude })
}

/// The number a trimmed cell holds, if it is one.
pub fn parse_number(trimmed: &str) -> Option<f64> {
    let first = *trimmed.as_bytes().first()?;
    if !(first.is_ascii_digit() || first == b'-' || first == b'+' || first == b'.') {
        return None;
    }
    match parse_plain_decimal(trimmed.as_bytes()) {
        PlainDecimal::Number(value) => Some(value),
        PlainDecimal::NotANumber => None,
        PlainDecimal::NeedsGeneralParser => {
            let value: f64 = trimmed.parse().ok()?;
            value.is_finite().then_some(value)
        }
    }
}

/// Whether a trimmed cell is an integer written without a point or exponent.
pub fn is_integer_text(trimmed: &str) -> bool {
    let digits = trimmed
        .strip_prefix('-')
        .or_else(|| trimmed.strip_prefix('+'))
        .unwrap_or(trimmed);
    !digits.is_empty() && digits.bytes().all(|byte| byte.is_ascii_digit())
}

/// A point in time, comparable across the ISO 8601 forms: seconds since 1970-01-01T00:00:00Z
/// (dates and local times are read as UTC) and nanoseconds.
pub type TimeKey = (i64, u32);

fn digits_value(bytes: &[u8]) -> Option<i64> {
    if bytes.is_empty() || !bytes.iter().all(|byte| byte.is_ascii_digit()) {
        return None;
    }
    Some(
        bytes
            .iter()
            .fold(0i64, |value, byte| value * 10 + i64::from(byte - b'0')),
    )
}

fn is_leap_year(year: i64) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

fn days_in_month(year: i64, month: i64) -> i64 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        2 if is_leap_year(year) => 29,
        _ => 28,
    }
}

/// Days from 1970-01-01 to a proleptic Gregorian date (H. Hinnant, "chrono-compatible low-level
/// date algorithms", `days_from_civil`; from memory).
pub fn days_from_civil(year: i64, month: i64, day: i64) -> i64 {
    let year = if month <= 2 { year - 1 } else { year };
    let era = year.div_euclid(400);
    let year_of_era = year - era * 400;
    let month_index = (month + 9) % 12;
    let day_of_year = (153 * month_index + 2) / 5 + day - 1;
    let day_of_era = year_of_era * 365 + year_of_era / 4 - year_of_era / 100 + day_of_year;
    era * 146_097 + day_of_era - 719_468
}

/// Monday of ISO week 1 of `year`: the week holding January 4th (ISO 8601-1:2019 §5.2.4.1).
fn iso_week_one_monday(year: i64) -> i64 {
    let january_fourth = days_from_civil(year, 1, 4);
    // 1970-01-01 was a Thursday: weekday 0 = Monday
    let weekday = (january_fourth + 3).rem_euclid(7);
    january_fourth - weekday
}

fn iso_weeks_in_year(year: i64) -> i64 {
    (iso_week_one_monday(year + 1) - iso_week_one_monday(year)) / 7
}

/// Parse the date part: `YYYY-MM-DD`, `YYYY-MM` (a month: its first day), or the week date
/// `YYYY-Www` / `YYYY-Www-D`. Returns days since 1970-01-01 and the bytes consumed.
fn parse_date_part(bytes: &[u8]) -> Option<(i64, usize)> {
    if bytes.len() < 7 || bytes[4] != b'-' {
        return None;
    }
    let year = digits_value(&bytes[0..4])?;
    if bytes[5] == b'W' {
        let week = digits_value(bytes.get(6..8)?)?;
        if week < 1 || week > iso_weeks_in_year(year) {
            return None;
        }
        let (weekday, consumed) = if bytes.get(8) == Some(&b'-') {
            (digits_value(bytes.get(9..10)?)?, 10)
        } else {
            (1, 8)
        };
        if !(1..=7).contains(&weekday) {
            return None;
        }
        return Some((
            iso_week_one_monday(year) + (week - 1) * 7 + weekday - 1,
            consumed,
        ));
    }
    let month = digits_value(&bytes[5..7])?;
    if !(1..=12).contains(&month) {
        return None;
    }
    if bytes.len() == 7 {
        return Some((days_from_civil(year, month, 1), 7));
    }
    if bytes.len() < 10 || bytes[7] != b'-' {
        return None;
    }
    let day = digits_value(&bytes[8..10])?;
    if day < 1 || day > days_in_month(year, month) {
        return None;
    }
    Some((days_from_civil(year, month, day), 10))
}

/// Parse `HH:MM[:SS[.fraction]]` then an optional `Z` / `±HH:MM` / `±HHMM` / `±HH`.
/// Returns seconds since midnight UTC (may be negative or past a day) and nanoseconds.
fn parse_time_part(bytes: &[u8]) -> Option<(i64, u32)> {
    if bytes.len() < 5 || bytes[2] != b':' {
        return None;
    }
    let hour = digits_value(&bytes[0..2])?;
    let minute = digits_value(&bytes[3..5])?;
    let mut position = 5;
    let mut second = 0;
    let mut nanos: u32 = 0;
    if bytes.get(position) == Some(&b':') {
        second = digits_value(bytes.get(position + 1..position + 3)?)?;
        position += 3;
        if matches!(bytes.get(position), Some(b'.') | Some(b',')) {
            position += 1;
            let start = position;
            while bytes
                .get(position)
                .is_some_and(|byte| byte.is_ascii_digit())
            {
                position += 1;
            }
            let fraction = &bytes[start..position];
            if fraction.is_empty() {
                return None;
            }
            let mut scale = 100_000_000u32;
            for &digit in fraction.iter().take(9) {
                nanos += u32::from(digit - b'0') * scale;
                scale /= 10;
            }
        }
    }
    if hour > 23 || minute > 59 || second > 60 {
        return None;
    }
    let mut seconds = hour * 3600 + minute * 60 + second;
    let zone = &bytes[position..];
    match zone.first() {
        None => {}
        Some(b'Z') | Some(b'z') if zone.len() == 1 => {}
        Some(&sign @ (b'+' | b'-')) => {
            let rest = &zone[1..];
            let (offset_hours, offset_minutes) = match rest.len() {
                2 => (digits_value(rest)?, 0),
                4 => (digits_value(&rest[0..2])?, digits_value(&rest[2..4])?),
                5 if rest[2] == b':' => (digits_value(&rest[0..2])?, digits_value(&rest[3..5])?),
                _ => return None,
            };
            if offset_hours > 23 || offset_minutes > 59 {
                return None;
            }
            let offset = offset_hours * 3600 + offset_minutes * 60;
            // local time = UTC + offset, so UTC = local - offset
            seconds -= if sign == b'+' { offset } else { -offset };
        }
        _ => return None,
    }
    Some((seconds, nanos))
}

/// The instant an ISO 8601 date or date-time stands for, if the trimmed cell is one.
/// Accepted: `2024-03-05`, `2024-03`, `2024-W10`, `2024-W10-2`, `2024-03-05T14:30`,
/// `2024-03-05T14:30:00Z`, `2024-03-05T14:30:00.250+01:00`, a space instead of `T` (RFC 3339 §5.6
/// allows it). A bare year (`2024`) is a number, not a time.
pub fn parse_iso_time(trimmed: &str) -> Option<TimeKey> {
    let bytes = trimmed.as_bytes();
    if bytes.len() < 7 || bytes.len() > 40 || !bytes[0].is_ascii_digit() || bytes[4] != b'-' {
        return None;
    }
    let date_end = bytes
        .iter()
        .position(|&byte| byte == b'T' || byte == b't' || byte == b' ')
        .unwrap_or(bytes.len());
    let (days, consumed) = parse_date_part(&bytes[..date_end])?;
    if consumed != date_end {
        return None;
    }
    let day_seconds = days * 86_400;
    if date_end == bytes.len() {
        return Some((day_seconds, 0));
    }
    if consumed != 10 {
        // a time needs a full calendar date
        return None;
    }
    let (seconds, nanos) = parse_time_part(&bytes[date_end + 1..])?;
    Some((day_seconds + seconds, nanos))
}

/// Ordinal vocabularies, lowest first. Common practice, no source.
const ORDINAL_VOCABULARIES: &[&[&str]] = &[
    &["very low", "low", "medium", "high", "very high"],
    &["low", "mid", "high"],
    &["extra small", "small", "medium", "large", "extra large"],
    &["xs", "s", "m", "l", "xl", "xxl"],
    &[
        "strongly disagree",
        "disagree",
        "neither agree nor disagree",
        "neutral",
        "agree",
        "strongly agree",
    ],
    &["never", "rarely", "sometimes", "often", "always"],
    &[
        "very poor",
        "poor",
        "fair",
        "good",
        "very good",
        "excellent",
    ],
    &["none", "mild", "moderate", "severe"],
    &["cold", "cool", "warm", "hot"],
    &["first", "second", "third", "fourth", "fifth"],
    &["bronze", "silver", "gold", "platinum"],
];

/// The ordinal vocabulary all `distinct_values` come from, if any (at least two distinct
/// values, compared case-insensitively).
pub fn ordinal_vocabulary_of(distinct_values: &[&str]) -> Option<&'static [&'static str]> {
    if distinct_values.len() < 2 {
        return None;
    }
    let lowered: Vec<String> = distinct_values
        .iter()
        .map(|value| trim_cell(value).to_lowercase())
        .collect();
    ORDINAL_VOCABULARIES.iter().copied().find(|vocabulary| {
        lowered
            .iter()
            .all(|value| vocabulary.contains(&value.as_str()))
    })
}

/// Words of a column name, lowercased, split at anything that is not a letter or digit and at
/// lower-to-upper case changes (`bodyMassG` → `body`, `mass`, `g`).
pub fn name_words(name: &str) -> Vec<String> {
    let mut words = Vec::new();
    let mut current = String::new();
    let mut previous_lower = false;
    for character in name.chars() {
        if character.is_alphanumeric() || character == '°' {
            if character.is_uppercase() && previous_lower && !current.is_empty() {
                words.push(std::mem::take(&mut current));
            }
            previous_lower = character.is_lowercase() || character.is_ascii_digit();
            current.extend(character.to_lowercase());
        } else {
            previous_lower = false;
            if !current.is_empty() {
                words.push(std::mem::take(&mut current));
            }
        }
    }
    if !current.is_empty() {
        words.push(current);
    }
    words
}

const INTERVAL_UNIT_WORDS: &[&str] = &[
    "celsius",
    "fahrenheit",
    "degc",
    "degf",
    "°c",
    "°f",
    "centigrade",
];

const RATIO_UNIT_WORDS: &[&str] = &["mm", "cm", "km", "g", "kg", "mg", "ml", "kelvin", "count"];

/// What the numeric values of a column look like, for [`zero_meaning_hint`].
#[derive(Clone, Copy, Debug, Default)]
pub struct NumericShape {
    pub min: f64,
    pub all_integers: bool,
    pub is_year_range: bool,
}

/// Whether zero is meaningful, when the name or the values tell, with the reason in words.
/// - a temperature unit in Celsius or Fahrenheit (`degC`, `°F`, `celsius`, or a name with
///   `temp` ending in `_c` / `_f`) → arbitrary:
///   those scales put zero at a convention (interval scale; Stevens 1946, "On the theory of
///   scales of measurement", Science 103);
/// - a name with the word `year` (or `yr`) over integers all within 1000..=2999 → arbitrary
///   (calendar years are an interval scale, same source);
/// - a ratio unit as the last word (`_mm`, `_kg`, `_count`, ...) over values ≥ 0 → meaningful
///   (common practice, no source);
/// - anything else → unknown (counts and amounts are not guessed).
pub fn zero_meaning_hint(
    name: &str,
    numeric: Option<NumericShape>,
) -> Option<(ZeroMeaning, String)> {
    let words = name_words(name);
    let lowered_name = name.to_lowercase();
    if let Some(word) = words
        .iter()
        .find(|word| INTERVAL_UNIT_WORDS.contains(&word.as_str()))
        .cloned()
        .or_else(|| {
            ["°c", "°f", "degc", "degf", "deg_c", "deg_f"]
                .iter()
                .find(|unit| lowered_name.contains(*unit))
                .map(|unit| unit.to_string())
        })
    {
        return Some((
            ZeroMeaning::Arbitrary,
            format!("the name carries the unit `{word}`, a temperature scale whose zero is a convention"),
        ));
    }
    let names_a_temperature = words
        .iter()
        .any(|word| word == "temp" || word == "temperature");
    if names_a_temperature {
        if let Some(unit @ ("c" | "f")) = words.last().map(String::as_str) {
            return Some((
                ZeroMeaning::Arbitrary,
                format!(
                    "a temperature in degrees `{}`, a scale whose zero is a convention",
                    unit.to_uppercase()
                ),
            ));
        }
    }
    let numeric = numeric?;
    let names_a_year = words
        .iter()
        .any(|word| word == "year" || word == "yr" || word == "years");
    if names_a_year && numeric.all_integers && numeric.is_year_range {
        return Some((
            ZeroMeaning::Arbitrary,
            "calendar years (integers between 1000 and 2999 in a column named like a year) have no natural zero".to_string(),
        ));
    }
    if let Some(last) = words.last() {
        if RATIO_UNIT_WORDS.contains(&last.as_str()) && numeric.min >= 0.0 {
            return Some((
                ZeroMeaning::Meaningful,
                format!("the name ends in the unit `{last}` and no value is negative, so zero means none"),
            ));
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn missing_tokens_are_case_sensitive() {
        assert!(is_missing_token(""));
        assert!(is_missing_token("NA"));
        assert!(is_missing_token("null"));
        assert!(!is_missing_token("Na"));
        assert!(!is_missing_token("none"));
    }

    #[test]
    fn numbers_exclude_infinities_and_words() {
        assert_eq!(parse_number("42"), Some(42.0));
        assert_eq!(parse_number("-3.5e2"), Some(-350.0));
        assert_eq!(parse_number(".5"), Some(0.5));
        assert_eq!(parse_number("inf"), None);
        assert_eq!(parse_number("-inf"), None);
        assert_eq!(parse_number("NaN"), None);
        assert_eq!(parse_number("1e999"), None);
        assert_eq!(parse_number("12abc"), None);
        assert_eq!(parse_number("2024-03-05"), None);
        assert_eq!(parse_number("-"), None);
        assert_eq!(parse_number("."), None);
        assert_eq!(parse_number("1.2.3"), None);
    }

    #[test]
    fn the_plain_decimal_path_agrees_with_the_general_parser() {
        for text in [
            "0",
            "-0",
            "42",
            "39.1",
            "0.1",
            "5.843333",
            "-273.15",
            "123456789012345",
            "0.00000000000001",
            "99999.99999",
            "+7.5",
            ".5",
            "5.",
        ] {
            let general: f64 = text.parse().unwrap_or(f64::NAN);
            assert_eq!(
                parse_plain_decimal(text.as_bytes()),
                PlainDecimal::Number(general),
                "{text}"
            );
        }
        // more than 15 digits and exponents go to the general parser
        assert_eq!(
            parse_plain_decimal(b"1234567890123456"),
            PlainDecimal::NeedsGeneralParser
        );
        assert_eq!(
            parse_plain_decimal(b"1e5"),
            PlainDecimal::NeedsGeneralParser
        );
        assert_eq!(parse_plain_decimal(b"2024-03-05"), PlainDecimal::NotANumber);
        assert_eq!(parse_number("1234567890123456"), Some(1234567890123456.0));
    }

    #[test]
    fn days_from_civil_matches_known_dates() {
        // 2000-03-01 is day 11017 after 1970-01-01 (from memory; 30 years + 8 leap days + 60)
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        assert_eq!(days_from_civil(1969, 12, 31), -1);
    }

    #[test]
    fn name_words_split_case_and_separators() {
        assert_eq!(name_words("body_mass_g"), vec!["body", "mass", "g"]);
        assert_eq!(name_words("tempDegC"), vec!["temp", "deg", "c"]);
        assert_eq!(name_words("Temp (°C)"), vec!["temp", "°c"]);
    }
}
