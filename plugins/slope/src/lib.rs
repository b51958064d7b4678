//! A crescendo chart-form plugin: the slope chart.
//!
//! Two periods, one line per category from its value in the first period
//! (left) to its value in the second (right). Options: `category COL`,
//! `value COL`, `period COL` (the column holding the time or period label;
//! it must hold exactly two distinct periods).
//!
//! The vertical scale spans the data, not zero: a slope chart encodes values
//! by position and change by angle, not by length (common practice).

use std::collections::BTreeMap;

use crescendo_plugin::sdk::{
    cell_number, cell_text, column, decimals_needed, extent, shown, spread, text_width, Form,
    Linear, Shown,
};
use crescendo_plugin::{Anchor, Column, Drawing, OptionDecl, Primitive, Pt, Request, Role, Space};

/// The slope chart form.
pub struct SlopeChart;

impl Form for SlopeChart {
    fn render(&self, request: &Request) -> Result<Drawing, String> {
        slope(request)
    }

    fn options(&self) -> Vec<OptionDecl> {
        vec![
            OptionDecl::column("category")
                .required()
                .about("one line per value"),
            OptionDecl::column("value")
                .required()
                .of_kinds(&["number"])
                .about("where each line starts and ends"),
            OptionDecl::column("period")
                .required()
                .about("the two periods compared, left and right"),
        ]
    }
}

crescendo_plugin::export_plugin! {
    name: "slope",
    version: "0.1.0",
    forms: { "slope" => SlopeChart },
}

/// Space between a line end and its label.
const PAD: f64 = 6.0;
/// The most items named in the description.
const MENTIONS: usize = 3;

struct Item {
    name: String,
    values: [f64; 2],
    shown: Shown,
}

fn slope(r: &Request) -> Result<Drawing, String> {
    let cat = column(r, "category")?;
    let val = column(r, "value")?;
    let per = column(r, "period")?;
    if val.kind != "number" {
        return Err(format!(
            "option `value` needs a column of numbers; `{}` holds {}",
            val.name, val.kind
        ));
    }
    let rows = cat.cells.len();
    if val.cells.len() != rows || per.cells.len() != rows {
        return Err("the view's columns have different lengths".into());
    }
    let labels = two_periods(per)?;
    let (items, left_out) = items_of(r, [cat, val, per], &labels)?;

    let decimals = decimals_needed(items.iter().flat_map(|i| i.values), 2);
    // numbers and periods as the story's locale writes them
    let fmt = |v: f64| r.writing.number(v, decimals);
    let labels = labels.map(|l| r.writing.time(&l).to_string());
    Ok(Drawing {
        primitives: draw(r, &items, &labels, &fmt),
        data_domain: None,
        description: Some(describe(&items, &labels, &cat.name, &left_out, &fmt)),
    })
}

/// The two periods of column `per`, in time order for time columns,
/// numeric order for numbers, order of appearance for text; an error
/// naming what it holds when there are not exactly two.
fn two_periods(per: &Column) -> Result<[String; 2], String> {
    let mut periods: Vec<(String, Option<f64>)> = Vec::new();
    for cell in &per.cells {
        if let Some(label) = cell_text(cell) {
            if !periods.iter().any(|(p, _)| *p == label) {
                periods.push((label, cell_number(cell)));
            }
        }
    }
    match per.kind.as_str() {
        "date" | "month" | "year" => periods.sort_by(|a, b| a.0.cmp(&b.0)),
        "number" => {
            periods.sort_by(|a, b| a.1.unwrap_or(f64::NAN).total_cmp(&b.1.unwrap_or(f64::NAN)))
        }
        _ => {}
    }
    if periods.len() != 2 {
        let mut found: Vec<&str> = periods.iter().take(6).map(|(p, _)| p.as_str()).collect();
        if periods.len() > 6 {
            found.push("…");
        }
        let listed = if found.is_empty() {
            String::new()
        } else {
            format!(": {}", found.join(", "))
        };
        return Err(format!(
            "a slope chart needs exactly two periods in column `{}`, but it holds {}{listed}",
            per.name,
            periods.len()
        ));
    }
    Ok([periods[0].0.clone(), periods[1].0.clone()])
}

/// The categories with a value for both periods, in order of appearance,
/// and the ones left out (with the period they lack).
fn items_of(
    r: &Request,
    [cat, val, per]: [&Column; 3],
    labels: &[String; 2],
) -> Result<(Vec<Item>, Vec<String>), String> {
    let mut order: Vec<String> = Vec::new();
    let mut values: BTreeMap<String, [Option<f64>; 2]> = BTreeMap::new();
    for i in 0..cat.cells.len() {
        let (Some(name), Some(period)) = (cell_text(&cat.cells[i]), cell_text(&per.cells[i]))
        else {
            continue;
        };
        let side = if period == labels[0] { 0 } else { 1 };
        let slot = values.entry(name.clone()).or_insert_with(|| {
            order.push(name.clone());
            [None, None]
        });
        let Some(v) = cell_number(&val.cells[i]) else {
            continue;
        };
        if slot[side].is_some() {
            return Err(format!(
                "`{name}` has more than one value for {}",
                labels[side]
            ));
        }
        slot[side] = Some(v);
    }
    let mut items = Vec::new();
    let mut left_out = Vec::new();
    for name in order {
        match values.get(&name) {
            Some([Some(a), Some(b)]) => {
                let shown = shown(r, &name);
                items.push(Item {
                    name,
                    values: [*a, *b],
                    shown,
                });
            }
            Some([a, _]) => {
                let missing = if a.is_none() { &labels[0] } else { &labels[1] };
                left_out.push(format!("{name} (no value for {missing})"));
            }
            None => {}
        }
    }
    if items.is_empty() {
        return Err(format!(
            "no `{}` has values for both {} and {}",
            cat.name, labels[0], labels[1]
        ));
    }
    Ok((items, left_out))
}

/// Where the two period axes and the labels go. Hidden items count here,
/// so nothing moves when they appear.
struct Layout {
    w: f64,
    h: f64,
    line: f64,
    x_left: f64,
    x_right: f64,
    top: f64,
    bottom: f64,
}

impl Layout {
    fn pt(&self, x: f64, y: f64) -> Pt {
        Pt {
            x: x.clamp(0.0, self.w),
            y: y.clamp(0.0, self.h),
            space: Space::Plot,
        }
    }
}

/// The chart's primitives: the period titles and axes, then one line with
/// its end points and labels per shown item, context first and focus last
/// so the spotlighted lines lie on top.
fn draw(
    r: &Request,
    items: &[Item],
    labels: &[String; 2],
    fmt: &dyn Fn(f64) -> String,
) -> Vec<Primitive> {
    // Lay labels out for the host's text size.
    let font = r.label_size.clamp(8.0, 72.0);
    let line = (font * 1.25).ceil();
    let head = line + 10.0;
    let (w, h) = (r.area.width, r.area.height);
    let left_texts: Vec<String> = items
        .iter()
        .map(|i| format!("{} {}", i.name, fmt(i.values[0])))
        .collect();
    let right_texts: Vec<String> = items.iter().map(|i| fmt(i.values[1])).collect();
    let widest = |texts: &[String]| {
        texts
            .iter()
            .map(|t| text_width(t, font))
            .fold(0.0, f64::max)
    };
    let x_left = (widest(&left_texts) + 2.0 * PAD).min(0.45 * w);
    let x_right = (w - widest(&right_texts) - 2.0 * PAD)
        .max(x_left + 0.2 * w)
        .min(w);
    let top = (head + line / 2.0).min(h / 2.0);
    let bottom = (h - line / 2.0).max(top);
    let at = Layout {
        w,
        h,
        line,
        x_left,
        x_right,
        top,
        bottom,
    };
    let mut prims = axes(&at, labels);
    lines(&at, items, [&left_texts, &right_texts], &mut prims);
    prims
}

/// The period titles above the two axes, and the axes.
fn axes(at: &Layout, labels: &[String; 2]) -> Vec<Primitive> {
    let (line, top, bottom) = (at.line, at.top, at.bottom);
    vec![
        Primitive::Text {
            at: at.pt(at.x_left, 0.0),
            text: labels[0].clone(),
            anchor: Anchor::Middle,
            bold: false,
            role: Role::Axis,
        },
        Primitive::Text {
            at: at.pt(at.x_right, 0.0),
            text: labels[1].clone(),
            anchor: Anchor::Middle,
            bold: false,
            role: Role::Axis,
        },
        Primitive::Line {
            from: at.pt(at.x_left, top - line / 2.0),
            to: at.pt(at.x_left, bottom),
            role: Role::Axis,
        },
        Primitive::Line {
            from: at.pt(at.x_right, top - line / 2.0),
            to: at.pt(at.x_right, bottom),
            role: Role::Axis,
        },
    ]
}

/// One line per shown item from its first value to its second, its end
/// points, and its labels (spread so they do not overlap).
fn lines(at: &Layout, items: &[Item], [left, right]: [&[String]; 2], prims: &mut Vec<Primitive>) {
    let (line, top, bottom, h) = (at.line, at.top, at.bottom, at.h);
    let [lo, hi] = extent(items.iter().flat_map(|i| i.values)).unwrap_or([0.0, 1.0]);
    let y = Linear::new([lo, hi], [bottom, top]);
    let ys = |side: usize| -> Vec<f64> { items.iter().map(|i| y.map(i.values[side])).collect() };
    let (ys_left, ys_right) = (ys(0), ys(1));
    let label_top = |centres: Vec<f64>| -> Vec<f64> {
        spread(&centres, line, top, bottom)
            .into_iter()
            .map(|c| (c - line / 2.0).clamp(0.0, (h - line).max(0.0)))
            .collect()
    };
    let (at_left, at_right) = (label_top(ys_left.clone()), label_top(ys_right.clone()));
    for pass in [Role::Context, Role::Focus] {
        for (k, item) in items.iter().enumerate() {
            let role = match item.shown {
                Shown::Hidden => continue,
                Shown::As(Role::Focus) => Role::Focus,
                Shown::As(_) => Role::Context,
            };
            if role != pass {
                continue;
            }
            let bold = role == Role::Focus;
            let radius = if bold { 3.5 } else { 2.5 };
            let (a, b) = (at.pt(at.x_left, ys_left[k]), at.pt(at.x_right, ys_right[k]));
            prims.push(Primitive::Line {
                from: a,
                to: b,
                role,
            });
            prims.push(Primitive::Circle {
                center: a,
                radius,
                role,
            });
            prims.push(Primitive::Circle {
                center: b,
                radius,
                role,
            });
            prims.push(Primitive::Text {
                at: at.pt(at.x_left - PAD, at_left[k]),
                text: left[k].clone(),
                anchor: Anchor::End,
                bold,
                role,
            });
            prims.push(Primitive::Text {
                at: at.pt(at.x_right + PAD, at_right[k]),
                text: right[k].clone(),
                anchor: Anchor::Start,
                bold,
                role,
            });
        }
    }
}

/// "Slope chart of route from 2019 to 2024, 5 items: Harbour Loop rose from
/// 4,100 to 9,350. 3 rose, 2 fell."
fn describe(
    items: &[Item],
    labels: &[String; 2],
    category: &str,
    left_out: &[String],
    fmt: &dyn Fn(f64) -> String,
) -> String {
    let visible: Vec<&Item> = items.iter().filter(|i| i.shown != Shown::Hidden).collect();
    let mut text = format!(
        "Slope chart of {category} from {} to {}, {} {}",
        labels[0],
        labels[1],
        visible.len(),
        if visible.len() == 1 { "item" } else { "items" }
    );
    let focus: Vec<&Item> = visible
        .iter()
        .copied()
        .filter(|i| i.shown == Shown::As(Role::Focus))
        .collect();
    let mentioned: Vec<&Item> = if focus.is_empty() {
        // The largest change (first one on ties).
        let mut best: Option<&Item> = None;
        for i in &visible {
            let change = (i.values[1] - i.values[0]).abs();
            if best.is_none_or(|b| change > (b.values[1] - b.values[0]).abs()) {
                best = Some(i);
            }
        }
        best.into_iter().collect()
    } else {
        focus.into_iter().take(MENTIONS).collect()
    };
    let phrases: Vec<String> = mentioned
        .iter()
        .map(|i| {
            let [a, b] = i.values;
            let verb = if b > a {
                "rose"
            } else if b < a {
                "fell"
            } else {
                "stayed"
            };
            if verb == "stayed" {
                format!("{} stayed at {}", i.name, fmt(a))
            } else {
                format!("{} {verb} from {} to {}", i.name, fmt(a), fmt(b))
            }
        })
        .collect();
    if !phrases.is_empty() {
        text.push_str(": ");
        text.push_str(&phrases.join("; "));
    }
    text.push('.');
    let rose = visible.iter().filter(|i| i.values[1] > i.values[0]).count();
    let fell = visible.iter().filter(|i| i.values[1] < i.values[0]).count();
    text.push_str(&format!(" {rose} rose, {fell} fell."));
    if !left_out.is_empty() {
        let shown: Vec<&str> = left_out.iter().take(MENTIONS).map(String::as_str).collect();
        let more = if left_out.len() > MENTIONS {
            format!(" and {} more", left_out.len() - MENTIONS)
        } else {
            String::new()
        };
        text.push_str(&format!(" Left out: {}{more}.", shown.join(", ")));
    }
    text
}

#[cfg(test)]
mod tests;
