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
