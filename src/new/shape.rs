//! Choosing the chart form of a starter story from the data's shape (see
//! the parent module's documentation for the rules).

use crescendo_data::ColType;

use super::profile::{ColumnProfile, Profile};

/// The chart form chosen, with the roles of the columns.
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    /// `time`, `measure`, optional `series`.
    Trend {
        time: String,
        measure: String,
        series: Option<String>,
    },
    /// Few periods: bars of `category` grouped by `period`.
    Periods {
        period: String,
        category: String,
        measure: String,
    },
    Relationship {
        x: String,
        y: String,
        label: Option<String>,
    },
    PartOfWhole {
        category: String,
        part: String,
        measure: String,
    },
    Distribution {
        name: String,
        measure: String,
    },
    Comparison {
        category: String,
        measure: String,
        horizontal: bool,
        top: Option<usize>,
    },
}

/// Most bars the lint accepts in one chart (`bars-crowded`) and most lines
/// (`lines-tangle`), less a margin.
const MAX_BARS: usize = 12;
const MAX_LINES: usize = 6;
/// Names longer than this go on a horizontal bar chart (common practice:
/// long labels read badly under vertical bars).
const LONG_NAME: usize = 12;
/// Fewer rows than this, one per name, are ranked rather than shown as a
/// spread.
const MIN_SPREAD: usize = 20;

/// Choose the chart form from the data's shape (see the module docs).
pub fn choose_shape(p: &Profile) -> Result<Shape, String> {
    let usable = |c: &&ColumnProfile| c.nameable && c.distinct > 0;
    let measures: Vec<&ColumnProfile> = p
        .columns
        .iter()
        .filter(usable)
        .filter(|c| c.ty == ColType::Number)
        .collect();
    let times: Vec<&ColumnProfile> = p
        .columns
        .iter()
        .filter(usable)
        .filter(|c| c.ty.is_time())
        .collect();
    let texts: Vec<&ColumnProfile> = p
        .columns
        .iter()
        .filter(usable)
        .filter(|c| c.ty == ColType::Text)
        .collect();
    let Some(measure) = measures.first() else {
        return Err(format!("{} has no column of numbers to chart", p.file));
    };
    let m = measure.name.clone();
    // a category: some repetition, not a name per row
    let category = texts
        .iter()
        .filter(|c| c.distinct >= 2 && c.distinct < p.rows)
        .min_by_key(|c| c.distinct);
    if let Some(time) = times
        .iter()
        .find(|t| t.ty != ColType::Year || t.distinct >= 3)
        .or(times.first())
    {
        if time.distinct < 3 {
            if let Some(cat) = category {
                return Ok(Shape::Periods {
                    period: time.name.clone(),
                    category: cat.name.clone(),
                    measure: m,
                });
            }
        } else {
            let series = texts
                .iter()
                .filter(|c| c.distinct >= 2 && c.distinct <= MAX_LINES && c.distinct < p.rows)
                .max_by_key(|c| c.distinct)
                .map(|c| c.name.clone());
            return Ok(Shape::Trend {
                time: time.name.clone(),
                measure: m,
                series,
            });
        }
    }
    let names = texts.iter().find(|c| c.distinct == p.rows && p.rows > 1);
    if measures.len() >= 2 && category.is_none() {
        return Ok(Shape::Relationship {
            x: measures[0].name.clone(),
            y: measures[1].name.clone(),
            label: names.filter(|n| n.distinct <= 30).map(|n| n.name.clone()),
        });
    }
    if let Some(cat) = category {
        // the parts: the text column with the fewest values (two to four);
        // the bars: another text column
        let part = texts
            .iter()
            .filter(|c| (2..=4).contains(&c.distinct) && c.distinct < p.rows)
            .min_by_key(|c| c.distinct);
        if let Some(part) = part {
            let bars = texts
                .iter()
                .filter(|c| c.name != part.name && c.distinct >= 2 && c.distinct <= MAX_BARS)
                .max_by_key(|c| c.distinct);
            if let Some(bars) = bars {
                return Ok(Shape::PartOfWhole {
                    category: bars.name.clone(),
                    part: part.name.clone(),
                    measure: m,
                });
            }
        }
        let cat_full = texts
            .iter()
            .filter(|c| c.distinct >= 2 && c.distinct < p.rows)
            .max_by_key(|c| c.distinct)
            .unwrap_or(cat);
        return Ok(Shape::Comparison {
            category: cat_full.name.clone(),
            measure: m,
            horizontal: cat_full.longest > LONG_NAME,
            top: (cat_full.distinct > MAX_BARS).then_some(MAX_BARS - 2),
        });
    }
    if let Some(n) = names {
        // many rows, one value each: a spread; a few: a ranking
        return Ok(if p.rows >= MIN_SPREAD {
            Shape::Distribution {
                name: n.name.clone(),
                measure: m,
            }
        } else {
            Shape::Comparison {
                category: n.name.clone(),
                measure: m,
                horizontal: n.longest > LONG_NAME,
                top: None,
            }
        });
    }
    if measures.len() >= 2 {
        return Ok(Shape::Relationship {
            x: measures[0].name.clone(),
            y: measures[1].name.clone(),
            label: None,
        });
    }
    Err(format!(
        "{} has numbers but no column that names or groups its rows",
        p.file
    ))
}

/// Why the form was chosen, in one line.
pub(super) fn why(shape: &Shape) -> String {
    match shape {
        Shape::Trend { time, measure, series } => format!(
            "line of {measure} over {time}{} (change over time)",
            series
                .as_ref()
                .map_or(String::new(), |s| format!(", one line per {s}"))
        ),
        Shape::Periods { period, category, measure } => format!(
            "bars of {measure} by {category}, grouped by {period} (fewer than three periods: too few for a line)"
        ),
        Shape::Relationship { x, y, .. } => {
            format!("scatter of {y} against {x} (relationship of two measures)")
        }
        Shape::PartOfWhole { category, part, measure } => format!(
            "bars of {measure} by {category}, stacked by {part} (part of a whole with few parts)"
        ),
        Shape::Distribution { name, measure } => {
            format!("dot plot of {measure}, one dot per {name} (distribution)")
        }
        Shape::Comparison { category, measure, horizontal, .. } => format!(
            "{} bars of {measure} by {category}, sorted (comparison of categories{})",
            if *horizontal { "horizontal" } else { "vertical" },
            if *horizontal { "; long names" } else { "" }
        ),
    }
}
