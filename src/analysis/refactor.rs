//! Refactors the user asks for (code actions that are not tied to a diagnostic):
//!
//! - **swap channels**: exchange the channels of the binding at the cursor and another binding
//!   of the same layer;
//! - **re-encode**: the best assignment of all of a layer's bound columns to the channels of its
//!   mark under the active ranking, respecting expressiveness and the `emphasis` order — an
//!   optimal assignment problem solved with the Hungarian method (Kuhn 1955; Munkres 1957).

use crate::analysis::channels::{active_ranking, channels_for_mark, swap_bindings_fix};
use crate::analysis::facts::{BindingFacts, LayerFacts};
use crate::analysis::rules::RuleContext;
use crate::analysis::{AnalysisConfig, ParsedDocument};
use crate::data::DataContext;
use crate::diagnostic::{Fix, FixKind, TextEdit};
use crate::knowledge::expressiveness::{expresses, Expressiveness};
use crate::knowledge::perceived::{perceived_channel, ChannelContext};
use crate::knowledge::rankings::Ranking;
use crate::spec::model::{Channel, ChartSpec};
use crate::spec::schema::json_string;
use crate::text_range::TextRange;

/// Refactors available at `range` (a cursor or a selection).
pub fn refactors_at(
    document: &ParsedDocument,
    data: &DataContext,
    config: &AnalysisConfig,
    range: TextRange,
) -> Vec<Fix> {
    let context = RuleContext::new(document, data, config);
    let spec = context.spec();
    let mut fixes = Vec::new();
    for layer in &context.layers {
        let Some(bind_range) = layer.layer.bind_range else {
            continue;
        };
        if !bind_range.intersects(range) {
            continue;
        }
        if let Some(fix) = reencode_layer(spec, layer, active_ranking(config)) {
            fixes.push(fix);
        }
        let Some(at_cursor) = layer
            .bindings
            .iter()
            .find(|facts| facts.binding.member_range.intersects(range))
        else {
            continue;
        };
        for other in &layer.bindings {
            if other.binding.channel != at_cursor.binding.channel {
                let mut fix = swap_bindings_fix(at_cursor, other);
                fix.kind = FixKind::Refactor;
                fixes.push(fix);
            }
        }
    }
    fixes
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

/// The optimal re-encoding of a layer as key renames, when it differs from the current one.
pub fn reencode_layer(spec: &ChartSpec, layer: &LayerFacts<'_>, ranking: &Ranking) -> Option<Fix> {
    let mark = layer.mark()?;
    // bindings that take part: known kind, a perceptual channel
    let mut movable: Vec<&BindingFacts<'_>> = layer
        .bindings
        .iter()
        .filter(|facts| facts.kind.is_some() && facts.binding.channel != Channel::Label)
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
    let mut edits = Vec::new();
    let mut moves = Vec::new();
    for (row, column) in assignment.iter().enumerate() {
        if cost[row][*column] >= UNASSIGNABLE {
            return None;
        }
        let facts = movable[row];
        let target = slots[*column];
        if target != facts.binding.channel {
            edits.push(TextEdit {
                range: facts.binding.key_range,
                new_text: json_string(target.as_str()),
            });
            moves.push(format!(
                "`{}` to `{}`",
                facts.display_name(),
                target.as_str()
            ));
        }
    }
    if edits.is_empty() {
        return None;
    }
    edits.sort_by_key(|edit| edit.range.start);
    Some(Fix {
        title: format!(
            "re-encode for {}: {}",
            ranking.citation.short,
            moves.join(", ")
        ),
        kind: FixKind::Refactor,
        safe: false,
        edits,
    })
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
