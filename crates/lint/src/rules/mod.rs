//! The rules, one per file.

mod axes_shift;
mod axis_untitled;
mod bars_cramped_labels;
mod bars_crowded;
mod bars_off_zero;
mod bars_unsorted;
mod colour_key_text;
mod conclusion_missing;
mod figure_echoes_headline;
mod focus_confusable;
mod focus_outshone;
mod frame_empty;
mod grid_heavy;
mod headline_cut;
mod line_crowded;
mod line_over_categories;
mod line_too_short;
mod lines_tangle;
mod marks_faint;
mod measure_unnamed;
mod mention_unmarked;
mod note_covers_data;
mod panels_own_scales;
mod pie_crowded;
mod shades_crowded;
mod sign_doubled;
mod small_counts;
mod source_missing;
mod spotlight_crowd;
mod stack_spotlight_floats;
mod text_cut;
mod text_faint;
mod text_small;
mod text_unfinished;
mod ticks_crowded;
mod trailing_zeros;
mod util;

#[cfg(test)]
mod tests;

use crate::Rule;

pub use focus_confusable::THRESHOLD as CONFUSABLE_THRESHOLD;

/// Every rule, in the order `crescendo explain` lists them.
pub static RULES: &[&Rule] = &[
    &bars_off_zero::RULE,
    &line_over_categories::RULE,
    &bars_unsorted::RULE,
    &bars_cramped_labels::RULE,
    &bars_crowded::RULE,
    &lines_tangle::RULE,
    &line_too_short::RULE,
    &line_crowded::RULE,
    &axis_untitled::RULE,
    &measure_unnamed::RULE,
    &ticks_crowded::RULE,
    &trailing_zeros::RULE,
    &sign_doubled::RULE,
    &axes_shift::RULE,
    &headline_cut::RULE,
    &text_cut::RULE,
    &text_small::RULE,
    &text_faint::RULE,
    &marks_faint::RULE,
    &grid_heavy::RULE,
    &focus_confusable::RULE,
    &focus_outshone::RULE,
    &spotlight_crowd::RULE,
    &colour_key_text::RULE,
    &pie_crowded::RULE,
    &shades_crowded::RULE,
    &stack_spotlight_floats::RULE,
    &panels_own_scales::RULE,
    &frame_empty::RULE,
    &figure_echoes_headline::RULE,
    &note_covers_data::RULE,
    &mention_unmarked::RULE,
    &small_counts::RULE,
    &source_missing::RULE,
    &conclusion_missing::RULE,
    &text_unfinished::RULE,
];
