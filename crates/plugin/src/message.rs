//! The messages that cross the boundary, as JSON (serde).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Emphasis role of what a plugin draws; the host's theme picks colours.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum Role {
    /// The spotlighted data: accent colour, heavier.
    Focus,
    /// The rest of the data: grey, thin.
    Context,
    /// Notes, leader lines, connectors: muted ink.
    Annotation,
    /// Axes, baselines and tick labels: light ink.
    Axis,
}

/// One cell of the panel's data.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Cell {
    Missing,
    Number(f64),
    Text(String),
}

/// One column of the panel's data. Times are given as text cells in ISO
/// form (`2024-07` for a month, `2024-07-31` for a date, `2024` for a
/// year), in the view's order; `kind` says which.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Column {
    pub name: String,
    /// `text`, `number`, `date`, `month` or `year`.
    pub kind: String,
    pub cells: Vec<Cell>,
}

/// The size of the plot area in pixels; plot coordinates run from (0, 0) at
/// its top left to (`width`, `height`).
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Area {
    pub width: f64,
    pub height: f64,
}

/// Texts of the frame the panel belongs to.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Texts {
    pub headline: String,
    pub x_title: Option<String>,
    pub y_title: Option<String>,
}

/// What the host asks a plugin to draw.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Request {
    pub abi_version: u32,
    /// One of the forms the plugin declared.
    pub form: String,
    /// The chart statement's options, e.g. `category` → `route`.
    pub options: BTreeMap<String, String>,
    /// The view's data.
    pub columns: Vec<Column>,
    /// Role of each named item (series, category...), from the frame's
    /// show/hide/spotlight steps. Items not listed are context.
    pub roles: BTreeMap<String, Role>,
    /// Items hidden in this frame: not drawn, but their place in the layout
    /// is kept so nothing moves when they appear in a later frame.
    #[serde(default)]
    pub hidden: Vec<String>,
    pub texts: Texts,
    pub area: Area,
    /// The host's label text size in pixels (its line height is about 1.25
    /// times this): lay labels out for it so they do not collide.
    #[serde(default = "default_label_size")]
    pub label_size: f64,
    /// How the story writes numbers and dates (its `locale`): format
    /// labels with it ([`Writing::number`], [`Writing::time`]) so they
    /// read like the frame's own. A host that sends none means English.
    #[serde(default)]
    pub writing: Box<Writing>,
}

/// How the story writes numbers and dates, taken from the host's number
/// policy in the story's locale (not a table of its own): the symbols
/// around the digits, the percent and compact patterns, and each time cell
/// of the request's columns as the host writes it on an axis. The SDK's
/// methods (`crate::sdk`'s `writing.rs`) apply it with the host's rounding.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Writing {
    /// The story's locale as a BCP 47 tag (`de-DE`); `None` without one.
    pub locale: Option<String>,
    /// The decimal separator (`.`, `,`).
    pub decimal: String,
    /// The group separator (`,`, `.`, U+202F).
    pub group: String,
    /// The fewest whole digits a number has before it is grouped (4 where
    /// `1,234` is grouped; 5 where `1234` stays whole, as in Spanish).
    pub group_from: usize,
    /// The sign of negative numbers in drawn text (U+2212 MINUS SIGN).
    pub minus: String,
    /// The digits zero to nine.
    pub digits: String,
    /// What follows a percentage's digits (`%`, `\u{a0}%`).
    pub percent: String,
    /// The compact steps, largest first (`4.5M`, `4,5 Mio.`).
    pub compact: Vec<CompactStep>,
    /// Each time cell of the request's columns (`2024-07`, `2024-07-31`)
    /// as the host writes it (`Jul 2024`, `31.07.2024`).
    #[serde(skip_serializing_if = "BTreeMap::is_empty")]
    pub times: BTreeMap<String, String>,
}

/// A compact step: numbers with at least `from` + 1 whole digits are
/// divided by 10^`unit` and written with `suffix`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct CompactStep {
    pub from: u32,
    pub unit: u32,
    pub suffix: String,
}

impl Default for Writing {
    /// The host's writing without a locale: `-1,234.5` with a true minus,
    /// `12.3%`, `4.5M`.
    fn default() -> Self {
        let step = |from: u32, suffix: &str| CompactStep {
            from,
            unit: from,
            suffix: suffix.to_string(),
        };
        Writing {
            locale: None,
            decimal: ".".into(),
            group: ",".into(),
            group_from: 4,
            minus: "\u{2212}".into(),
            digits: "0123456789".into(),
            percent: "%".into(),
            compact: vec![step(12, "T"), step(9, "B"), step(6, "M"), step(3, "k")],
            times: BTreeMap::new(),
        }
    }
}

fn default_label_size() -> f64 {
    16.0
}

/// Which coordinates a point is in.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Space {
    /// Pixels in the plot area (the default).
    #[default]
    Plot,
    /// Data units, mapped by the host through the reply's `data_domain`.
    Data,
}

/// A point.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Pt {
    pub x: f64,
    pub y: f64,
    #[serde(default)]
    pub space: Space,
}

/// How text is anchored at its point.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Anchor {
    #[default]
    Start,
    Middle,
    End,
}

/// One drawing primitive. Colours come from the host's theme by role.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum Primitive {
    Line {
        from: Pt,
        to: Pt,
        role: Role,
    },
    Polyline {
        points: Vec<Pt>,
        role: Role,
    },
    /// A filled polygon.
    Area {
        points: Vec<Pt>,
        role: Role,
    },
    Rect {
        from: Pt,
        to: Pt,
        role: Role,
    },
    Circle {
        center: Pt,
        radius: f64,
        role: Role,
    },
    /// Text whose top edge is at `at.y`; `bold` for emphasis.
    Text {
        at: Pt,
        text: String,
        #[serde(default)]
        anchor: Anchor,
        #[serde(default)]
        bold: bool,
        role: Role,
    },
}

/// The x and y extent that data coordinates map onto the plot area.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct DataDomain {
    pub x: [f64; 2],
    pub y: [f64; 2],
}

/// What a plugin drew.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct Drawing {
    pub primitives: Vec<Primitive>,
    /// Needed when any point is in data coordinates.
    pub data_domain: Option<DataDomain>,
    /// A text alternative of the panel, generated from the data.
    pub description: Option<String>,
}

/// A plugin's answer: the drawing, or an error message for the user.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Reply {
    Drawing(Drawing),
    Error(String),
}

/// The options one form takes, as its plugin declares them: the story's
/// `draw NAME.FORM VIEW: OPTION COLUMN, ...` is checked against them by
/// `crescendo check`, with a caret on a wrong option.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FormOptions {
    pub form: String,
    pub options: Vec<OptionDecl>,
}

/// One option of a form. Every option names a column of the view.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OptionDecl {
    pub name: String,
    /// A story that leaves it out is an error.
    #[serde(default)]
    pub required: bool,
    /// The column kinds it accepts (`text`, `number`, `date`, `month`,
    /// `year`); empty: any.
    #[serde(default)]
    pub kinds: Vec<String>,
    /// One line for the user: what the column is for.
    #[serde(default)]
    pub about: String,
}

impl OptionDecl {
    /// An optional option taking a column of any kind.
    pub fn column(name: &str) -> OptionDecl {
        OptionDecl {
            name: name.into(),
            required: false,
            kinds: Vec::new(),
            about: String::new(),
        }
    }

    /// The story must give it.
    pub fn required(mut self) -> OptionDecl {
        self.required = true;
        self
    }

    /// The column kinds it accepts.
    pub fn of_kinds(mut self, kinds: &[&str]) -> OptionDecl {
        self.kinds = kinds.iter().map(|k| k.to_string()).collect();
        self
    }

    /// What the column is for, in a few words.
    pub fn about(mut self, about: &str) -> OptionDecl {
        self.about = about.into();
        self
    }
}
