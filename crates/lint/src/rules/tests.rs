//! Tests of the rules' text helpers (the rules themselves are tested
//! end to end in `tests/lint.rs`).

use super::colour_key_text::colour_phrase;
use super::figure_echoes_headline::echoes;
use super::mention_unmarked::{months_named, names};
use super::sign_doubled::doubled;
use super::text_unfinished::placeholder;
use super::trailing_zeros::has_trailing_zero;

// `colour-key-text`

#[test]
fn colour_phrases() {
    assert_eq!(
        colour_phrase("The orange line pulled away").as_deref(),
        Some("orange line")
    );
    assert_eq!(colour_phrase("shown in Blue.").as_deref(), Some("in blue"));
    assert_eq!(colour_phrase("Greyhound buses rose"), None);
    assert_eq!(colour_phrase("Green Park leads"), None);
}

// `figure-echoes-headline`

#[test]
fn a_whole_number_in_the_headline_echoes() {
    for (headline, figure, want) in [
        ("E-books were 31% of loans", "31%", true),
        ("E-books were 31%", "31%", true),
        ("E-books were 131% of loans", "31%", false),
        ("Up 2.31% on last year", "31%", false),
        ("E-books have become a fixture", "31%", false),
        ("Loans grew 3.4×, a record", "3.4×", true),
        ("Chapter one", "one", false),
    ] {
        assert_eq!(echoes(headline, figure), want, "{headline}");
    }
}

// `mention-unmarked`

#[test]
fn whole_names_only() {
    assert!(names("At Quarry Street, e-books rose", "Quarry Street"));
    assert!(!names("Northwestern grew", "North"));
    assert!(names("North grew", "North"));
    assert!(!names("Team C2 led", "C2x"));
}

#[test]
fn months_as_people_write_them() {
    assert_eq!(
        months_named("after evening swims began in April 2023; Feb 2024 too"),
        vec![
            (2023.0 * 12.0 + 3.0, "2023-04".to_string()),
            (2024.0 * 12.0 + 1.0, "2024-02".to_string())
        ]
    );
    assert!(months_named("In May we grew 2023 visits").is_empty());
}

// `sign-doubled`

#[test]
fn direction_words_before_signed_figures() {
    for (text, figure, want) in [
        ("Loans up +103%", "+103%", true),
        ("Visits fell by \u{2212}4%", "\u{2212}4%", true),
        ("Visits Fell, -4", "-4", false), // a comma: not right before
        ("Visits fell -4", "-4", true),
        ("Loans +103% on last year", "+103%", false),
        ("Loans up 103%", "103%", false),
        ("Setup +3", "+3", false),
        ("A change of +3", "+3", false),
    ] {
        assert_eq!(doubled(text, figure), want, "{text}");
    }
}

// `text-unfinished`

#[test]
fn finds_placeholders_as_whole_words_only() {
    assert_eq!(placeholder("TODO: your team"), Some("TODO"));
    assert_eq!(placeholder("Sales (TBD)"), Some("TBD"));
    assert_eq!(placeholder("Lorem ipsum dolor"), Some("lorem ipsum"));
    // a word that merely contains the letters, or lower case, is text
    assert_eq!(placeholder("TODOS los datos"), None);
    assert_eq!(placeholder("todo el año"), None);
    assert_eq!(placeholder("Visits doubled"), None);
}

// `trailing-zeros`

#[test]
fn trailing_zero_figures() {
    for (s, want) in [
        ("20.0%", true),
        ("2.50", true),
        ("1.0k", true),
        ("20%", false),
        ("2.5", false),
        ("100", false),
        ("Jul 2024", false),
    ] {
        assert_eq!(has_trailing_zero(s, "."), want, "{s}");
    }
    // a decimal comma: "12.300" is twelve thousand three hundred
    assert!(!has_trailing_zero("12.300", ","));
    assert!(has_trailing_zero("20,0 %", ","));
}
