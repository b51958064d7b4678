//! What a frame's chart says, in comparable parts: every data point with its
//! key, every named item with its role, every annotation, the axis titles.
//! `build` writes it into `deck.json` (each frame's `content`), `diff` reads
//! it back, and `review` takes it from the plans it draws; [`compare`] is the
//! one comparison both print, so they name the same changes.

use std::collections::BTreeMap;

use crescendo_plan::{Annotation, Axis, Chart, FramePlan, Role, ScaleKind};
use serde::{Deserialize, Serialize};

/// A frame's chart in comparable parts.
#[derive(Serialize, Deserialize, Clone, Debug, Default, PartialEq)]
pub struct Content {
    /// Axis and category titles by name (`x title`, `y title`, …).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub titles: BTreeMap<String, String>,
    /// Each data point: its key (item, then position) and its value as
    /// written by the shortest digits that read back the same (`null` when
    /// missing).
    #[serde(default, skip_serializing_if = "Keyed::is_empty")]
    pub data: Keyed<Option<String>>,
    /// Each named item (series, bar, part, row, slice, panel …) and its role.
    #[serde(default, skip_serializing_if = "Keyed::is_empty")]
    pub roles: Keyed<String>,
    /// Each annotation in words.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub annotations: Vec<String>,
}

/// Values by key, written as one JSON object (one line per entry in
/// `deck.json`); a key met again gets ` #2`, ` #3`, … so nothing is lost.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
#[serde(transparent)]
pub struct Keyed<V>(pub BTreeMap<String, V>);

impl<V> Default for Keyed<V> {
    fn default() -> Self {
        Keyed(BTreeMap::new())
    }
}

impl<V> Keyed<V> {
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    /// Add an entry, its key made unique.
    pub fn push(&mut self, (key, value): (String, V)) {
        let mut unique = key.clone();
        let mut n = 1;
        while self.0.contains_key(&unique) {
            n += 1;
            unique = format!("{key} #{n}");
        }
        self.0.insert(unique, value);
    }
}

/// One kind of change in a frame's chart.
#[derive(Serialize, Debug, Clone, PartialEq)]
pub struct ChartChange {
    /// `titles`, `chart data`, `roles` or `annotations`.
    pub kind: &'static str,
    /// Each change in words (`Westbrook 2024-03: 4210 → 4710`).
    pub items: Vec<String>,
}

/// How many items of one kind the text outputs list before "and N more".
pub const SHOWN: usize = 5;

impl ChartChange {
    /// `chart data: a; b; c and 4 more` for a line of text.
    pub fn summary(&self) -> String {
        let shown: Vec<&str> = self.items.iter().take(SHOWN).map(String::as_str).collect();
        let mut s = format!("{}: {}", self.kind, shown.join("; "));
        if self.items.len() > SHOWN {
            s.push_str(&format!(" and {} more", self.items.len() - SHOWN));
        }
        s
    }
}

fn role(r: Role) -> String {
    match r {
        Role::Focus => "focus",
        Role::Context => "context",
        Role::Hidden => "hidden",
    }
    .to_string()
}

/// A number as its shortest exact digits.
fn num(v: f64) -> String {
    format!("{v}")
}

/// A position on an axis as a reader names it: a month as `2024-03`, a day
/// as `2024-03-05`, a category by its tick label.
fn position(axis: &Axis, v: f64) -> String {
    match axis.scale {
        ScaleKind::Months => {
            let m = v.round() as i64;
            format!("{}-{:02}", m.div_euclid(12), m.rem_euclid(12) + 1)
        }
        ScaleKind::Days => {
            let (y, m, d) = crescendo_data::time::civil_from_days(v.round() as i32);
            format!("{y}-{m:02}-{d:02}")
        }
        ScaleKind::Years => format!("{}", v.round() as i64),
        ScaleKind::Categories => axis
            .ticks
            .iter()
            .find(|t| t.value == v)
            .map_or_else(|| num(v), |t| t.label.clone()),
        ScaleKind::Linear => num(v),
    }
}

fn annotation(x: &Axis, a: &Annotation) -> String {
    match a {
        Annotation::Callout { x: at, y, text } => {
            format!("callout “{text}” at {}, {}", position(x, *at), num(*y))
        }
        Annotation::Band { from, to, text } => format!(
            "band{} from {} to {}",
            text.as_ref().map(|t| format!(" “{t}”")).unwrap_or_default(),
            position(x, *from),
            position(x, *to)
        ),
        Annotation::Reference { value, text } => format!("reference “{text}” at {}", num(*value)),
        Annotation::Moment { from, to, text } => format!(
            "moment “{text}” at {}{}",
            position(x, *from),
            to.map(|t| format!(" to {}", position(x, t)))
                .unwrap_or_default()
        ),
    }
}

impl Content {
    /// The comparable parts of a frame's chart.
    pub fn of(frame: &FramePlan) -> Content {
        let mut c = Content::default();
        c.add(&frame.chart, "");
        for n in &frame.mark_notes {
            let part = n.part.map(|p| format!(" part {p}")).unwrap_or_default();
            (c.annotations).push(format!("callout “{}” on mark {}{part}", n.text, n.item));
        }
        for cite in &frame.cites {
            (c.annotations).push(format!("cite {} “{}”", cite.value, cite.figure));
        }
        c
    }

    fn title(&mut self, name: &str, prefix: &str, t: &Option<String>) {
        if let Some(t) = t {
            self.titles.insert(format!("{prefix}{name}"), t.clone());
        }
    }

    /// A chart of items by parts (stacked or grouped bars, dots by
    /// series): its category and value titles, the parts' roles, then each
    /// item's role and its value for each part, in order.
    fn grid<'a>(
        &mut self,
        p: &str,
        (category, value): (&Option<String>, &Option<String>),
        parts: &[(&str, Role)],
        items: impl Iterator<Item = (&'a str, Role, &'a [Option<f64>])>,
    ) {
        self.title("category title", p, category);
        self.title("value title", p, value);
        for (name, r) in parts {
            self.roles.push((format!("{p}{name}"), role(*r)));
        }
        for (label, r, values) in items {
            self.roles.push((format!("{p}{label}"), role(r)));
            for ((part, _), v) in parts.iter().zip(values) {
                let key = format!("{p}{label} {part}");
                self.data.push((key, v.map(num)));
            }
        }
    }

    fn add(&mut self, chart: &Chart, p: &str) {
        let point = |v: Option<f64>| v.map(num);
        match chart {
            Chart::Line(l) => {
                self.title("x title", p, &l.x.title);
                self.title("y title", p, &l.y.title);
                for s in &l.series {
                    self.roles.push((format!("{p}{}", s.name), role(s.role)));
                    for pt in &s.points {
                        let key = format!("{p}{} {}", s.name, position(&l.x, pt.x));
                        self.data.push((key, point(pt.y)));
                    }
                }
                let notes = l.annotations.iter().map(|a| annotation(&l.x, a));
                self.annotations.extend(notes.map(|a| format!("{p}{a}")));
            }
            Chart::Bars(b) => {
                self.title("category title", p, &b.category_title);
                self.title("value title", p, &b.value.title);
                for bar in &b.bars {
                    self.roles
                        .push((format!("{p}{}", bar.label), role(bar.role)));
                    self.data
                        .push((format!("{p}{}", bar.label), point(bar.value)));
                }
            }
            Chart::Parts(c) => {
                let parts: Vec<_> = c.parts.iter().map(|x| (x.name.as_str(), x.role)).collect();
                let cats = (c.categories.iter()).map(|x| (x.label.as_str(), x.role, &x.values[..]));
                let titles = (&c.category_title, &c.value.title);
                self.grid(p, titles, &parts, cats);
            }
            Chart::Dots(d) => {
                let series: Vec<_> = d.series.iter().map(|x| (x.name.as_str(), x.role)).collect();
                let rows = (d.rows.iter()).map(|x| (x.label.as_str(), x.role, &x.values[..]));
                self.grid(p, (&d.category_title, &d.value.title), &series, rows);
            }
            Chart::Scatter(s) => {
                self.title("x title", p, &s.x.title);
                self.title("y title", p, &s.y.title);
                for (i, pt) in s.points.iter().enumerate() {
                    let name = match pt.label.is_empty() {
                        true => format!("point {}", i + 1),
                        false => pt.label.clone(),
                    };
                    self.roles.push((format!("{p}{name}"), role(pt.role)));
                    let at = format!("{}, {}", num(pt.x), num(pt.y));
                    self.data.push((format!("{p}{name}"), Some(at)));
                }
                if let Some(f) = &s.fit {
                    self.annotations.push(format!("{p}fit “{}”", f.label));
                }
            }
            Chart::Figures(f) => {
                for fig in &f.figures {
                    self.roles
                        .push((format!("{p}{}", fig.caption), role(fig.role)));
                    self.data
                        .push((format!("{p}{}", fig.caption), Some(fig.text.clone())));
                }
            }
            Chart::Table(t) => {
                for row in &t.rows {
                    let name = row.cells.first().cloned().unwrap_or_default();
                    self.roles.push((format!("{p}{name}"), role(row.role)));
                    for (col, cell) in t.columns.iter().zip(&row.cells).skip(1) {
                        let key = format!("{p}{name} {}", col.title);
                        self.data.push((key, Some(cell.clone())));
                    }
                }
            }
            Chart::Pie(pie) => {
                for s in &pie.slices {
                    self.roles.push((format!("{p}{}", s.label), role(s.role)));
                    self.data
                        .push((format!("{p}{}", s.label), Some(num(s.value))));
                }
            }
            Chart::Panels(panels) => {
                for panel in &panels.panels {
                    self.roles
                        .push((format!("{p}{}", panel.title), role(panel.role)));
                    self.add(&panel.chart, &format!("{p}{} · ", panel.title));
                }
            }
            Chart::Plugin(plugin) => self.add_plugin(&plugin.request, p),
        }
    }

    fn add_plugin(&mut self, r: &crescendo_plugin::Request, p: &str) {
        self.title("x title", p, &r.texts.x_title);
        self.title("y title", p, &r.texts.y_title);
        for (name, role) in &r.roles {
            let role = format!("{role:?}").to_lowercase();
            self.roles.push((format!("{p}{name}"), role));
        }
        for name in &r.hidden {
            self.roles
                .push((format!("{p}{name}"), "hidden".to_string()));
        }
        for col in &r.columns {
            for (i, cell) in col.cells.iter().enumerate() {
                let v = match cell {
                    crescendo_plugin::Cell::Missing => None,
                    crescendo_plugin::Cell::Number(n) => Some(num(*n)),
                    crescendo_plugin::Cell::Text(t) => Some(t.clone()),
                };
                self.data
                    .push((format!("{p}row {} {}", i + 1, col.name), v));
            }
        }
    }
}

/// Every key of either side in order, with its value on each side.
fn paired<'a, V>(
    old: &'a Keyed<V>,
    new: &'a Keyed<V>,
) -> Vec<(&'a str, Option<&'a V>, Option<&'a V>)> {
    let mut keys: Vec<&String> = old.0.keys().chain(new.0.keys()).collect();
    keys.sort();
    keys.dedup();
    keys.into_iter()
        .map(|k| (k.as_str(), old.0.get(k), new.0.get(k)))
        .collect()
}

fn shown(v: Option<&Option<String>>) -> String {
    match v {
        Some(Some(v)) => v.clone(),
        Some(None) => "missing".to_string(),
        None => "—".to_string(),
    }
}

/// Every change from `old` to `new`, by kind, kinds without change left out.
pub fn compare(old: &Content, new: &Content) -> Vec<ChartChange> {
    let mut out = Vec::new();
    let mut push = |kind, items: Vec<String>| {
        if !items.is_empty() {
            out.push(ChartChange { kind, items });
        }
    };
    let mut names: Vec<&String> = old.titles.keys().chain(new.titles.keys()).collect();
    names.sort();
    names.dedup();
    let titles = names
        .into_iter()
        .filter(|n| old.titles.get(*n) != new.titles.get(*n))
        .map(|n| {
            let show = |v: Option<&String>| v.map_or("(none)".to_string(), |t| format!("“{t}”"));
            format!(
                "{n} {} → {}",
                show(old.titles.get(n)),
                show(new.titles.get(n))
            )
        })
        .collect();
    push("titles", titles);
    let data = paired(&old.data, &new.data)
        .into_iter()
        .filter(|(_, o, n)| o != n)
        .map(|(k, o, n)| match (o, n) {
            (None, _) => format!("{k} new: {}", shown(n)),
            (_, None) => format!("{k} gone (was {})", shown(o)),
            _ => format!("{k}: {} → {}", shown(o), shown(n)),
        })
        .collect();
    push("chart data", data);
    let roles = paired(&old.roles, &new.roles)
        .into_iter()
        .filter(|(_, o, n)| o != n)
        .map(|(k, o, n)| {
            let show = |v: Option<&String>| v.map_or("—".to_string(), String::clone);
            format!("{k} {} → {}", show(o), show(n))
        })
        .collect();
    push("roles", roles);
    let mut notes: Vec<String> = Vec::new();
    let mut left: Vec<&String> = old.annotations.iter().collect();
    for a in &new.annotations {
        match left.iter().position(|o| *o == a) {
            Some(i) => {
                left.remove(i);
            }
            None => notes.push(format!("added {a}")),
        }
    }
    notes.extend(left.into_iter().map(|a| format!("removed {a}")));
    push("annotations", notes);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn content(data: &[(&str, Option<&str>)], roles: &[(&str, &str)], notes: &[&str]) -> Content {
        let mut c = Content {
            annotations: notes.iter().map(|s| s.to_string()).collect(),
            ..Content::default()
        };
        for (k, v) in data {
            c.data.push((k.to_string(), v.map(str::to_string)));
        }
        for (k, v) in roles {
            c.roles.push((k.to_string(), v.to_string()));
        }
        c
    }

    #[test]
    fn every_kind_of_change_is_named() {
        let old = content(
            &[
                ("A 2024-01", Some("10")),
                ("A 2024-02", None),
                ("B 2024-01", Some("3")),
            ],
            &[("A", "focus"), ("B", "context")],
            &["callout “peak” at 2024-01, 10"],
        );
        let new = content(
            &[
                ("A 2024-01", Some("12")),
                ("A 2024-02", Some("4")),
                ("C 2024-01", Some("3")),
            ],
            &[("A", "context"), ("C", "focus")],
            &["reference “goal” at 11"],
        );
        let changes = compare(&old, &new);
        let kinds: Vec<&str> = changes.iter().map(|c| c.kind).collect();
        assert_eq!(kinds, ["chart data", "roles", "annotations"]);
        assert_eq!(
            changes[0].items,
            [
                "A 2024-01: 10 → 12",
                "A 2024-02: missing → 4",
                "B 2024-01 gone (was 3)",
                "C 2024-01 new: 3",
            ]
        );
        assert_eq!(
            changes[1].items,
            ["A focus → context", "B context → —", "C — → focus"]
        );
        assert_eq!(
            changes[2].items,
            [
                "added reference “goal” at 11",
                "removed callout “peak” at 2024-01, 10"
            ]
        );
        assert!(compare(&new, &new).is_empty());
    }

    #[test]
    fn repeated_keys_are_numbered_and_long_lists_are_cut() {
        let old = content(&[("x", Some("1")), ("x", Some("2"))], &[], &[]);
        let new = content(&[("x", Some("1")), ("x", Some("5"))], &[], &[]);
        assert_eq!(compare(&old, &new)[0].items, ["x #2: 2 → 5"]);
        let many = ChartChange {
            kind: "chart data",
            items: (0..8).map(|i| i.to_string()).collect(),
        };
        assert_eq!(many.summary(), "chart data: 0; 1; 2; 3; 4 and 3 more");
    }

    #[test]
    fn positions_read_as_written() {
        let axis = |scale| Axis {
            title: None,
            scale,
            domain: [0.0, 1.0],
            ticks: vec![crescendo_plan::Tick {
                value: 1.0,
                label: "East".into(),
            }],
            grid: false,
        };
        assert_eq!(
            position(&axis(ScaleKind::Months), (2024 * 12 + 2) as f64),
            "2024-03"
        );
        assert_eq!(position(&axis(ScaleKind::Days), 19_797.0), "2024-03-15");
        assert_eq!(position(&axis(ScaleKind::Categories), 1.0), "East");
        assert_eq!(position(&axis(ScaleKind::Linear), 2.5), "2.5");
    }
}
