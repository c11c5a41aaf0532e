//! Tick positions and labels for numeric axes by the extended Wilkinson search of Talbot, Lin and
//! Hanrahan (2010), and calendar-aware ticks for time axes.
//!
//! Talbot, J., Lin, S. & Hanrahan, P. (2010). An Extension of Wilkinson's Algorithm for
//! Positioning Tick Labels on Axes. IEEE Transactions on Visualization and Computer Graphics
//! 16(6), 1036–1043.
//!
//! A labelling is a sequence `lmin, lmin + step, ..., lmax` with `step = j · q · 10^z`, where `q`
//! comes from the nice-number list [`NICE_NUMBERS`] and `j` is a skip factor (label every `j`-th
//! multiple of `q · 10^z`). Each candidate is scored as the weighted sum ([`WEIGHTS`]) of
//!
//! - simplicity `1 − (i − 1)/(n − 1) − j + v` (`i` the 1-based index of `q` in the list, `n` the
//!   list's length, `v` = 1 when zero is one of the labels),
//! - coverage `1 − ½ ((dmax − lmax)² + (dmin − lmin)²) / (0.1 (dmax − dmin))²`,
//! - density `2 − max(r / rt, rt / r)` with `r = (k − 1)/(lmax − lmin)` the label density and
//!   `rt = (m − 1)/(max(lmax, dmax) − min(dmin, lmin))` the target density for `m` labels,
//! - legibility, simplified here (see [`legibility`]).
//!
//! The search enumerates `j`, `q`, `k` (number of labels) and `z` in increasing order and stops
//! each loop as soon as an upper bound of the score it could still reach falls below the best
//! score found, as in the paper. The formulas, the list and the weights are written from memory
//! of the paper (and of the authors' reference code); the worked cases in the tests recompute the
//! scores by hand.

/// The nice numbers `Q`, in order of preference (Talbot, Lin & Hanrahan 2010; from memory).
pub const NICE_NUMBERS: [f64; 6] = [1.0, 5.0, 2.0, 2.5, 4.0, 3.0];

/// Weights of simplicity, coverage, density and legibility (Talbot, Lin & Hanrahan 2010; the
/// paper's defaults, from memory).
pub const WEIGHTS: [f64; 4] = [0.25, 0.2, 0.5, 0.05];

/// The default number of labels the density term aims at (common practice, no source).
pub const DEFAULT_TARGET_COUNT: usize = 5;

/// Tolerance for "zero is a label" and for snapping label values (from the authors' code).
const EPSILON: f64 = 1e-10;

/// Safety caps on the search loops. The score bounds end the loops long before these in
/// practice; the caps only make sure that the search ends on any input.
const MAX_SKIP: usize = 10;
const MAX_COUNT: usize = 60;
const MAX_EXPONENT_STEPS: usize = 40;
/// The most candidates scored in one search. Only reached when the overlap term rules out
/// every labelling (the bounds cannot prune while no labelling fits).
const MAX_CANDIDATES: usize = 50_000;

/// Options of the numeric tick search.
#[derive(Clone, Copy, Debug)]
pub struct TickOptions {
    /// The number of labels the density term aims at (`m`).
    pub target_count: usize,
    /// When true, only labellings that cover the data (`lmin ≤ dmin`, `lmax ≥ dmax`) are kept:
    /// what a nice domain needs.
    pub loose: bool,
}

impl Default for TickOptions {
    fn default() -> Self {
        TickOptions {
            target_count: DEFAULT_TARGET_COUNT,
            loose: false,
        }
    }
}

/// The room the labels have, for the overlap part of legibility: the axis length in pixels and
/// a function giving the extent of a label along the axis in pixels.
pub struct LabelRoom<'a> {
    pub axis_length: f64,
    pub label_extent: &'a dyn Fn(&str) -> f64,
    /// The smallest gap between two neighbouring labels, in pixels.
    pub min_gap: f64,
}

/// A chosen labelling.
#[derive(Clone, Debug, PartialEq)]
pub struct Ticks {
    /// The tick values, increasing.
    pub values: Vec<f64>,
    /// The label of each tick.
    pub labels: Vec<String>,
    /// The step between ticks (`j · q · 10^z`).
    pub step: f64,
    /// The nice number `q` the step is built on.
    pub nice: f64,
    /// The skip factor `j`.
    pub skip: usize,
    /// The power of ten `z`.
    pub exponent: i32,
    /// The total score of the labelling.
    pub score: f64,
}

impl Ticks {
    pub fn first(&self) -> Option<f64> {
        self.values.first().copied()
    }

    pub fn last(&self) -> Option<f64> {
        self.values.last().copied()
    }
}

/// Simplicity of a labelling (see the module notes).
pub fn simplicity(q_index: usize, skip: usize, lmin: f64, lmax: f64, step: f64) -> f64 {
    let n = NICE_NUMBERS.len() as f64;
    let includes_zero = lmin <= 0.0 && lmax >= 0.0 && {
        let remainder = lmin.rem_euclid(step);
        remainder < EPSILON * step.max(1.0) || step - remainder < EPSILON * step.max(1.0)
    };
    1.0 - q_index as f64 / (n - 1.0) - skip as f64 + if includes_zero { 1.0 } else { 0.0 }
}

/// The largest simplicity any labelling with this `q` and `j` can reach.
pub fn simplicity_max(q_index: usize, skip: usize) -> f64 {
    let n = NICE_NUMBERS.len() as f64;
    1.0 - q_index as f64 / (n - 1.0) - skip as f64 + 1.0
}

/// Coverage of the data range `[dmin, dmax]` by the labels `[lmin, lmax]`.
pub fn coverage(dmin: f64, dmax: f64, lmin: f64, lmax: f64) -> f64 {
    let range = dmax - dmin;
    1.0 - 0.5 * ((dmax - lmax).powi(2) + (dmin - lmin).powi(2)) / (0.1 * range).powi(2)
}

/// The largest coverage a labelling spanning `span` can reach.
pub fn coverage_max(dmin: f64, dmax: f64, span: f64) -> f64 {
    let range = dmax - dmin;
    if span > range {
        let half = (span - range) / 2.0;
        1.0 - 0.5 * (2.0 * half * half) / (0.1 * range).powi(2)
    } else {
        1.0
    }
}

/// Density of `count` labels over `[lmin, lmax]` against the target of `target` labels.
pub fn density(count: usize, target: usize, dmin: f64, dmax: f64, lmin: f64, lmax: f64) -> f64 {
    let r = (count as f64 - 1.0) / (lmax - lmin);
    let rt = (target as f64 - 1.0) / (lmax.max(dmax) - dmin.min(lmin));
    2.0 - (r / rt).max(rt / r)
}

/// The largest density `count` labels can reach.
pub fn density_max(count: usize, target: usize) -> f64 {
    if count >= target {
        2.0 - (count as f64 - 1.0) / (target as f64 - 1.0)
    } else {
        1.0
    }
}

/// Legibility, simplified: the paper scores the label format (decimal, factored, scientific),
/// font size, orientation and overlap. Here every label uses one format (plain decimals, or
/// scientific notation past [`plain_decimals_fit`]), one size and horizontal text, so those terms
/// are constant and scored 1; only the overlap term stays: −∞ when two neighbouring labels
/// would be closer than `min_gap` (the paper also rules overlapping labels out), else 1. Without
/// a [`LabelRoom`] legibility is 1.
pub fn legibility(
    values: &[f64],
    labels: &[String],
    lmin: f64,
    lmax: f64,
    room: Option<&LabelRoom>,
) -> f64 {
    let Some(room) = room else {
        return 1.0;
    };
    if values.len() < 2 || lmax <= lmin {
        return 1.0;
    }
    let scale = room.axis_length / (lmax - lmin);
    for index in 1..values.len() {
        let centre_distance = (values[index] - values[index - 1]) * scale;
        let half_widths =
            ((room.label_extent)(&labels[index - 1]) + (room.label_extent)(&labels[index])) / 2.0;
        if centre_distance - half_widths < room.min_gap {
            return f64::NEG_INFINITY;
        }
    }
    1.0
}

/// Whether labels with this step's exponent are written as plain decimals (otherwise in
/// scientific notation). Common practice, no source.
pub fn plain_decimals_fit(exponent: i32, largest_magnitude: f64) -> bool {
    exponent >= -6 && largest_magnitude < 1e15
}

/// Why no ticks can be computed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TickError {
    /// An end of the range is NaN or infinite.
    NotFinite,
}

impl std::fmt::Display for TickError {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            TickError::NotFinite => write!(
                formatter,
                "the range has an end that is not a finite number"
            ),
        }
    }
}

impl std::error::Error for TickError {}

/// Ticks for the data range `[low, high]` (in either order) by the extended Wilkinson search.
pub fn extended_ticks(low: f64, high: f64, options: TickOptions) -> Result<Ticks, TickError> {
    extended_ticks_with_room(low, high, options, None)
}

/// As [`extended_ticks`], with label overlap checked against the room the labels have.
pub fn extended_ticks_with_room(
    low: f64,
    high: f64,
    options: TickOptions,
    room: Option<&LabelRoom>,
) -> Result<Ticks, TickError> {
    if !low.is_finite() || !high.is_finite() {
        return Err(TickError::NotFinite);
    }
    let (mut dmin, mut dmax) = if low <= high {
        (low, high)
    } else {
        (high, low)
    };
    if dmax - dmin < f64::EPSILON * dmax.abs().max(dmin.abs()).max(f64::MIN_POSITIVE) * 4.0 {
        // One value: widen to a unit around it (or a tenth of its size), common practice.
        let pad = if dmin == 0.0 { 1.0 } else { dmin.abs() * 0.1 };
        dmin -= pad;
        dmax += pad;
    }
    let target = options.target_count.max(2);
    let [w_simplicity, w_coverage, w_density, w_legibility] = WEIGHTS;
    let mut best_score = f64::NEG_INFINITY;
    let mut best: Option<Ticks> = None;
    // With a room, `count` labels need at least `count − 1` gaps of `min_gap`.
    let max_count = match room {
        Some(room) if room.min_gap > 0.0 && room.axis_length.is_finite() => {
            ((room.axis_length / room.min_gap).floor() as usize + 1).clamp(2, MAX_COUNT)
        }
        _ => MAX_COUNT,
    };
    let mut scored = 0usize;

    'skips: for skip in 1..=MAX_SKIP {
        for (q_index, &q) in NICE_NUMBERS.iter().enumerate() {
            let sm = simplicity_max(q_index, skip);
            if w_simplicity * sm + w_coverage + w_density + w_legibility < best_score {
                break 'skips;
            }
            for count in 2..=max_count {
                let dm = density_max(count, target);
                if w_simplicity * sm + w_coverage + w_density * dm + w_legibility < best_score {
                    break;
                }
                let delta = (dmax - dmin) / (count as f64 + 1.0) / skip as f64 / q;
                let mut exponent = delta.log10().ceil() as i32;
                for _ in 0..MAX_EXPONENT_STEPS {
                    let unit = q * 10f64.powi(exponent);
                    let step = skip as f64 * unit;
                    let cm = coverage_max(dmin, dmax, step * (count as f64 - 1.0));
                    if w_simplicity * sm + w_coverage * cm + w_density * dm + w_legibility
                        < best_score
                    {
                        break;
                    }
                    // Label starts are multiples of `unit`, so that every label is too.
                    let min_start =
                        (dmax / step).floor() * skip as f64 - (count as f64 - 1.0) * skip as f64;
                    let max_start = (dmin / step).ceil() * skip as f64;
                    if min_start <= max_start {
                        let mut start = min_start;
                        while start <= max_start {
                            let lmin = start * unit;
                            let lmax = lmin + step * (count as f64 - 1.0);
                            start += 1.0;
                            if options.loose && (lmin > dmin || lmax < dmax) {
                                continue;
                            }
                            let s = simplicity(q_index, skip, lmin, lmax, step);
                            let c = coverage(dmin, dmax, lmin, lmax);
                            let g = density(count, target, dmin, dmax, lmin, lmax);
                            let partial = w_simplicity * s + w_coverage * c + w_density * g;
                            if partial + w_legibility <= best_score {
                                continue;
                            }
                            scored += 1;
                            if scored > MAX_CANDIDATES {
                                break 'skips;
                            }
                            let values = label_values(start - 1.0, skip, count, q, exponent);
                            let labels = format_labels(&values, exponent, q, skip);
                            let l =
                                legibility(&values, &labels, lmin.min(dmin), lmax.max(dmax), room);
                            let score = partial + w_legibility * l;
                            if score > best_score {
                                best_score = score;
                                best = Some(Ticks {
                                    values,
                                    labels,
                                    step,
                                    nice: q,
                                    skip,
                                    exponent,
                                    score,
                                });
                            }
                        }
                    }
                    exponent += 1;
                }
            }
        }
    }
    // The search always finds a labelling (count 2 with a step that spans the range fits
    // everything); if the overlap term ruled all out, fall back to the two ends.
    Ok(best.unwrap_or_else(|| {
        let values = vec![dmin, dmax];
        let labels = values.iter().map(|value| format_general(*value)).collect();
        Ticks {
            values,
            labels,
            step: dmax - dmin,
            nice: 1.0,
            skip: 1,
            exponent: 0,
            score: f64::NEG_INFINITY,
        }
    }))
}

/// Label values `(start + i·skip) · q · 10^z` for `i` in `0..count`, computed from integers so
/// that `0.1 + 0.2` noise does not creep in, and snapped to the step's decimals.
fn label_values(start: f64, skip: usize, count: usize, q: f64, exponent: i32) -> Vec<f64> {
    // q·10^z = (10q)·10^(z−1); 10q is an integer for every nice number.
    let q_tenths = (q * 10.0).round();
    let decimals = decimals_for(exponent, q);
    (0..count)
        .map(|index| {
            let multiple = start + (index * skip) as f64;
            let value = if exponent > 0 {
                multiple * q_tenths * 10f64.powi(exponent - 1)
            } else {
                multiple * q_tenths / 10f64.powi(1 - exponent)
            };
            if decimals <= 15 {
                let factor = 10f64.powi(decimals as i32);
                let snapped = (value * factor).round() / factor;
                if snapped.is_finite() {
                    return if snapped == 0.0 { 0.0 } else { snapped };
                }
            }
            value
        })
        .collect()
}

/// Decimal places that write every multiple of `q · 10^z` exactly.
fn decimals_for(exponent: i32, q: f64) -> usize {
    let q_decimals = if (q * 10.0).round() % 10.0 != 0.0 {
        1
    } else {
        0
    };
    (q_decimals - exponent).max(0) as usize
}

fn format_labels(values: &[f64], exponent: i32, q: f64, skip: usize) -> Vec<String> {
    let largest = values.iter().fold(0f64, |acc, value| acc.max(value.abs()));
    if plain_decimals_fit(exponent, largest) {
        let decimals = decimals_for(exponent, q);
        values
            .iter()
            .map(|value| format!("{value:.decimals$}"))
            .collect()
    } else {
        // Scientific notation with the mantissa digits down to the step's last digit.
        let _ = skip;
        let leading = if largest > 0.0 {
            largest.log10().floor() as i32
        } else {
            exponent
        };
        let digits = (leading - exponent + decimals_for(0, q) as i32).clamp(0, 16) as usize;
        values
            .iter()
            .map(|value| format_scientific(*value, digits))
            .collect()
    }
}

fn format_scientific(value: f64, digits: usize) -> String {
    if value == 0.0 {
        return "0".to_string();
    }
    let text = format!("{value:.digits$e}");
    // Trim trailing zeros in the mantissa: 2.50e3 → 2.5e3.
    match text.split_once('e') {
        Some((mantissa, power)) if mantissa.contains('.') => {
            let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
            format!("{mantissa}e{power}")
        }
        _ => text,
    }
}

fn format_general(value: f64) -> String {
    if value.abs() >= 1e15 || (value != 0.0 && value.abs() < 1e-6) {
        format_scientific(value, 6)
    } else {
        let text = format!("{value:.6}");
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    }
}

// ---------------------------------------------------------------------------------------------
// Calendar ticks
// ---------------------------------------------------------------------------------------------

/// A calendar unit a time step is counted in.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum CalendarUnit {
    Second,
    Minute,
    Hour,
    Day,
    Month,
    Year,
}

/// A calendar step: `count` units.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct CalendarStep {
    pub unit: CalendarUnit,
    pub count: i64,
}

/// The calendar steps tried, shortest first: multiples that divide the next unit evenly
/// (seconds and minutes by 1, 2, 5, 10, 15, 30; hours by 1, 3, 6, 12; days by 1, 2 and 7 from
/// the first of the month ... ). Common practice, no source.
pub const CALENDAR_STEPS: [CalendarStep; 27] = {
    use CalendarUnit::*;
    const fn step(unit: CalendarUnit, count: i64) -> CalendarStep {
        CalendarStep { unit, count }
    }
    [
        step(Second, 1),
        step(Second, 2),
        step(Second, 5),
        step(Second, 10),
        step(Second, 15),
        step(Second, 30),
        step(Minute, 1),
        step(Minute, 2),
        step(Minute, 5),
        step(Minute, 10),
        step(Minute, 15),
        step(Minute, 30),
        step(Hour, 1),
        step(Hour, 3),
        step(Hour, 6),
        step(Hour, 12),
        step(Day, 1),
        step(Day, 2),
        step(Day, 7),
        step(Month, 1),
        step(Month, 2),
        step(Month, 3),
        step(Month, 6),
        step(Year, 1),
        step(Year, 2),
        step(Year, 5),
        step(Year, 10),
    ]
};

impl CalendarStep {
    /// The step's nominal length in seconds (months as 30.44 days, years as 365.25), for
    /// choosing a step; the ticks themselves follow the calendar.
    pub fn nominal_seconds(self) -> f64 {
        let unit = match self.unit {
            CalendarUnit::Second => 1.0,
            CalendarUnit::Minute => 60.0,
            CalendarUnit::Hour => 3600.0,
            CalendarUnit::Day => 86_400.0,
            CalendarUnit::Month => 30.436_875 * 86_400.0,
            CalendarUnit::Year => 365.2425 * 86_400.0,
        };
        unit * self.count as f64
    }
}

/// Calendar ticks: Unix seconds (UTC) and labels.
#[derive(Clone, Debug, PartialEq)]
pub struct CalendarTicks {
    pub seconds: Vec<i64>,
    pub labels: Vec<String>,
    pub step: CalendarStep,
}

/// The year limits the calendar code handles (proleptic Gregorian, years 1..=9999 as ISO 8601
/// writes them with four digits).
pub const MIN_YEAR: i64 = 1;
pub const MAX_YEAR: i64 = 9999;

/// Days since 1970-01-01 of a proleptic Gregorian date (Hinnant's `days_from_civil`,
/// "chrono-Compatible Low-Level Date Algorithms"; from memory).
pub fn days_from_civil(year: i64, month: u32, day: u32) -> i64 {
    let year = if month <= 2 { year - 1 } else { year };
    let era = year.div_euclid(400);
    let year_of_era = year - era * 400;
    let month = i64::from(month);
    let day_of_year =
        (153 * (if month > 2 { month - 3 } else { month + 9 }) + 2) / 5 + i64::from(day) - 1;
    let day_of_era = year_of_era * 365 + year_of_era / 4 - year_of_era / 100 + day_of_year;
    era * 146_097 + day_of_era - 719_468
}

/// The date of a day count since 1970-01-01 (Hinnant's `civil_from_days`; from memory).
pub fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let day_of_era = z - era * 146_097;
    let year_of_era =
        (day_of_era - day_of_era / 1460 + day_of_era / 36_524 - day_of_era / 146_096) / 365;
    let day_of_year = day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);
    let mp = (5 * day_of_year + 2) / 153;
    let day = (day_of_year - (153 * mp + 2) / 5 + 1) as u32;
    let month = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let year = year_of_era + era * 400 + if month <= 2 { 1 } else { 0 };
    (year, month, day)
}

fn days_in_month(year: i64, month: u32) -> u32 {
    match month {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        _ => {
            if (year % 4 == 0 && year % 100 != 0) || year % 400 == 0 {
                29
            } else {
                28
            }
        }
    }
}

/// Parse an ISO 8601 date or date-time in UTC: `YYYY-MM-DD`, `YYYY-MM-DDTHH:MM`,
/// `YYYY-MM-DDTHH:MM:SS` (a space may stand for `T`, a trailing `Z` or `+00:00` is accepted;
/// other offsets are applied). Fractions of a second are dropped. `None` when the text is not
/// such a date.
pub fn parse_iso_seconds(text: &str) -> Option<i64> {
    let text = text.trim();
    let bytes = text.as_bytes();
    let number = |range: std::ops::Range<usize>| -> Option<i64> {
        let part = text.get(range)?;
        if part.is_empty() || !part.bytes().all(|byte| byte.is_ascii_digit()) {
            return None;
        }
        part.parse().ok()
    };
    if bytes.len() < 10 || bytes[4] != b'-' || bytes[7] != b'-' {
        return None;
    }
    let year = number(0..4)?;
    let month = u32::try_from(number(5..7)?).ok()?;
    let day = u32::try_from(number(8..10)?).ok()?;
    if !(1..=12).contains(&month) || day == 0 || day > days_in_month(year, month) {
        return None;
    }
    let mut seconds = days_from_civil(year, month, day) * 86_400;
    let mut rest = &text[10..];
    if rest.is_empty() {
        return Some(seconds);
    }
    if !(rest.starts_with('T') || rest.starts_with('t') || rest.starts_with(' ')) {
        return None;
    }
    rest = &rest[1..];
    let time_end = rest
        .find(|character: char| {
            character == 'Z' || character == 'z' || character == '+' || character == '-'
        })
        .unwrap_or(rest.len());
    let (time, zone) = rest.split_at(time_end);
    let mut parts = time.split(':');
    let hour: i64 = parse_digits(parts.next()?)?;
    let minute: i64 = parse_digits(parts.next()?)?;
    let second: i64 = match parts.next() {
        Some(part) => parse_digits(part.split('.').next()?)?,
        None => 0,
    };
    if parts.next().is_some() || hour > 23 || minute > 59 || second > 60 {
        return None;
    }
    seconds += hour * 3600 + minute * 60 + second;
    match zone {
        "" | "Z" | "z" => {}
        _ => {
            let sign = if zone.starts_with('-') { 1 } else { -1 };
            let offset = &zone[1..];
            let (hours, minutes) = match offset.split_once(':') {
                Some((hours, minutes)) => (parse_digits(hours)?, parse_digits(minutes)?),
                None if offset.len() == 4 => {
                    (parse_digits(&offset[..2])?, parse_digits(&offset[2..])?)
                }
                None => (parse_digits(offset)?, 0),
            };
            if hours > 23 || minutes > 59 {
                return None;
            }
            seconds += sign * (hours * 3600 + minutes * 60);
        }
    }
    Some(seconds)
}

fn parse_digits(text: &str) -> Option<i64> {
    if text.is_empty()
        || text.len() > 2 && text.len() != 4
        || !text.bytes().all(|byte| byte.is_ascii_digit())
    {
        return None;
    }
    text.parse().ok()
}

/// The broken-down UTC time of Unix seconds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct CivilTime {
    pub year: i64,
    pub month: u32,
    pub day: u32,
    pub hour: u32,
    pub minute: u32,
    pub second: u32,
}

impl CivilTime {
    pub fn from_seconds(seconds: i64) -> CivilTime {
        let days = seconds.div_euclid(86_400);
        let of_day = seconds.rem_euclid(86_400);
        let (year, month, day) = civil_from_days(days);
        CivilTime {
            year,
            month,
            day,
            hour: (of_day / 3600) as u32,
            minute: (of_day % 3600 / 60) as u32,
            second: (of_day % 60) as u32,
        }
    }

    pub fn to_seconds(self) -> i64 {
        days_from_civil(self.year, self.month, self.day) * 86_400
            + i64::from(self.hour) * 3600
            + i64::from(self.minute) * 60
            + i64::from(self.second)
    }
}

/// The seconds of the first tick at or after `seconds` for `step`, counted from the start of the
/// next larger unit (days by 7 from the 1st of the month: the 1st, 8th, 15th, 22nd, 29th).
fn ceil_to_step(seconds: i64, step: CalendarStep) -> i64 {
    let time = CivilTime::from_seconds(seconds);
    let candidate = floor_to_step(time, step);
    let dropped_tail = step.unit == CalendarUnit::Day
        && step.count > 1
        && i64::from(days_in_month(candidate.year, candidate.month)) - i64::from(candidate.day) + 1
            < step.count;
    if candidate.to_seconds() >= seconds && !dropped_tail {
        candidate.to_seconds()
    } else {
        advance(candidate, step).to_seconds()
    }
}

fn floor_to_step(time: CivilTime, step: CalendarStep) -> CivilTime {
    let count = step.count;
    let floor = |value: i64, base: i64| value - (value - base).rem_euclid(count);
    let mut result = time;
    match step.unit {
        CalendarUnit::Second => result.second = floor(i64::from(time.second), 0) as u32,
        CalendarUnit::Minute => {
            result.second = 0;
            result.minute = floor(i64::from(time.minute), 0) as u32;
        }
        CalendarUnit::Hour => {
            result.second = 0;
            result.minute = 0;
            result.hour = floor(i64::from(time.hour), 0) as u32;
        }
        CalendarUnit::Day => {
            result.second = 0;
            result.minute = 0;
            result.hour = 0;
            result.day = floor(i64::from(time.day), 1) as u32;
        }
        CalendarUnit::Month => {
            result = CivilTime {
                day: 1,
                hour: 0,
                minute: 0,
                second: 0,
                ..time
            };
            result.month = floor(i64::from(time.month), 1) as u32;
        }
        CalendarUnit::Year => {
            result = CivilTime {
                month: 1,
                day: 1,
                hour: 0,
                minute: 0,
                second: 0,
                ..time
            };
            result.year = floor(time.year, 0);
        }
    }
    result
}

/// The next tick after a tick `time` (which is on the step's grid).
fn advance(time: CivilTime, step: CalendarStep) -> CivilTime {
    let count = step.count;
    match step.unit {
        CalendarUnit::Second | CalendarUnit::Minute | CalendarUnit::Hour => {
            let seconds = match step.unit {
                CalendarUnit::Second => count,
                CalendarUnit::Minute => count * 60,
                _ => count * 3600,
            };
            let next = CivilTime::from_seconds(time.to_seconds() + seconds);
            // Stay on the grid of the larger unit (a 5-second grid restarts at each minute).
            floor_to_step(next, step)
        }
        CalendarUnit::Day => {
            let next_day = i64::from(time.day) + count;
            let month_length = i64::from(days_in_month(time.year, time.month));
            // Day grids restart on the 1st; a tick whose interval would be cut short by the
            // month's end is dropped (by 7: the 1st, 8th, 15th and 22nd), so that no two ticks
            // are closer than one step.
            if next_day > month_length || (count > 1 && month_length - next_day + 1 < count) {
                let (year, month) = if time.month == 12 {
                    (time.year + 1, 1)
                } else {
                    (time.year, time.month + 1)
                };
                CivilTime {
                    year,
                    month,
                    day: 1,
                    ..time
                }
            } else {
                CivilTime {
                    day: next_day as u32,
                    ..time
                }
            }
        }
        CalendarUnit::Month => {
            let months = time.year * 12 + i64::from(time.month) - 1 + count;
            CivilTime {
                year: months.div_euclid(12),
                month: (months.rem_euclid(12) + 1) as u32,
                ..time
            }
        }
        CalendarUnit::Year => CivilTime {
            year: time.year + count,
            ..time
        },
    }
}

/// Calendar ticks over `[low, high]` in Unix seconds (UTC): the calendar step whose number of
/// ticks comes closest to `target_count` (on a tie the longer step), ticks on that step's grid
/// inside the range, labelled with every field from the largest one that changes between the
/// ticks down to the step's unit, in ISO 8601 order (`2024`, `2024-03`, `2024-03-15`,
/// `03-15 14:00`, `14:05:30` ...), so labels are distinct. Past the longest step, years are
/// ticked by the numeric search on year numbers. Ranges outside years 1..=9999 give no ticks.
pub fn calendar_ticks(low: i64, high: i64, target_count: usize) -> CalendarTicks {
    let (low, high) = if low <= high {
        (low, high)
    } else {
        (high, low)
    };
    let min_seconds = days_from_civil(MIN_YEAR, 1, 1) * 86_400;
    let max_seconds = days_from_civil(MAX_YEAR, 12, 31) * 86_400;
    let target = target_count.max(2) as f64;
    if low < min_seconds || high > max_seconds {
        let step = CALENDAR_STEPS[0];
        return CalendarTicks {
            seconds: Vec::new(),
            labels: Vec::new(),
            step,
        };
    }
    let span = (high - low) as f64;
    let mut chosen = CALENDAR_STEPS[0];
    let mut best_gap = f64::INFINITY;
    for step in CALENDAR_STEPS {
        let count = span / step.nominal_seconds() + 1.0;
        let gap = (count - target).abs();
        if gap <= best_gap {
            best_gap = gap;
            chosen = step;
        }
    }
    if low < min_seconds || high > max_seconds {
        return CalendarTicks {
            seconds: Vec::new(),
            labels: Vec::new(),
            step: chosen,
        };
    }
    let longest = CALENDAR_STEPS[CALENDAR_STEPS.len() - 1];
    if span / longest.nominal_seconds() + 1.0 > target * 1.5 {
        // Centuries and more: nice numbers of years.
        let low_year = CivilTime::from_seconds(low).year as f64;
        let high_year = CivilTime::from_seconds(high).year as f64;
        let years = extended_ticks(
            low_year,
            high_year,
            TickOptions {
                target_count,
                loose: false,
            },
        );
        if let Ok(years) = years {
            let count = years.step.round().max(1.0) as i64;
            let step = CalendarStep {
                unit: CalendarUnit::Year,
                count,
            };
            let seconds: Vec<i64> = years
                .values
                .iter()
                .map(|year| days_from_civil(year.round() as i64, 1, 1) * 86_400)
                .filter(|seconds| (low..=high).contains(seconds))
                .collect();
            let labels = label_calendar(&seconds, step);
            return CalendarTicks {
                seconds,
                labels,
                step,
            };
        }
    }
    let mut seconds = Vec::new();
    let mut tick = ceil_to_step(low, chosen);
    while tick <= high && seconds.len() < 10_000 {
        seconds.push(tick);
        let next = advance(CivilTime::from_seconds(tick), chosen).to_seconds();
        if next <= tick {
            break;
        }
        tick = next;
    }
    let labels = label_calendar(&seconds, chosen);
    CalendarTicks {
        seconds,
        labels,
        step: chosen,
    }
}

/// Labels for calendar ticks (see [`calendar_ticks`]).
pub fn label_calendar(seconds: &[i64], step: CalendarStep) -> Vec<String> {
    let times: Vec<CivilTime> = seconds
        .iter()
        .map(|seconds| CivilTime::from_seconds(*seconds))
        .collect();
    let Some(first) = times.first() else {
        return Vec::new();
    };
    let year_changes = times.iter().any(|time| time.year != first.year);
    let month_changes = year_changes || times.iter().any(|time| time.month != first.month);
    let day_changes = month_changes || times.iter().any(|time| time.day != first.day);
    times
        .iter()
        .map(|time| match step.unit {
            CalendarUnit::Year => format!("{:04}", time.year),
            CalendarUnit::Month => format!("{:04}-{:02}", time.year, time.month),
            CalendarUnit::Day => {
                if year_changes {
                    format!("{:04}-{:02}-{:02}", time.year, time.month, time.day)
                } else {
                    format!("{:02}-{:02}", time.month, time.day)
                }
            }
            CalendarUnit::Hour | CalendarUnit::Minute | CalendarUnit::Second => {
                let clock = if step.unit == CalendarUnit::Second {
                    format!("{:02}:{:02}:{:02}", time.hour, time.minute, time.second)
                } else {
                    format!("{:02}:{:02}", time.hour, time.minute)
                };
                if year_changes {
                    format!("{:04}-{:02}-{:02} {clock}", time.year, time.month, time.day)
                } else if day_changes {
                    format!("{:02}-{:02} {clock}", time.month, time.day)
                } else {
                    clock
                }
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(actual: f64, expected: f64) -> bool {
        (actual - expected).abs() < 1e-4
    }

    fn score(
        q_index: usize,
        skip: usize,
        count: usize,
        dmin: f64,
        dmax: f64,
        lmin: f64,
        lmax: f64,
    ) -> f64 {
        let step = (lmax - lmin) / (count as f64 - 1.0);
        WEIGHTS[0] * simplicity(q_index, skip, lmin, lmax, step)
            + WEIGHTS[1] * coverage(dmin, dmax, lmin, lmax)
            + WEIGHTS[2] * density(count, 5, dmin, dmax, lmin, lmax)
            + WEIGHTS[3]
    }

    // Worked case 1, data [0, 10], m = 5, scores by hand with the formulas of Talbot, Lin &
    // Hanrahan (2010) (weights 0.25, 0.2, 0.5, 0.05; from memory):
    // - 0, 2.5, 5, 7.5, 10 (q = 2.5, i = 4): simplicity 1 − 3/5 − 1 + 1 = 0.4, coverage 1,
    //   density r = 4/10 = rt → 1; score 0.1 + 0.2 + 0.5 + 0.05 = 0.85
    // - 0, 2, ..., 10 (q = 2, i = 3): simplicity 0.6, coverage 1, density r = 0.5, rt = 0.4 →
    //   2 − 1.25 = 0.75; score 0.15 + 0.2 + 0.375 + 0.05 = 0.775
    // - 0, 5, 10 (q = 5): simplicity 0.8, density r = 0.2 → 2 − 2 = 0; score 0.45
    // - 0, 3, 6, 9 (q = 3, i = 6): simplicity 0, coverage 1 − ½·1/1 = 0.5, density r = 1/3,
    //   rt = 0.4 → 2 − 1.2 = 0.8; score 0 + 0.1 + 0.4 + 0.05 = 0.55
    // - 0, 1, ..., 10 (q = 1): simplicity 1, density r = 1 → 2 − 2.5 = −0.5; score 0.25
    #[test]
    fn worked_case_zero_to_ten() {
        assert!(close(score(3, 1, 5, 0.0, 10.0, 0.0, 10.0), 0.85));
        assert!(close(score(2, 1, 6, 0.0, 10.0, 0.0, 10.0), 0.775));
        assert!(close(score(1, 1, 3, 0.0, 10.0, 0.0, 10.0), 0.45));
        assert!(close(score(5, 1, 4, 0.0, 10.0, 0.0, 9.0), 0.55));
        assert!(close(score(0, 1, 11, 0.0, 10.0, 0.0, 10.0), 0.25));
        let ticks = extended_ticks(0.0, 10.0, TickOptions::default()).unwrap();
        assert_eq!(ticks.values, vec![0.0, 2.5, 5.0, 7.5, 10.0]);
        assert_eq!(ticks.labels, vec!["0.0", "2.5", "5.0", "7.5", "10.0"]);
        assert!(close(ticks.score, 0.85), "{}", ticks.score);
    }

    // Worked case 2, data [1, 99], m = 5, by hand (Talbot, Lin & Hanrahan 2010, from memory):
    // coverage of [0, 100]: 1 − ½ (1² + 1²)/9.8² = 1 − 1/96.04 = 0.98959
    // - 0, 25, ..., 100: simplicity 0.4, density 1 → 0.1 + 0.19792 + 0.5 + 0.05 = 0.84792
    // - 0, 20, ..., 100: simplicity 0.6, density 2 − 1.25 = 0.75 → 0.77292
    // - 0, 30, 60, 90: simplicity 0, coverage 1 − ½ (9² + 1²)/96.04 = 0.57310, density r = 3/90,
    //   rt = 4/99 → 2 − 1.21212 = 0.78788 → 0 + 0.11462 + 0.39394 + 0.05 = 0.55856
    // - 0, 10, ..., 100: simplicity 1, density 2 − 2.5 → 0.25 + 0.19792 − 0.25 + 0.05 = 0.24792
    #[test]
    fn worked_case_one_to_ninety_nine() {
        assert!(close(score(3, 1, 5, 1.0, 99.0, 0.0, 100.0), 0.84792));
        assert!(close(score(2, 1, 6, 1.0, 99.0, 0.0, 100.0), 0.77292));
        assert!(close(score(5, 1, 4, 1.0, 99.0, 0.0, 90.0), 0.55856));
        assert!(close(score(0, 1, 11, 1.0, 99.0, 0.0, 100.0), 0.24792));
        let ticks = extended_ticks(1.0, 99.0, TickOptions::default()).unwrap();
        assert_eq!(ticks.values, vec![0.0, 25.0, 50.0, 75.0, 100.0]);
        assert_eq!(ticks.labels, vec!["0", "25", "50", "75", "100"]);
        assert!(close(ticks.score, 0.84792), "{}", ticks.score);
    }

    #[test]
    fn bounds_are_upper_bounds() {
        // The pruning is only right when the *_max functions bound the real terms.
        // Equality where the bound is reached: the labels centred on the data, 8 labels exactly.
        assert!(simplicity(2, 1, 0.0, 10.0, 2.0) <= simplicity_max(2, 1) + 1e-12);
        assert!(simplicity(2, 1, 1.0, 11.0, 2.0) < simplicity_max(2, 1));
        assert!(close(
            coverage(0.0, 10.0, -5.0, 15.0),
            coverage_max(0.0, 10.0, 20.0)
        ));
        assert!(coverage(0.0, 10.0, -2.0, 18.0) < coverage_max(0.0, 10.0, 20.0));
        assert!(close(
            density(8, 5, 0.0, 10.0, 0.0, 10.0),
            density_max(8, 5)
        ));
        assert!(density(8, 5, 0.0, 10.0, 1.0, 9.0) < density_max(8, 5));
    }

    #[test]
    fn decimals_follow_the_step() {
        let ticks = extended_ticks(0.013, 0.087, TickOptions::default()).unwrap();
        let decimals: Vec<usize> = ticks
            .labels
            .iter()
            .map(|label| {
                label
                    .split_once('.')
                    .map_or(0, |(_, fraction)| fraction.len())
            })
            .collect();
        assert!(
            decimals.windows(2).all(|pair| pair[0] == pair[1]),
            "{:?}",
            ticks.labels
        );
        assert!(
            ticks.labels.iter().all(|label| !label.contains("000000")),
            "{:?}",
            ticks.labels
        );
    }

    #[test]
    fn huge_and_tiny_ranges_use_scientific_labels() {
        let ticks = extended_ticks(0.0, 3e17, TickOptions::default()).unwrap();
        assert!(
            ticks.labels.iter().any(|label| label.contains('e')),
            "{:?}",
            ticks.labels
        );
        let ticks = extended_ticks(1e-9, 5e-9, TickOptions::default()).unwrap();
        assert!(
            ticks
                .labels
                .iter()
                .all(|label| label == "0" || label.contains('e')),
            "{:?}",
            ticks.labels
        );
    }

    #[test]
    fn single_value_and_bad_input() {
        let ticks = extended_ticks(7.0, 7.0, TickOptions::default()).unwrap();
        assert!(ticks.values.len() >= 2);
        assert!(
            ticks.values.iter().any(|value| *value <= 7.0)
                && ticks.values.iter().any(|value| *value >= 7.0)
        );
        assert_eq!(
            extended_ticks(f64::NAN, 1.0, TickOptions::default()),
            Err(TickError::NotFinite)
        );
        assert_eq!(
            extended_ticks(0.0, f64::INFINITY, TickOptions::default()),
            Err(TickError::NotFinite)
        );
        let reversed = extended_ticks(10.0, 0.0, TickOptions::default()).unwrap();
        assert_eq!(reversed.values, vec![0.0, 2.5, 5.0, 7.5, 10.0]);
    }

    #[test]
    fn overlap_rules_out_dense_labels() {
        // 400 px for labels 60 px wide: at most about 6 labels fit with a gap.
        let wide = |_: &str| 60.0;
        let room = LabelRoom {
            axis_length: 400.0,
            label_extent: &wide,
            min_gap: 8.0,
        };
        let ticks = extended_ticks_with_room(
            0.0,
            100.0,
            TickOptions {
                target_count: 12,
                loose: false,
            },
            Some(&room),
        )
        .unwrap();
        assert!(ticks.score.is_finite());
        assert!(ticks.values.len() <= 6, "{:?}", ticks.values);
    }

    #[test]
    fn nothing_fits_ends_with_the_two_ends() {
        // Labels wider than the axis: no labelling fits; the search ends (bounded work) and
        // falls back to the range's ends, with a score that says so.
        let wide = |_: &str| 100.0;
        let room = LabelRoom {
            axis_length: 10.0,
            label_extent: &wide,
            min_gap: 6.0,
        };
        let ticks =
            extended_ticks_with_room(0.0, 1.0, TickOptions::default(), Some(&room)).unwrap();
        assert_eq!(ticks.values, vec![0.0, 1.0]);
        assert!(ticks.score.is_infinite());
    }

    #[test]
    fn civil_dates_round_trip() {
        assert_eq!(days_from_civil(1970, 1, 1), 0);
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        assert_eq!(days_from_civil(1969, 12, 31), -1);
        for days in [-719_162, -1, 0, 59, 11_016, 19_782, 2_932_896] {
            let (year, month, day) = civil_from_days(days);
            assert_eq!(days_from_civil(year, month, day), days);
        }
        assert_eq!(civil_from_days(19_782), (2024, 2, 29));
    }

    #[test]
    fn iso_dates_parse() {
        assert_eq!(parse_iso_seconds("1970-01-01"), Some(0));
        assert_eq!(
            parse_iso_seconds("2024-02-29T12:30:15Z"),
            Some(1_709_209_815)
        );
        assert_eq!(parse_iso_seconds("2024-02-29 12:30"), Some(1_709_209_800));
        assert_eq!(
            parse_iso_seconds("2024-02-29T14:30:15+02:00"),
            Some(1_709_209_815)
        );
        assert_eq!(
            parse_iso_seconds("2024-02-29T12:30:15.250Z"),
            Some(1_709_209_815)
        );
        assert_eq!(parse_iso_seconds("2023-02-29"), None);
        assert_eq!(parse_iso_seconds("2024-13-01"), None);
        assert_eq!(parse_iso_seconds("2024-01-01T25:00"), None);
        assert_eq!(parse_iso_seconds("ferry"), None);
        assert_eq!(parse_iso_seconds("2024-01-01T"), None);
    }

    fn iso(text: &str) -> i64 {
        parse_iso_seconds(text).unwrap()
    }

    #[test]
    fn calendar_ticks_by_month_over_a_year() {
        let ticks = calendar_ticks(iso("2023-11-20"), iso("2024-10-02"), 6);
        assert_eq!(
            ticks.step,
            CalendarStep {
                unit: CalendarUnit::Month,
                count: 2
            }
        );
        assert_eq!(
            ticks.labels,
            vec!["2024-01", "2024-03", "2024-05", "2024-07", "2024-09"]
        );
        assert_eq!(ticks.seconds[0], iso("2024-01-01"));
    }

    #[test]
    fn calendar_ticks_by_hour_over_days() {
        let ticks = calendar_ticks(iso("2024-03-30T05:00"), iso("2024-04-01T20:00"), 6);
        assert_eq!(
            ticks.step,
            CalendarStep {
                unit: CalendarUnit::Hour,
                count: 12
            }
        );
        assert_eq!(
            ticks.labels.first().map(String::as_str),
            Some("03-30 12:00")
        );
        assert_eq!(ticks.labels.last().map(String::as_str), Some("04-01 12:00"));
        let within_day = calendar_ticks(iso("2024-03-30T05:00"), iso("2024-03-30T06:00"), 5);
        assert_eq!(
            within_day.step,
            CalendarStep {
                unit: CalendarUnit::Minute,
                count: 15
            }
        );
        assert_eq!(
            within_day.labels,
            vec!["05:00", "05:15", "05:30", "05:45", "06:00"]
        );
    }

    #[test]
    fn weekly_ticks_restart_each_month() {
        let ticks = calendar_ticks(iso("2024-01-01"), iso("2024-02-20"), 8);
        assert_eq!(
            ticks.step,
            CalendarStep {
                unit: CalendarUnit::Day,
                count: 7
            }
        );
        assert_eq!(
            ticks.labels,
            vec!["01-01", "01-08", "01-15", "01-22", "02-01", "02-08", "02-15"]
        );
    }

    #[test]
    fn centuries_use_nice_year_numbers() {
        let ticks = calendar_ticks(iso("1603-05-01"), iso("2024-01-01"), 5);
        assert_eq!(ticks.step.unit, CalendarUnit::Year);
        assert_eq!(ticks.labels, vec!["1700", "1800", "1900", "2000"]);
        assert!(calendar_ticks(i64::MIN, i64::MAX, 5).seconds.is_empty());
    }
}
