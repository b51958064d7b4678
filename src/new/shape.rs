//! Choosing the chart form of a starter story from the data's shape (see
//! the parent module's documentation for the rules).

use crescendo_data::ColType;

use super::profile::{ColumnProfile, Profile};
use super::roles::ColumnRole;
use super::trend::Trend;

/// The chart form chosen, with the roles of the columns. `agg` is the
/// aggregate a `by` step uses for the measure: `sum` for an amount, `mean`
/// for a rate or level (see [`super::roles`]).
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    /// A measure over time.
    Trend(TrendShape),
    /// Few periods: bars of `category` grouped by `period`.
    Periods {
        period: String,
        category: String,
        measure: String,
        agg: &'static str,
    },
    /// Two measures against each other; `group`: a text column whose
    /// values make one panel each (small multiples on one scale).
    Relationship {
        x: String,
        y: String,
        label: Option<String>,
        group: Option<String>,
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
        agg: &'static str,
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
    // Codes, identifiers and the parts of a time are never measures.
    let measures: Vec<&ColumnProfile> = p
        .columns
        .iter()
        .filter(usable)
        .filter(|c| c.ty == ColType::Number && c.role.is_measure())
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
        return Err(format!(
            "{} has no column of numbers to chart (codes, identifiers and quarter numbers are not measures)",
            p.file
        ));
    };
    let m = measure.name.clone();
    let agg = measure.role.aggregate();
    // a category: some repetition, not a name per row
    let category = texts
        .iter()
        .filter(|c| c.distinct >= 2 && c.distinct < p.rows)
        .min_by_key(|c| c.distinct);
    let part = p
        .columns
        .iter()
        .find(|c| matches!(c.role, ColumnRole::Quarter | ColumnRole::MonthNumber));
    let quarterly = part.is_some_and(|c| c.role == ColumnRole::Quarter);
    let parts = part.map(|c| (c.name.clone(), quarterly));
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
                    agg,
                });
            }
        } else {
            return Ok(trend_shape(p, time, &texts, &measures, parts));
        }
    }
    let names = texts.iter().find(|c| c.distinct == p.rows && p.rows > 1);
    // Two measures: their relationship, never their sum; in groups of a
    // few (up to eight panels), one panel per group.
    let group = category.filter(|c| c.distinct <= 8);
    if measures.len() >= 2 && (category.is_none() || group.is_some()) {
        return Ok(Shape::Relationship {
            x: measures[0].name.clone(),
            y: measures[1].name.clone(),
            label: names.filter(|n| n.distinct <= 30).map(|n| n.name.clone()),
            group: group.map(|g| g.name.clone()),
        });
    }
    if let Some(cat) = category {
        // the parts: the text column with the fewest values (two to four);
        // the bars: another text column. Only amounts stack: a stack of
        // rates or levels adds what does not add up.
        let part = texts
            .iter()
            .filter(|c| (2..=4).contains(&c.distinct) && c.distinct < p.rows)
            .min_by_key(|c| c.distinct)
            .filter(|_| agg == "sum");
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
            agg,
            horizontal: cat_full.longest > LONG_NAME,
            top: (cat_full.distinct > MAX_BARS && agg == "sum").then_some(MAX_BARS - 2),
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
                agg,
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
            group: None,
        });
    }
    Err(format!(
        "{} has numbers but no column that names or groups its rows",
        p.file
    ))
}

/// The trend of the first measure over `time` (see [`choose_shape`]).
fn trend_shape(
    p: &Profile,
    time: &ColumnProfile,
    texts: &[&ColumnProfile],
    measures: &[&ColumnProfile],
    parts: Option<(String, bool)>,
) -> Shape {
    // A text column that names each row with the time holds different
    // series (in a long file, different measures): one line each when there
    // are a few, else one of them; never a sum or a mean across it.
    // Otherwise a text column of a few values groups the rows into lines.
    let identifying = texts
        .iter()
        .filter(|c| c.distinct >= 2 && c.identifies_with.contains(&time.name))
        .min_by_key(|c| c.distinct);
    let series = match identifying {
        Some(c) if c.distinct <= MAX_LINES => Some(c.name.clone()),
        Some(_) => None,
        None => texts
            .iter()
            .filter(|c| c.distinct >= 2 && c.distinct <= MAX_LINES && c.distinct < p.rows)
            .max_by_key(|c| c.distinct)
            .map(|c| c.name.clone()),
    };
    let only = identifying
        .filter(|c| c.distinct > MAX_LINES)
        .map(|c| (c.name.clone(), c.first.clone()));
    let measure = measures.first();
    let parts = parts.filter(|_| time.ty == ColType::Year);
    // a year and a quarter: one quarterly time, named so that it takes no
    // column's name
    let made = parts
        .as_ref()
        .filter(|(_, quarterly)| *quarterly)
        .map(|(q, _)| (time.name.clone(), q.clone()));
    let name = ["period", "quarter_time", "year_and_quarter"]
        .into_iter()
        .find(|n| p.columns.iter().all(|c| c.name != *n))
        .unwrap_or("period_made");
    Shape::Trend(TrendShape {
        time: match made {
            Some(_) => name.to_string(),
            None => time.name.clone(),
        },
        measure: measure.map_or(String::new(), |m| m.name.clone()),
        agg: measure.map_or("mean", |m| m.role.aggregate()),
        series,
        parts: parts.filter(|(_, quarterly)| !quarterly).map(|(q, _)| q),
        made,
        other: measures.get(1).map(|c| c.name.clone()),
        other_agg: measures.get(1).map_or("mean", |c| c.role.aggregate()),
        only,
    })
}

/// How a measure is aggregated, in words.
fn aggregated(agg: &str, per: &str) -> String {
    if agg == "sum" {
        format!("an amount, summed per {per}")
    } else {
        format!("a rate or level, averaged per {per}, never summed")
    }
}

/// `time`, `measure`, optional `series`; `parts` names the quarter or
/// month-number column folded into the year; `other` a second measure,
/// drawn against the first in a scatter (never added to it).
#[derive(Clone, Debug, PartialEq)]
pub struct TrendShape {
    time: String,
    measure: String,
    agg: &'static str,
    series: Option<String>,
    parts: Option<String>,
    /// `(year, quarter)`: the time is made of these two columns as one
    /// quarterly time (`year_quarter(year, quarter)`), named `time`.
    made: Option<(String, String)>,
    other: Option<String>,
    other_agg: &'static str,
    /// A text column whose values are different measures (a long
    /// file) with too many of them for one line each: one is kept.
    only: Option<(String, String)>,
}

impl TrendShape {
    /// The trend as the story writer takes it.
    pub(super) fn borrowed(&self) -> Trend<'_> {
        fn pair(p: &Option<(String, String)>) -> Option<(&str, &str)> {
            p.as_ref().map(|(a, b)| (a.as_str(), b.as_str()))
        }
        Trend {
            time: &self.time,
            measure: &self.measure,
            agg: self.agg,
            series: self.series.as_deref(),
            parts: self.parts.as_deref(),
            made: pair(&self.made),
            other: self.other.as_deref(),
            other_agg: self.other_agg,
            only: pair(&self.only),
        }
    }
}

/// Why the form was chosen, in one line.
pub(super) fn why(shape: &Shape) -> String {
    match shape {
        Shape::Trend(TrendShape {
            time,
            measure,
            agg,
            series,
            parts,
            made,
            other,
            only,
            ..
        }) => format!(
            "line of {measure} over {time}{}{}{} (change over time; {}){}",
            parts
                .as_ref()
                .map_or(String::new(), |q| format!(" ({q} folded into {time})")),
            made.as_ref().map_or(String::new(), |(y, q)| format!(
                " ({y} and {q} made one quarterly time)"
            )),
            series
                .as_ref()
                .map_or(String::new(), |s| format!(", one line per {s}")),
            aggregated(agg, time),
            other.as_ref().map_or(String::new(), |o| format!(
                "; scatter of {o} against {measure} (two measures, never added)"
            ))
        ) + &only.as_ref().map_or(String::new(), |(c, v)| {
            format!("; only {c} = {v} (each {c} is its own series, never averaged together)")
        }),
        Shape::Periods {
            period,
            category,
            measure,
            agg,
        } => format!(
            "bars of {measure} by {category}, grouped by {period} (fewer than three periods: too few for a line; {})",
            aggregated(agg, category)
        ),
        Shape::Relationship { x, y, group, .. } => format!(
            "scatter of {y} against {x}{} (relationship of two measures, never their sum)",
            group
                .as_ref()
                .map_or(String::new(), |g| format!(", one panel per {g} on one scale"))
        ),
        Shape::PartOfWhole {
            category,
            part,
            measure,
        } => format!(
            "bars of {measure} by {category}, stacked by {part} (part of a whole with few parts)"
        ),
        Shape::Distribution { name, measure } => {
            format!("dot plot of {measure}, one dot per {name} (distribution)")
        }
        Shape::Comparison {
            category,
            measure,
            horizontal,
            agg,
            ..
        } => format!(
            "{} bars of {measure} by {category}, sorted (comparison of categories{}; {})",
            if *horizontal { "horizontal" } else { "vertical" },
            if *horizontal { "; long names" } else { "" },
            aggregated(agg, category)
        ),
    }
}
