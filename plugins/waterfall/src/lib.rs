//! A crescendo chart-form plugin: the waterfall (bridge) chart.
//!
//! Options: `category COL` and `value COL`. The first row is the start
//! value; every following row is a signed step; the plugin computes the end
//! total itself and draws it as the last bar, labelled `End`. When the last
//! row's category is `End` or `Total` (any case), that row is not a step but
//! the total the data claims: the plugin checks it against start + steps and
//! refuses the chart, naming both numbers, when they differ. See README.md.

use crescendo_plugin::sdk::{
    cell_number, cell_text, column, decimals_needed, extent, format_number, shown, Form, Linear,
    Shown,
};
use crescendo_plugin::{Anchor, Column, Drawing, OptionDecl, Primitive, Pt, Request, Role, Space};

/// The waterfall form.
pub struct Waterfall;

impl Form for Waterfall {
    fn render(&self, request: &Request) -> Result<Drawing, String> {
        waterfall(request)
    }

    fn options(&self) -> Vec<OptionDecl> {
        vec![
            OptionDecl::column("category")
                .required()
                .about("the start, each step and the end, in order"),
            OptionDecl::column("value")
                .required()
                .of_kinds(&["number"])
                .about("the start value, then each signed step"),
        ]
    }
}

crescendo_plugin::export_plugin! {
    name: "waterfall",
    version: "0.1.0",
    forms: { "waterfall" => Waterfall },
}

/// Share of each bar's slot the bar fills.
const FILL: f64 = 0.62;
/// Relative tolerance of the total check (relative to the largest of the two
/// totals and the sum of the absolute values added up).
const TOLERANCE: f64 = 1e-9;

#[derive(Clone, Copy, Debug, PartialEq)]
enum Kind {
    Start,
    Step,
    End,
}

struct Bar {
    label: String,
    kind: Kind,
    /// The bar runs from `from` to `to` in data units.
    from: f64,
    to: f64,
    shown: Shown,
}

impl Bar {
    fn value(&self) -> f64 {
        self.to - self.from
    }
}

fn is_total_label(s: &str) -> bool {
    let s = s.trim();
    s.eq_ignore_ascii_case("end") || s.eq_ignore_ascii_case("total")
}

fn waterfall(r: &Request) -> Result<Drawing, String> {
    let cat = column(r, "category")?;
    let val = column(r, "value")?;
    if val.kind != "number" {
        return Err(format!(
            "option `value` needs a column of numbers; `{}` holds {}",
            val.name, val.kind
        ));
    }
    if val.cells.len() != cat.cells.len() {
        return Err("the view's columns have different lengths".into());
    }
    let (rows, claimed) = rows_of(cat, val)?;
    let bars = bars_of(r, &rows, claimed)?;
    let decimals = decimals_needed(bars.iter().map(Bar::value), 2);
    Ok(Drawing {
        primitives: draw(r, &bars, decimals)?,
        data_domain: None,
        description: Some(describe(r, &bars, decimals)),
    })
}

/// A category and its value.
type Row = (String, f64);

/// The start and step rows, and the total the data claims in its last
/// row (`End` or `Total`), if it does.
fn rows_of(cat: &Column, val: &Column) -> Result<(Vec<Row>, Option<Row>), String> {
    let mut rows: Vec<Row> = Vec::with_capacity(cat.cells.len());
    for (i, (c, v)) in cat.cells.iter().zip(&val.cells).enumerate() {
        let name = cell_text(c).ok_or_else(|| format!("row {} has no `{}`", i + 1, cat.name))?;
        let value = cell_number(v)
            .ok_or_else(|| format!("`{name}` (row {}) has no `{}` value", i + 1, val.name))?;
        rows.push((name, value));
    }
    // The data's own total, if any, must be the last row.
    let claimed = match rows.last() {
        Some((name, _)) if rows.len() > 1 && is_total_label(name) => rows.pop(),
        _ => None,
    };
    if let Some((i, (name, _))) = rows
        .iter()
        .enumerate()
        .find(|(_, (n, _))| is_total_label(n))
    {
        return Err(format!(
            "row {} is called `{name}`, which is reserved for the total in the last row",
            i + 1
        ));
    }
    if rows.len() < 2 {
        return Err(format!(
            "a waterfall needs a start row and at least one step in `{}`; the view has {} row{}",
            cat.name,
            rows.len(),
            if rows.len() == 1 { "" } else { "s" }
        ));
    }
    Ok((rows, claimed))
}

/// The bars: the start, one per step on the running total, and the end
/// total, checked against the data's claimed total.
fn bars_of(r: &Request, rows: &[Row], claimed: Option<Row>) -> Result<Vec<Bar>, String> {
    let mut bars = Vec::with_capacity(rows.len() + 1);
    let (start_name, start) = rows[0].clone();
    bars.push(Bar {
        shown: shown(r, &start_name),
        label: start_name,
        kind: Kind::Start,
        from: 0.0,
        to: start,
    });
    let mut total = start;
    let mut magnitude = start.abs();
    for (name, step) in &rows[1..] {
        bars.push(Bar {
            label: name.clone(),
            kind: Kind::Step,
            from: total,
            to: total + step,
            shown: shown(r, name),
        });
        total += step;
        magnitude += step.abs();
    }
    if !total.is_finite() {
        return Err("the start and steps add up to a number too large to draw".into());
    }
    let end_label = match &claimed {
        Some((name, given)) => {
            let scale = given.abs().max(total.abs()).max(magnitude);
            if (given - total).abs() > TOLERANCE * scale {
                return Err(format!(
                    "the `{name}` row says {}, but the start and the steps add up to {}",
                    format_number(*given, 9),
                    format_number(total, 9)
                ));
            }
            name.trim().to_string()
        }
        None => "End".to_string(),
    };
    bars.push(Bar {
        shown: shown(r, &end_label),
        label: end_label,
        kind: Kind::End,
        from: 0.0,
        to: total,
    });
    Ok(bars)
}

/// The chart's primitives: one slot per bar, with connectors between
/// shown bars and the zero line; value labels above, categories below,
/// drawn last. Category names wrap onto up to [`NAME_LINES`] lines under
/// their bar; a name that cannot fit so is an error, never cut.
fn draw(r: &Request, bars: &[Bar], decimals: usize) -> Result<Vec<Primitive>, String> {
    // Lay labels out for the host's text size.
    let font = r.label_size.clamp(8.0, 72.0);
    let line = (font * 1.25).ceil();
    let label_of = |b: &Bar| match b.kind {
        Kind::Step => r.writing.signed(b.value(), decimals),
        _ => r.writing.number(b.value(), decimals),
    };
    let (w, h) = (r.area.width, r.area.height);
    let slot = w / bars.len() as f64;
    let bar_w = slot * FILL;
    // DejaVu Sans Bold averages about 0.7 em a character (from its metrics)
    let max_chars = ((slot / (font * 0.7)).floor() as usize).max(1);
    let names = (bars.iter())
        .map(|b| wrap_name(&b.label, max_chars))
        .collect::<Result<Vec<_>, _>>()?;
    let rows = names.iter().map(Vec::len).max().unwrap_or(1).max(1) as f64;
    let top = (line + 4.0).min(h / 3.0);
    let bottom = (h - rows * line - 6.0).max(top + 1.0).min(h);
    let [lo, hi] =
        extent(bars.iter().flat_map(|b| [b.from, b.to]).chain([0.0])).unwrap_or([0.0, 1.0]);
    let y = Linear::new([lo, hi], [bottom, top]);
    let pt = |x: f64, y: f64| Pt {
        x: x.clamp(0.0, w),
        y: y.clamp(0.0, h),
        space: Space::Plot,
    };

    let mut prims = Vec::new();
    let mut labels = Vec::new();
    for (i, bar) in bars.iter().enumerate() {
        let role = match (bar.shown, bar.kind) {
            (Shown::Hidden, _) => continue,
            (Shown::As(Role::Focus), _) => Role::Focus,
            (_, Kind::Step) => Role::Context,
            (_, _) => Role::Axis,
        };
        let bold = role == Role::Focus;
        let x0 = slot * i as f64 + (slot - bar_w) / 2.0;
        let (high, low) = (bar.from.max(bar.to), bar.from.min(bar.to));
        prims.push(Primitive::Rect {
            from: pt(x0, y.map(high)),
            to: pt(x0 + bar_w, y.map(low)),
            role,
        });
        let centre = x0 + bar_w / 2.0;
        labels.push(Primitive::Text {
            at: pt(centre, y.map(high) - line - 2.0),
            text: label_of(bar),
            anchor: Anchor::Middle,
            bold,
            role,
        });
        let lines = names.get(i).map(Vec::as_slice).unwrap_or_default();
        for (k, text) in lines.iter().enumerate() {
            labels.push(Primitive::Text {
                at: pt(centre, h - (rows - k as f64) * line),
                text: text.clone(),
                anchor: Anchor::Middle,
                bold,
                role: Role::Axis,
            });
        }
        // A connector from this bar's end to the next bar, when both show.
        if let Some(next) = bars.get(i + 1) {
            if next.shown != Shown::Hidden {
                let level = y.map(bar.to);
                let next_x0 = slot * (i + 1) as f64 + (slot - bar_w) / 2.0;
                prims.push(Primitive::Line {
                    from: pt(x0 + bar_w, level),
                    to: pt(next_x0, level),
                    role: Role::Annotation,
                });
            }
        }
    }
    let zero = y.map(0.0);
    prims.push(Primitive::Line {
        from: pt(0.0, zero),
        to: pt(w, zero),
        role: Role::Axis,
    });
    prims.extend(labels);
    Ok(prims)
}

/// Most lines a category name may take under its bar.
const NAME_LINES: usize = 3;

/// `name` wrapped at its spaces into lines of at most `max` characters.
/// A name that needs more than [`NAME_LINES`] lines, or holds a word
/// longer than a line, cannot fit under its bar: an error that says so,
/// never a cut name.
fn wrap_name(name: &str, max: usize) -> Result<Vec<String>, String> {
    let mut lines: Vec<String> = Vec::new();
    for word in name.split_whitespace() {
        let len = word.chars().count();
        match lines.last_mut() {
            Some(last) if last.chars().count() + 1 + len <= max => {
                last.push(' ');
                last.push_str(word);
            }
            _ => lines.push(word.to_string()),
        }
    }
    let too_wide = lines.iter().any(|l| l.chars().count() > max);
    if too_wide || lines.len() > NAME_LINES {
        return Err(format!(
            "the category name \"{name}\" cannot fit under its bar: at this size a \
             bar has room for {NAME_LINES} lines of {max} characters; shorten the name \
             in the data or show fewer steps"
        ));
    }
    Ok(lines)
}

/// "Waterfall from Budget 2023 1,000 to End 1,075 in 3 steps: 2 up (+120 in
/// all), 1 down (−45 in all); the largest step is Sales +100."
fn describe(r: &Request, bars: &[Bar], decimals: usize) -> String {
    let n = |v: f64| r.writing.number(v, decimals);
    let s = |v: f64| r.writing.signed(v, decimals);
    let (Some(first), Some(last)) = (bars.first(), bars.last()) else {
        return String::new();
    };
    let steps: Vec<&Bar> = bars
        .iter()
        .filter(|b| b.kind == Kind::Step && b.shown != Shown::Hidden)
        .collect();
    let up: Vec<f64> = steps
        .iter()
        .map(|b| b.value())
        .filter(|v| *v > 0.0)
        .collect();
    let down: Vec<f64> = steps
        .iter()
        .map(|b| b.value())
        .filter(|v| *v < 0.0)
        .collect();
    let mut text = format!(
        "Waterfall from {} {} to {} {} in {} step{}: {} up ({} in all), {} down ({} in all)",
        first.label,
        n(first.value()),
        last.label,
        n(last.value()),
        steps.len(),
        if steps.len() == 1 { "" } else { "s" },
        up.len(),
        s(up.iter().sum()),
        down.len(),
        s(down.iter().sum()),
    );
    let mut largest: Option<&Bar> = None;
    for b in &steps {
        if largest.is_none_or(|l| b.value().abs() > l.value().abs()) {
            largest = Some(b);
        }
    }
    if let Some(b) = largest {
        text.push_str(&format!(
            "; the largest step is {} {}",
            b.label,
            s(b.value())
        ));
    }
    let focus: Vec<String> = steps
        .iter()
        .filter(|b| b.shown == Shown::As(Role::Focus))
        .take(3)
        .map(|b| format!("{} {}", b.label, s(b.value())))
        .collect();
    if !focus.is_empty() {
        text.push_str(&format!("; in focus: {}", focus.join(", ")));
    }
    let hidden = bars
        .iter()
        .filter(|b| b.kind == Kind::Step && b.shown == Shown::Hidden)
        .count();
    if hidden > 0 {
        text.push_str(&format!(" ({hidden} more not shown yet)"));
    }
    text.push('.');
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use crescendo_plugin::{Area, Cell, Column, Texts, ABI_VERSION};
    use std::collections::BTreeMap;

    fn request(names: &[&str], values: &[f64]) -> Request {
        let options = [("category", "item"), ("value", "amount")]
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect();
        Request {
            abi_version: ABI_VERSION,
            form: "waterfall".into(),
            options,
            columns: vec![
                Column {
                    name: "item".into(),
                    kind: "text".into(),
                    cells: names.iter().map(|c| Cell::Text(c.to_string())).collect(),
                },
                Column {
                    name: "amount".into(),
                    kind: "number".into(),
                    cells: values.iter().map(|v| Cell::Number(*v)).collect(),
                },
            ],
            roles: BTreeMap::new(),
            hidden: vec![],
            texts: Texts::default(),
            area: Area {
                width: 500.0,
                height: 300.0,
            },
            label_size: 16.0,
            writing: Default::default(),
        }
    }

    fn sample() -> Request {
        request(
            &["Opening", "Sales", "Refunds", "Grants"],
            &[1000.0, 100.0, -45.0, 20.0],
        )
    }

    fn texts(d: &Drawing) -> Vec<String> {
        d.primitives
            .iter()
            .filter_map(|p| match p {
                Primitive::Text { text, .. } => Some(text.clone()),
                _ => None,
            })
            .collect()
    }

    fn rects(d: &Drawing) -> Vec<(Pt, Pt, Role)> {
        d.primitives
            .iter()
            .filter_map(|p| match p {
                Primitive::Rect { from, to, role } => Some((*from, *to, *role)),
                _ => None,
            })
            .collect()
    }

    #[test]
    fn computes_the_end_and_labels_with_signs() {
        let d = waterfall(&sample()).unwrap();
        let t = texts(&d);
        for want in [
            "1,000",
            "+100",
            "\u{2212}45",
            "+20",
            "1,075",
            "Opening",
            "End",
        ] {
            assert!(t.contains(&want.to_string()), "{want} missing from {t:?}");
        }
        let r = rects(&d);
        assert_eq!(r.len(), 5);
        assert_eq!(
            r.iter().map(|x| x.2).collect::<Vec<_>>(),
            vec![
                Role::Axis,
                Role::Context,
                Role::Context,
                Role::Context,
                Role::Axis
            ]
        );
        // Floating bars: each step starts where the previous one ended.
        // Sales goes up: its top is above the opening bar's top.
        assert!(r[1].0.y < r[0].0.y);
        assert!(
            (r[1].1.y - r[0].0.y).abs() < 1e-9,
            "the step floats on the running total"
        );
        // Refunds goes down from the top of Sales.
        assert!((r[2].0.y - r[1].0.y).abs() < 1e-9);
        // Four connectors between the five bars, all annotations.
        let connectors = d
            .primitives
            .iter()
            .filter(|p| {
                matches!(
                    p,
                    Primitive::Line {
                        role: Role::Annotation,
                        ..
                    }
                )
            })
            .count();
        assert_eq!(connectors, 4);
        assert_eq!(
            d.description.as_deref(),
            Some("Waterfall from Opening 1,000 to End 1,075 in 3 steps: 2 up (+120 in all), 1 down (\u{2212}45 in all); the largest step is Sales +100.")
        );
    }

    #[test]
    fn checks_the_datas_total() {
        let ok = request(
            &["Opening", "Sales", "Refunds", "Total"],
            &[1000.0, 100.0, -45.0, 1055.0],
        );
        let d = waterfall(&ok).unwrap();
        assert!(texts(&d).contains(&"Total".to_string()));
        assert_eq!(rects(&d).len(), 4);
        // Rounding noise passes: 0.1 + 0.2 is not 0.3 in binary.
        let noisy = request(&["a", "b", "end"], &[0.1, 0.2, 0.3]);
        assert!(waterfall(&noisy).is_ok());
        let bad = request(
            &["Opening", "Sales", "Refunds", "End"],
            &[1000.0, 100.0, -45.0, 1050.0],
        );
        assert_eq!(
            waterfall(&bad).unwrap_err(),
            "the `End` row says 1,050, but the start and the steps add up to 1,055"
        );
        let misplaced = request(&["Opening", "Total", "Sales"], &[1.0, 2.0, 3.0]);
        assert!(waterfall(&misplaced)
            .unwrap_err()
            .contains("row 2 is called `Total`"));
    }

    #[test]
    fn spotlight_and_hidden_steps() {
        let mut r = sample();
        r.roles.insert("Refunds".into(), Role::Focus);
        let d = waterfall(&r).unwrap();
        assert_eq!(rects(&d)[2].2, Role::Focus);
        assert!(d
            .description
            .unwrap()
            .ends_with("in focus: Refunds \u{2212}45."));
        let all = waterfall(&sample()).unwrap();
        let mut r = sample();
        r.hidden.push("Grants".into());
        let some = waterfall(&r).unwrap();
        assert!(!texts(&some).contains(&"+20".to_string()));
        assert_eq!(rects(&some).len(), 4);
        // Nothing else moves, and the end still counts the hidden step.
        assert!(texts(&some).contains(&"1,075".to_string()));
        for p in &rects(&some) {
            assert!(rects(&all).contains(p));
        }
    }

    #[test]
    fn negative_totals_cross_the_baseline_inside_the_area() {
        let d = waterfall(&request(&["Start", "Loss", "Gain"], &[50.0, -120.0, 30.0])).unwrap();
        for p in &d.primitives {
            let pts: Vec<Pt> = match p {
                Primitive::Rect { from, to, .. } | Primitive::Line { from, to, .. } => {
                    vec![*from, *to]
                }
                Primitive::Text { at, .. } => vec![*at],
                _ => vec![],
            };
            for q in pts {
                assert!(
                    (0.0..=500.0).contains(&q.x) && (0.0..=300.0).contains(&q.y),
                    "{q:?}"
                );
            }
        }
        assert!(texts(&d).contains(&"\u{2212}40".to_string()));
    }

    #[test]
    fn refuses_too_little_data() {
        assert!(waterfall(&request(&["Start"], &[1.0]))
            .unwrap_err()
            .contains("at least one step"));
        let mut r = sample();
        r.columns[1].cells[2] = Cell::Missing;
        assert_eq!(
            waterfall(&r).unwrap_err(),
            "`Refunds` (row 3) has no `amount` value"
        );
    }

    #[test]
    fn long_names_wrap_and_never_are_cut() {
        assert_eq!(
            wrap_name("Operating expenses", 10).unwrap(),
            ["Operating", "expenses"]
        );
        assert_eq!(wrap_name("Tax", 6).unwrap(), ["Tax"]);
        assert_eq!(
            wrap_name("New boat lease", 9).unwrap(),
            ["New boat", "lease"]
        );
        // a word longer than a line, or more than three lines: an error
        let err = wrap_name("Refurbishment", 6).unwrap_err();
        assert!(err.contains("\"Refurbishment\" cannot fit"), "{err}");
        assert!(err.contains("3 lines of 6 characters"), "{err}");
        assert!(wrap_name("a b c d e f g h", 3).is_err());
        // and through the whole chart: no ellipsis anywhere
        let r = request(&["Start", "Operating expenses", "End"], &[10.0, -2.0, 8.0]);
        let d = waterfall(&r).unwrap();
        assert!(texts(&d).iter().all(|t| !t.contains('…')));
        assert!(texts(&d).contains(&"expenses".to_string()));
    }
}
