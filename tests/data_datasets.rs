//! Profiles of two published datasets checked against their published facts: Fisher's Iris
//! (Fisher 1936, via scikit-learn 1.9.1) and Palmer Penguins (Gorman, Williams, Fraser 2014, via
//! palmerpenguins 0.1.6). The facts are listed in `tests/datasets/SOURCES.md`; each assertion
//! cites the dataset it comes from.

use std::path::PathBuf;

use markwell::data::{ColumnProfile, DataProfile, ProfileCache, ReadOptions};
use markwell::spec::model::{AttributeKind, DataFormat, ZeroMeaning};

fn dataset(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/datasets")
        .join(name)
}

fn full_profile(name: &str) -> DataProfile {
    let cache = ProfileCache::new();
    match cache.full_profile(&dataset(name), &ReadOptions::default(), &|_| true) {
        Ok(profile) => (*profile).clone(),
        Err(error) => panic!("profiling {name} failed: {error}"),
    }
}

fn column<'p>(profile: &'p DataProfile, name: &str) -> &'p ColumnProfile {
    match profile.column(name) {
        Some(column) => column,
        None => panic!("no column {name}"),
    }
}

fn assert_close(actual: f64, expected: f64, tolerance: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: {actual} is not within {tolerance} of {expected}"
    );
}

/// (name, distinct, min, max, mean) per numeric Iris column.
/// Source: tests/datasets/SOURCES.md, Iris facts (Fisher 1936; scikit-learn 1.9.1 copy).
const IRIS_NUMERIC: [(&str, u64, f64, f64, f64); 4] = [
    ("sepal_length", 35, 4.3, 7.9, 5.843333),
    ("sepal_width", 23, 2.0, 4.4, 3.057333),
    ("petal_length", 43, 1.0, 6.9, 3.758),
    ("petal_width", 22, 0.1, 2.5, 1.199333),
];

#[test]
fn iris_rows_columns_and_kinds() {
    let profile = full_profile("iris.csv");
    // Iris: 150 rows, 5 columns (SOURCES.md, Iris facts)
    assert_eq!(profile.rows, 150);
    assert_eq!(profile.format, DataFormat::Csv);
    assert!(!profile.is_sample);
    assert!(profile.problems.is_empty());
    let names: Vec<&str> = profile.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(
        names,
        [
            "sepal_length",
            "sepal_width",
            "petal_length",
            "petal_width",
            "species"
        ]
    );
    // Iris: the four measurements are numeric, species is categorical (SOURCES.md)
    for (name, ..) in IRIS_NUMERIC {
        let numeric = column(&profile, name);
        assert_eq!(numeric.kind, AttributeKind::Quantitative, "{name}");
        assert_eq!(numeric.numeric_share, 1.0, "{name}");
        assert!(numeric.non_numeric_examples.is_empty());
    }
    assert_eq!(column(&profile, "species").kind, AttributeKind::Categorical);
    // Iris: no missing values in any column (SOURCES.md)
    for column in &profile.columns {
        assert_eq!(column.missing, 0, "{}", column.name);
        assert_eq!(column.rows, 150);
    }
}

#[test]
fn iris_species_has_three_values_of_fifty() {
    let profile = full_profile("iris.csv");
    let species = column(&profile, "species");
    // Iris: species has 3 distinct values, setosa 50, versicolor 50, virginica 50 (SOURCES.md)
    assert_eq!(species.distinct.value, 3);
    assert!(species.distinct.exact);
    let all = species.all_values.clone().unwrap_or_default();
    assert_eq!(
        all,
        vec![
            ("setosa".to_string(), 50),
            ("versicolor".to_string(), 50),
            ("virginica".to_string(), 50)
        ]
    );
}

#[test]
fn iris_numeric_summaries_match_the_published_statistics() {
    let profile = full_profile("iris.csv");
    for (name, distinct, min, max, mean) in IRIS_NUMERIC {
        let profile_column = column(&profile, name);
        // Iris: distinct values per numeric column (SOURCES.md: 35, 23, 43, 22)
        assert_eq!(profile_column.distinct.value, distinct, "{name} distinct");
        let Some(numeric) = &profile_column.numeric else {
            panic!("{name} has no numeric summary")
        };
        // Iris: min / max / mean per column (SOURCES.md, means given to 6 decimals)
        assert_eq!(numeric.count, 150);
        assert_eq!(numeric.min, min, "{name} min");
        assert_eq!(numeric.max, max, "{name} max");
        assert_close(numeric.mean, mean, 1e-6, name);
        assert_eq!(
            numeric.histogram.iter().sum::<u64>(),
            150,
            "{name} histogram"
        );
    }
}

/// (name, missing) per Penguins column. Source: tests/datasets/SOURCES.md, Penguins facts
/// (Gorman, Williams, Fraser 2014; palmerpenguins 0.1.6 copy).
const PENGUIN_MISSING: [(&str, u64); 8] = [
    ("species", 0),
    ("island", 0),
    ("bill_length_mm", 2),
    ("bill_depth_mm", 2),
    ("flipper_length_mm", 2),
    ("body_mass_g", 2),
    ("sex", 11),
    ("year", 0),
];

/// (name, distinct, min, max, mean) per numeric Penguins column (same source).
const PENGUIN_NUMERIC: [(&str, u64, f64, f64, Option<f64>); 5] = [
    ("bill_length_mm", 164, 32.1, 59.6, Some(43.921930)),
    ("bill_depth_mm", 80, 13.1, 21.5, Some(17.151170)),
    ("flipper_length_mm", 55, 172.0, 231.0, Some(200.915205)),
    ("body_mass_g", 94, 2700.0, 6300.0, Some(4201.754386)),
    ("year", 3, 2007.0, 2009.0, None),
];

#[test]
fn penguins_rows_missing_and_kinds() {
    let profile = full_profile("penguins.csv");
    // Penguins: 344 rows, 8 columns (SOURCES.md, Penguins facts)
    assert_eq!(profile.rows, 344);
    assert_eq!(profile.columns.len(), 8);
    // Penguins: missing values are the literal `NA`, per column as listed (SOURCES.md)
    for (name, missing) in PENGUIN_MISSING {
        assert_eq!(column(&profile, name).missing, missing, "{name} missing");
    }
    let total_missing: u64 = profile.columns.iter().map(|c| c.missing).sum();
    assert_eq!(total_missing, 19); // Penguins: 19 `NA` cells in all (SOURCES.md)
                                   // Penguins: species, island, sex are categorical; the rest numeric (SOURCES.md)
    for name in ["species", "island", "sex"] {
        assert_eq!(
            column(&profile, name).kind,
            AttributeKind::Categorical,
            "{name}"
        );
    }
    for (name, ..) in PENGUIN_NUMERIC {
        assert_eq!(
            column(&profile, name).kind,
            AttributeKind::Quantitative,
            "{name}"
        );
    }
}

#[test]
fn penguins_categorical_distinct_values_and_counts() {
    let profile = full_profile("penguins.csv");
    // Penguins: species 3 (Adelie 152, Gentoo 124, Chinstrap 68) (SOURCES.md)
    let species = column(&profile, "species");
    assert_eq!(species.distinct.value, 3);
    assert_eq!(
        species.top_values,
        vec![
            ("Adelie".to_string(), 152),
            ("Gentoo".to_string(), 124),
            ("Chinstrap".to_string(), 68)
        ]
    );
    // Penguins: island 3 (Biscoe 168, Dream 124, Torgersen 52) (SOURCES.md)
    let island = column(&profile, "island");
    assert_eq!(
        island.top_values,
        vec![
            ("Biscoe".to_string(), 168),
            ("Dream".to_string(), 124),
            ("Torgersen".to_string(), 52)
        ]
    );
    // Penguins: sex 2 (male 168, female 165) plus 11 NA (SOURCES.md)
    let sex = column(&profile, "sex");
    assert_eq!(sex.distinct.value, 2);
    assert_eq!(sex.missing, 11);
    assert_eq!(
        sex.top_values,
        vec![("male".to_string(), 168), ("female".to_string(), 165)]
    );
    // Penguins: year 3 (2007: 110, 2008: 114, 2009: 120) (SOURCES.md)
    let year = column(&profile, "year");
    assert_eq!(
        year.all_values.clone().unwrap_or_default(),
        vec![
            ("2007".to_string(), 110),
            ("2008".to_string(), 114),
            ("2009".to_string(), 120)
        ]
    );
}

#[test]
fn penguins_numeric_summaries_match_the_published_statistics() {
    let profile = full_profile("penguins.csv");
    for (name, distinct, min, max, mean) in PENGUIN_NUMERIC {
        let profile_column = column(&profile, name);
        // Penguins: distinct non-missing values (SOURCES.md: 164, 80, 55, 94, 3)
        assert_eq!(profile_column.distinct.value, distinct, "{name} distinct");
        let Some(numeric) = &profile_column.numeric else {
            panic!("{name} has no numeric summary")
        };
        // Penguins: min / max / mean over non-missing values (SOURCES.md, 6 decimals)
        assert_eq!(numeric.min, min, "{name} min");
        assert_eq!(numeric.max, max, "{name} max");
        if let Some(mean) = mean {
            assert_close(numeric.mean, mean, 1e-6, name);
        }
        assert_eq!(numeric.count, 344 - column(&profile, name).missing);
    }
}

#[test]
fn penguins_whole_numbers_without_a_point_still_count_as_numbers() {
    let profile = full_profile("penguins.csv");
    // Penguins: bill_length_mm has 34 whole numbers written without a point, e.g. `42`, and
    // bill_depth_mm 48, e.g. `18` (SOURCES.md); they are numbers like the rest
    for name in ["bill_length_mm", "bill_depth_mm"] {
        let profile_column = column(&profile, name);
        assert_eq!(profile_column.numeric_share, 1.0, "{name}");
        assert!(profile_column.non_numeric_examples.is_empty(), "{name}");
        assert_eq!(profile_column.kind, AttributeKind::Quantitative);
    }
    let depth = column(&profile, "bill_depth_mm");
    assert!(depth.samples.iter().any(|sample| sample == "18"));
}

#[test]
fn penguins_zero_meaning_from_names_and_values() {
    let profile = full_profile("penguins.csv");
    // year 2007..=2009 in a column named `year`: calendar years, zero is arbitrary
    // (Stevens 1946 interval scale; the rule is ours, documented in data::infer)
    assert_eq!(column(&profile, "year").zero, Some(ZeroMeaning::Arbitrary));
    // lengths in mm and masses in g are never negative here: zero means none (common practice)
    assert_eq!(
        column(&profile, "bill_length_mm").zero,
        Some(ZeroMeaning::Meaningful)
    );
    assert_eq!(
        column(&profile, "body_mass_g").zero,
        Some(ZeroMeaning::Meaningful)
    );
    assert_eq!(column(&profile, "species").zero, None);
}

#[test]
fn header_ranges_point_at_the_header_cells() {
    let profile = full_profile("penguins.csv");
    let text = std::fs::read(dataset("penguins.csv")).unwrap_or_default();
    for profile_column in &profile.columns {
        let Some((start, end)) = profile_column.header_range else {
            panic!("{} has no header range", profile_column.name)
        };
        assert_eq!(
            &text[start as usize..end as usize],
            profile_column.name.as_bytes()
        );
    }
}
