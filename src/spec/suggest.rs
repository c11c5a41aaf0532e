//! Closest-name suggestions for misspelled keys, enum values and column names.

/// The candidate closest to `typed`, if it is close enough to be what the user meant.
///
/// Closeness: case-insensitive equality first, then the optimal string alignment distance
/// (Damerau–Levenshtein restricted: insertions, deletions, substitutions and adjacent
/// transpositions). The bound of one edit per three characters (at least one, at most three) is
/// common practice in spelling suggestions, no source.
pub fn closest_name<'c, I>(typed: &str, candidates: I) -> Option<&'c str>
where
    I: IntoIterator<Item = &'c str>,
{
    let typed_lower = typed.to_lowercase();
    let mut best: Option<(usize, &'c str)> = None;
    for candidate in candidates {
        if candidate == typed {
            continue;
        }
        let candidate_lower = candidate.to_lowercase();
        let distance = if candidate_lower == typed_lower {
            0
        } else {
            strsim::osa_distance(&typed_lower, &candidate_lower)
        };
        if best.is_none_or(|(best_distance, _)| distance < best_distance) {
            best = Some((distance, candidate));
        }
    }
    let (distance, candidate) = best?;
    let length = typed.chars().count().max(candidate.chars().count());
    let allowed = (length / 3).clamp(1, 3);
    // separator-insensitive match (`side_by_side` for `side-by-side`) also counts
    let loose = |text: &str| text.to_lowercase().replace(['-', '_', ' '], "");
    if distance <= allowed || loose(typed) == loose(candidate) {
        Some(candidate)
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::closest_name;

    #[test]
    fn suggests_a_near_spelling() {
        let keys = ["mark", "bind", "layers", "source", "purpose"];
        assert_eq!(closest_name("bnid", keys), Some("bind"));
        assert_eq!(closest_name("sourse", keys), Some("source"));
        assert_eq!(closest_name("Mark", keys), Some("mark"));
        assert_eq!(closest_name("layer", keys), Some("layers"));
    }

    #[test]
    fn no_suggestion_for_an_unrelated_word() {
        let keys = ["mark", "bind", "layers"];
        assert_eq!(closest_name("zebra", keys), None);
        assert_eq!(closest_name("", keys), None);
    }

    #[test]
    fn separators_do_not_count() {
        assert_eq!(
            closest_name("side_by_side", ["stack", "side-by-side", "share"]),
            Some("side-by-side")
        );
    }
}
