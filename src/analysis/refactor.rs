//! Refactors the user asks for (code actions that are not tied to a diagnostic):
//!
//! - **swap channels**: exchange the channels of the binding at the cursor and another binding
//!   of the same layer;
//! - **re-encode**: the best assignment of a layer's bound columns to the channels of its mark
//!   under the active ranking, respecting expressiveness and the `emphasis` order — an optimal
//!   assignment problem solved with the Hungarian method (Kuhn 1955; Munkres 1957).
//!
//! Users can trust them: a refactor is offered only when markwell's own rules accept the result
//! on the same data (the edit is applied and the document analysed again; no rule may report
//! more findings than before), never on a document with syntax errors, never twice and never as
//! a copy of a quick fix. Time columns and the first `emphasis` column stay on the position
//! channel they are on. Titles say what moves and why: each column's rank under the active
//! ranking before and after.

use std::collections::HashMap;

use crate::analysis::channels::{active_ranking, channels_for_mark, ordinal, perceived_for};
use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::rules::{RuleContext, SYNTAX_ERROR};
use crate::analysis::{
    adds_no_finding, analyze, analyze_unchecked, parse_document, rule_counts,
    MAX_TEXT_FOR_FIX_CHECK,
};
use crate::analysis::{AnalysisConfig, ParsedDocument};
use crate::data::DataContext;
use crate::diagnostic::{Diagnostic, Fix, FixKind, TextEdit};
use crate::knowledge::expressiveness::{expresses, Expressiveness};
use crate::knowledge::perceived::{perceived_channel, ChannelContext};
use crate::knowledge::rankings::Ranking;
use crate::spec::model::{AttributeKind, Channel, ChartSpec};
use crate::spec::schema::json_string;
use crate::text_range::TextRange;

/// How many times a re-encoding that the rules reject is recomputed with the placements they
/// objected to forbidden. markwell's choice, no source.
const REENCODE_ATTEMPTS: usize = 4;

/// Layers a request considers (a selection over a long `layers` list would otherwise cost one
/// analysis per candidate of every layer). markwell's choice, no source.
const MAX_LAYERS_PER_REQUEST: usize = 8;

/// One binding moving to another channel.
#[derive(Clone, Debug)]
struct Move {
    name: String,
    column: Option<String>,
    from: Channel,
    to: Channel,
    key_range: TextRange,
}

impl Move {
    fn of(facts: &BindingFacts<'_>, to: Channel) -> Move {
        Move {
            name: facts.display_name(),
            column: facts.column_name().map(str::to_string),
            from: facts.binding.channel,
            to,
            key_range: facts.binding.key_range,
        }
    }
}

/// A time column, or the first `emphasis` column, on a position channel: refactors leave it
/// where it is.
fn is_pinned(spec: &ChartSpec, facts: &BindingFacts<'_>) -> bool {
    if !facts.binding.channel.is_position() {
        return false;
    }
    let time =
        facts.kind == Some(AttributeKind::Time) || facts.column_kind == Some(AttributeKind::Time);
    let first_emphasis = facts
        .column_name()
        .is_some_and(|name| spec.emphasis_rank(name) == Some(0));
    time || first_emphasis
}

fn edits_for(moves: &[Move]) -> Vec<TextEdit> {
    let mut edits: Vec<TextEdit> = moves
        .iter()
        .filter(|m| m.from != m.to)
        .map(|m| TextEdit {
            range: m.key_range,
            new_text: json_string(m.to.as_str()),
        })
        .collect();
    edits.sort_by_key(|edit| (edit.range.start, edit.range.end));
    edits
}

/// A comparable form of a set of edits.
fn edit_key(edits: &[TextEdit]) -> Vec<(usize, usize, String)> {
    let mut key: Vec<(usize, usize, String)> = edits
        .iter()
        .map(|edit| (edit.range.start, edit.range.end, edit.new_text.clone()))
        .collect();
    key.sort();
    key
}

/// "7th" for the rank of a binding's kind on what the eye reads, "unranked" when the ranking
/// does not list it.
fn rank_word(
    ranking: &Ranking,
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
) -> String {
    facts
        .kind
        .zip(perceived_for(spec, layer, facts))
        .and_then(|(kind, perceived)| ranking.rank(kind, perceived))
        .map_or_else(|| "unranked".to_string(), |rank| ordinal(rank.level))
}

/// "`crates` `hue`->`y` (7th->1st)" for each move, ranks read from the document before and
/// after the edit.
fn describe_moves(
    moves: &[Move],
    ranking: &Ranking,
    before: &RuleContext<'_>,
    layer_index: usize,
    edited: &str,
    data: &DataContext,
    config: &AnalysisConfig,
) -> String {
    let after_document = parse_document(edited);
    let after = RuleContext::new(&after_document, data, config);
    let before_layer = before.layers.get(layer_index);
    let after_layer = after.layers.get(layer_index);
    moves
        .iter()
        .filter(|m| m.from != m.to)
        .map(|m| {
            let was = before_layer
                .and_then(|layer| layer.binding(m.from).map(|facts| (layer, facts)))
                .map(|(layer, facts)| rank_word(ranking, before.spec(), layer, facts));
            let now = after_layer
                .and_then(|layer| layer.binding(m.to).map(|facts| (layer, facts)))
                .map(|(layer, facts)| rank_word(ranking, after.spec(), layer, facts));
            let ranks = match (was, now) {
                (Some(was), Some(now)) => format!(" ({was}->{now})"),
                _ => String::new(),
            };
            format!(
                "`{}` `{}`->`{}`{ranks}",
                m.name,
                m.from.as_str(),
                m.to.as_str()
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// Refactors available at `range` (a cursor or a selection).
pub fn refactors_at(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
    range: TextRange,
) -> Vec<Fix> {
    // a refactor is offered only after checking it, which the size limit of fix checks rules out
    if document.diagnostics.iter().any(|d| d.rule == SYNTAX_ERROR)
        || document.tree.text().len() > MAX_TEXT_FOR_FIX_CHECK
    {
        return Vec::new();
    }
    let context = RuleContext::new(document, data, config);
    let spec = context.spec();
    let ranking = active_ranking(config);
    let layers: Vec<&LayerFacts<'_>> = context
        .layers
        .iter()
        .filter(|layer| {
            layer
                .layer
                .bind_range
                .is_some_and(|bind| bind.intersects(range))
        })
        .take(MAX_LAYERS_PER_REQUEST)
        .collect();
    if layers.is_empty() {
        return Vec::new();
    }
    let text = document.tree.text();
    let baseline = analyze(document, data, config);
    let before = rule_counts(&baseline);
    // quick fixes are offered with their diagnostics; a refactor never repeats one
    let mut offered: Vec<Vec<(usize, usize, String)>> = baseline
        .iter()
        .flat_map(|diagnostic| diagnostic.fixes.iter())
        .map(|fix| edit_key(&fix.edits))
        .collect();
    let mut fixes = Vec::new();
    // offers the moves when the rules accept them; returns the findings when they do not
    let mut offer = |moves: &[Move],
                     layer_index: usize,
                     intent: &str,
                     fixes: &mut Vec<Fix>|
     -> Option<Vec<Diagnostic>> {
        let edits = edits_for(moves);
        if edits.is_empty() {
            return None;
        }
        let key = edit_key(&edits);
        if offered.contains(&key) {
            return None;
        }
        let Some((edited, _)) = adds_no_finding(text, &before, &edits, data, config) else {
            // the rules object: what they found, for a re-encode to avoid
            let edited = crate::diagnostic::apply_edits(text, &edits)?;
            return Some(analyze_unchecked(&parse_document(&edited), data, config));
        };
        offered.push(key);
        let changes = describe_moves(moves, ranking, &context, layer_index, &edited, data, config);
        fixes.push(Fix {
            title: format!("{intent} under {}: {changes}", ranking.citation.short),
            kind: FixKind::Refactor,
            safe: false,
            edits,
        });
        None
    };
    for layer in layers {
        let index = layer.layer.index;
        // re-encode: the optimum, recomputed without the placements the rules objected to
        let mut forbidden: Vec<(String, Channel)> = Vec::new();
        for _ in 0..REENCODE_ATTEMPTS {
            let Some(moves) = reencode_moves(spec, layer, ranking, &forbidden) else {
                break;
            };
            let Some(objections) = offer(&moves, index, "re-encode by rank", &mut fixes) else {
                break;
            };
            let new_forbidden = objected_placements(&moves, &before, &objections);
            if new_forbidden.is_empty() || new_forbidden.iter().all(|f| forbidden.contains(f)) {
                break;
            }
            forbidden.extend(new_forbidden);
        }
        // swaps from the binding at the cursor
        let Some(at_cursor) = layer
            .bindings
            .iter()
            .find(|facts| facts.binding.member_range.intersects(range))
        else {
            continue;
        };
        if is_pinned(spec, at_cursor) {
            continue;
        }
        for other in &layer.bindings {
            if other.binding.channel == at_cursor.binding.channel || is_pinned(spec, other) {
                continue;
            }
            let moves = [
                Move::of(at_cursor, other.binding.channel),
                Move::of(other, at_cursor.binding.channel),
            ];
            let intent = format!(
                "swap `{}` and `{}`",
                at_cursor.display_name(),
                other.display_name()
            );
            offer(&moves, index, &intent, &mut fixes);
        }
    }
    fixes
}

/// The (column, channel) placements of `moves` that the findings new after the edit point at.
fn objected_placements(
    moves: &[Move],
    before: &HashMap<&'static str, usize>,
    after: &[Diagnostic],
) -> Vec<(String, Channel)> {
    let after_counts = rule_counts(after);
    let grown: Vec<&str> = after_counts
        .iter()
        .filter(|(rule, count)| **count > before.get(**rule).copied().unwrap_or(0))
        .map(|(rule, _)| *rule)
        .collect();
    // where each moved key sits in the edited text: edits keep their order, shifting later text
    let mut shift: isize = 0;
    let mut placed: Vec<(TextRange, &Move)> = Vec::new();
    let mut sorted: Vec<&Move> = moves.iter().filter(|m| m.from != m.to).collect();
    sorted.sort_by_key(|m| m.key_range.start);
    for m in sorted {
        let new_len = json_string(m.to.as_str()).len() as isize;
        let start = (m.key_range.start as isize + shift).max(0) as usize;
        placed.push((TextRange::new(start, start + new_len as usize), m));
        shift += new_len - (m.key_range.end - m.key_range.start) as isize;
    }
    let mut out = Vec::new();
    for diagnostic in after.iter().filter(|d| grown.contains(&d.rule)) {
        for (range, m) in &placed {
            if diagnostic.range.intersects(*range) || range.intersects(diagnostic.range) {
                if let Some(column) = &m.column {
                    out.push((column.clone(), m.to));
                }
            }
        }
    }
    // a finding elsewhere (a whole-layer one): forbid every move, so the next try changes less
    if out.is_empty() {
        out = moves
            .iter()
            .filter(|m| m.from != m.to)
            .filter_map(|m| m.column.clone().map(|column| (column, m.to)))
            .take(1)
            .collect();
    }
    out
}

/// What the eye would read for `facts` on `channel`, assuming a magnitude on a position channel
/// makes it the value axis and anything else on a position channel leaves the value to the other.
fn perceived_on(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    channel: Channel,
) -> Option<crate::knowledge::perceived::PerceivedChannel> {
    let mark = layer.mark()?;
    let value_axis = match (channel, facts.is_magnitude()) {
        (Channel::X, true) => Some(Channel::X),
        (Channel::Y, true) => Some(Channel::Y),
        (Channel::X, false) => Some(Channel::Y),
        (Channel::Y, false) => Some(Channel::X),
        _ => layer.value_axis(),
    };
    Some(perceived_channel(&ChannelContext {
        mark,
        channel,
        arrange: layer.layer.arrange.as_ref().map(|arrange| arrange.value),
        in_panels: spec.panels.is_some(),
        value_axis,
        binding_is_summarised: facts.binding.summary.is_some(),
    }))
}

/// Cost of putting `facts` on `channel`: its rank scaled to 0..1 (1 = unranked), or `None` when
/// the channel cannot express the column's kind.
fn placement_cost(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    facts: &BindingFacts<'_>,
    channel: Channel,
    ranking: &Ranking,
) -> Option<f64> {
    let kind = facts.kind?;
    let perceived = perceived_on(spec, layer, facts, channel)?;
    if expresses(kind, perceived) != Expressiveness::Good {
        return None;
    }
    Some(match ranking.rank(kind, perceived) {
        Some(rank) => f64::from(rank.level) / (f64::from(rank.level_count) + 1.0),
        None => 1.0,
    })
}

/// The optimal re-encoding of a layer as moves, when it differs from the current one. Pinned
/// bindings (see [`is_pinned`]) keep their channel; `forbidden` placements are not used.
fn reencode_moves(
    spec: &ChartSpec,
    layer: &LayerFacts<'_>,
    ranking: &Ranking,
    forbidden: &[(String, Channel)],
) -> Option<Vec<Move>> {
    let mark = layer.mark()?;
    // bindings that take part: known kind, a perceptual channel, not pinned
    let mut movable: Vec<&BindingFacts<'_>> = layer
        .bindings
        .iter()
        .filter(|facts| {
            facts.kind.is_some()
                && facts.binding.channel != Channel::Label
                && !is_pinned(spec, facts)
        })
        .collect();
    if movable.len() < 2 {
        return None;
    }
    // importance: emphasis order first, then the order written
    movable.sort_by_key(|facts| {
        facts
            .column_name()
            .and_then(|name| spec.emphasis_rank(name))
            .unwrap_or(usize::MAX)
    });
    let slots: Vec<Channel> = channels_for_mark(mark)
        .iter()
        .copied()
        .filter(|channel| {
            *channel != Channel::Label
                && layer
                    .binding(*channel)
                    .is_none_or(|facts| movable.iter().any(|m| std::ptr::eq(*m, facts)))
        })
        .collect();
    if slots.len() < movable.len() {
        return None;
    }
    // placement[row][column]: the rank cost, `None` where the channel cannot express the column
    let placement: Vec<Vec<Option<f64>>> = movable
        .iter()
        .map(|facts| {
            slots
                .iter()
                .map(|channel| {
                    let banned = facts.column_name().is_some_and(|name| {
                        forbidden
                            .iter()
                            .any(|(column, to)| column == name && to == channel)
                    });
                    if banned && *channel != facts.binding.channel {
                        return None;
                    }
                    placement_cost(spec, layer, facts, *channel, ranking).or(
                        // a column no channel expresses well may stay where it is
                        (*channel == facts.binding.channel).then_some(2.0),
                    )
                })
                .collect()
        })
        .collect();
    // Lexicographic optimum: in order of importance, each column gets the best rank that still
    // leaves a valid placement for all the others; ties are then settled by moving as few
    // bindings as possible.
    let mut allowed: Vec<Vec<bool>> = placement
        .iter()
        .map(|row| row.iter().map(Option::is_some).collect())
        .collect();
    if !feasible(&allowed) {
        return None;
    }
    for row in 0..movable.len() {
        let mut levels: Vec<f64> = placement[row]
            .iter()
            .zip(&allowed[row])
            .filter_map(|(cost, ok)| cost.filter(|_| *ok))
            .collect();
        levels.sort_by(f64::total_cmp);
        levels.dedup();
        for level in levels {
            let mut trial = allowed.clone();
            for (column, ok) in trial[row].iter_mut().enumerate() {
                *ok = *ok && placement[row][column] == Some(level);
            }
            if feasible(&trial) {
                allowed = trial;
                break;
            }
        }
    }
    let cost: Vec<Vec<f64>> = movable
        .iter()
        .enumerate()
        .map(|(row, facts)| {
            slots
                .iter()
                .enumerate()
                .map(|(column, channel)| match allowed[row][column] {
                    false => UNASSIGNABLE,
                    true if *channel == facts.binding.channel => 0.0,
                    true => 1.0,
                })
                .collect()
        })
        .collect();
    let assignment = hungarian(&cost)?;
    let mut moves = Vec::new();
    for (row, column) in assignment.iter().enumerate() {
        if cost[row][*column] >= UNASSIGNABLE {
            return None;
        }
        let facts = movable[row];
        let target = slots[*column];
        if target != facts.binding.channel {
            moves.push(Move::of(facts, target));
        }
    }
    if moves.is_empty() {
        return None;
    }
    Some(moves)
}

/// Whether every row can get a distinct allowed column.
fn feasible(allowed: &[Vec<bool>]) -> bool {
    let cost: Vec<Vec<f64>> = allowed
        .iter()
        .map(|row| {
            row.iter()
                .map(|ok| if *ok { 0.0 } else { UNASSIGNABLE })
                .collect()
        })
        .collect();
    hungarian(&cost).is_some_and(|assignment| {
        assignment
            .iter()
            .enumerate()
            .all(|(row, column)| allowed[row][*column])
    })
}

/// Cost of a forbidden placement.
const UNASSIGNABLE: f64 = 1e12;

/// Minimum-cost assignment of every row to a distinct column (rows ≤ columns): the Hungarian
/// method with potentials, O(rows² · columns). Returns the column of each row.
pub fn hungarian(cost: &[Vec<f64>]) -> Option<Vec<usize>> {
    let rows = cost.len();
    let columns = cost.first()?.len();
    if rows == 0 || rows > columns || cost.iter().any(|row| row.len() != columns) {
        return None;
    }
    // 1-based arrays as in the classic formulation; column 0 is a sentinel
    let mut row_potential = vec![0.0; rows + 1];
    let mut column_potential = vec![0.0; columns + 1];
    let mut row_of_column = vec![0usize; columns + 1];
    let mut way = vec![0usize; columns + 1];
    for row in 1..=rows {
        row_of_column[0] = row;
        let mut current_column = 0;
        let mut min_slack = vec![f64::INFINITY; columns + 1];
        let mut used = vec![false; columns + 1];
        loop {
            used[current_column] = true;
            let current_row = row_of_column[current_column];
            let mut delta = f64::INFINITY;
            let mut next_column = 0;
            for column in 1..=columns {
                if used[column] {
                    continue;
                }
                let slack = cost[current_row - 1][column - 1]
                    - row_potential[current_row]
                    - column_potential[column];
                if slack < min_slack[column] {
                    min_slack[column] = slack;
                    way[column] = current_column;
                }
                if min_slack[column] < delta {
                    delta = min_slack[column];
                    next_column = column;
                }
            }
            if !delta.is_finite() {
                return None;
            }
            for column in 0..=columns {
                if used[column] {
                    row_potential[row_of_column[column]] += delta;
                    column_potential[column] -= delta;
                } else {
                    min_slack[column] -= delta;
                }
            }
            current_column = next_column;
            if row_of_column[current_column] == 0 {
                break;
            }
        }
        loop {
            let previous = way[current_column];
            row_of_column[current_column] = row_of_column[previous];
            current_column = previous;
            if current_column == 0 {
                break;
            }
        }
    }
    let mut assignment = vec![0; rows];
    for column in 1..=columns {
        if row_of_column[column] != 0 {
            assignment[row_of_column[column] - 1] = column - 1;
        }
    }
    Some(assignment)
}

#[cfg(test)]
mod tests {
    use super::hungarian;

    /// Exhaustive minimum over all injective assignments, to check the Hungarian method.
    fn brute_force(cost: &[Vec<f64>]) -> f64 {
        fn go(cost: &[Vec<f64>], row: usize, used: &mut Vec<bool>) -> f64 {
            if row == cost.len() {
                return 0.0;
            }
            let mut best = f64::INFINITY;
            for column in 0..cost[row].len() {
                if !used[column] {
                    used[column] = true;
                    best = best.min(cost[row][column] + go(cost, row + 1, used));
                    used[column] = false;
                }
            }
            best
        }
        go(cost, 0, &mut vec![false; cost[0].len()])
    }

    #[test]
    fn matches_exhaustive_search_on_pseudo_random_matrices() {
        let mut seed = 12345u64;
        let mut next = || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((seed >> 33) % 1000) as f64 / 10.0
        };
        for rows in 1..=5 {
            for columns in rows..=7 {
                let cost: Vec<Vec<f64>> = (0..rows)
                    .map(|_| (0..columns).map(|_| next()).collect())
                    .collect();
                let assignment = hungarian(&cost).unwrap_or_default();
                assert_eq!(assignment.len(), rows);
                let mut seen = assignment.clone();
                seen.sort_unstable();
                seen.dedup();
                assert_eq!(seen.len(), rows, "columns must be distinct");
                let total: f64 = assignment
                    .iter()
                    .enumerate()
                    .map(|(r, c)| cost[r][*c])
                    .sum();
                assert!((total - brute_force(&cost)).abs() < 1e-9, "{cost:?}");
            }
        }
    }

    #[test]
    fn textbook_example() {
        // a 3x3 example with the optimum 5 (1 + 2 + 2) on the anti-diagonal-free choice
        let cost = vec![
            vec![4.0, 1.0, 3.0],
            vec![2.0, 0.0, 5.0],
            vec![3.0, 2.0, 2.0],
        ];
        let assignment = hungarian(&cost).unwrap_or_default();
        let total: f64 = assignment
            .iter()
            .enumerate()
            .map(|(r, c)| cost[r][*c])
            .sum();
        assert_eq!(total, 5.0);
    }

    #[test]
    fn refuses_impossible_shapes() {
        assert_eq!(hungarian(&[]), None);
        assert_eq!(hungarian(&[vec![1.0], vec![2.0]]), None);
    }
}
