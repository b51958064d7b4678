//! The syntax tree. Every node carries the byte span it came from, so later
//! stages can point diagnostics into the story source.

pub use crate::position::Position;
pub use crate::template_ast::{FormatSpec, NumberStyle, Template, TextPart, MAX_DECIMALS};

/// A byte range in the story file.
pub use crescendo_diag::Span;

/// A name as written.
#[derive(Clone, Debug, PartialEq)]
pub struct Ident {
    pub name: String,
    pub span: Span,
}

/// A string literal with escapes resolved.
#[derive(Clone, Debug, PartialEq)]
pub struct Str {
    pub value: String,
    pub span: Span,
}

/// A string literal that is shown to the audience and may quote values
/// (`"now {multiple to 1 decimal}× as many"`): headlines, takeaways, notes, titles,
/// captions and labels. The parser splits it into parts once.
#[derive(Clone, Debug, PartialEq)]
pub struct Text {
    /// The text as written, escapes resolved (quotes not expanded).
    pub value: String,
    pub span: Span,
    /// The literal pieces and the quoted values.
    pub template: Template,
}

/// A parsed story: its items in source order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct StoryAst {
    pub items: Vec<Item>,
}

impl StoryAst {
    /// The data items, in source order.
    pub fn data(&self) -> impl Iterator<Item = &DataDecl> {
        self.items.iter().filter_map(|i| match i {
            Item::Data(d) => Some(d),
            _ => None,
        })
    }

    /// The views, in source order.
    pub fn views(&self) -> impl Iterator<Item = &ViewDecl> {
        self.items.iter().filter_map(|i| match i {
            Item::View(v) => Some(v),
            _ => None,
        })
    }
}

/// A top-level item.
#[derive(Clone, Debug, PartialEq)]
pub enum Item {
    Title(TextItem),
    Byline(TextItem),
    Source(TextItem),
    Theme {
        name: Ident,
        span: Span,
    },
    Data(DataDecl),
    View(ViewDecl),
    Compare(CompareDecl),
    Focus {
        names: Vec<Str>,
        span: Span,
    },
    Conclusion(TextItem),
    Value(ValueDecl),
    Claim(ClaimDecl),
    Allow(AllowDecl),
    Accent(StrItem),
    /// `style "house.toml"`
    Style(StrItem),
    Plugin(PluginDecl),
    Frame(FrameDecl),
    /// `locale "de-DE"`
    Locale(StrItem),
    /// `fiscal year starts July`: `month` is the month's name as written.
    Fiscal {
        month: Ident,
        span: Span,
    },
    /// `fiscal names year "GJ ", quarter "Q", half "HJ"`.
    FiscalNames(FiscalNamesDecl),
}

pub use crate::fiscal_ast::{FiscalName, FiscalNamesDecl, FiscalPart};

/// `use plugin "path" as NAME [sha256 "hex"]`
#[derive(Clone, Debug, PartialEq)]
pub struct PluginDecl {
    pub path: Str,
    pub alias: Ident,
    pub pin: Option<Str>,
    pub span: Span,
}

/// `draw PLUGIN[.FORM] VIEW: option COLUMN, ...`
#[derive(Clone, Debug, PartialEq)]
pub struct DrawStmt {
    pub plugin: Ident,
    pub form: Option<Ident>,
    pub view: Ident,
    pub opts: Vec<(Ident, Ident)>,
    pub span: Span,
}

/// `allow RULE "reason"` (top level or in a frame).
#[derive(Clone, Debug, PartialEq)]
pub struct AllowDecl {
    pub rule: Ident,
    pub reason: Str,
    pub span: Span,
}

impl Item {
    /// The whole item's span.
    pub fn span(&self) -> &Span {
        match self {
            Item::Title(t) | Item::Byline(t) | Item::Source(t) | Item::Conclusion(t) => &t.span,
            Item::Theme { span, .. } | Item::Focus { span, .. } | Item::Fiscal { span, .. } => span,
            Item::FiscalNames(f) => &f.span,
            Item::Data(d) => &d.span,
            Item::View(v) => &v.span,
            Item::Compare(c) => &c.span,
            Item::Frame(f) => &f.span,
            Item::Value(v) => &v.span,
            Item::Allow(a) => &a.span,
            Item::Accent(t) | Item::Style(t) | Item::Locale(t) => &t.span,
            Item::Plugin(p) => &p.span,
            Item::Claim(c) => &c.span,
        }
    }
}

/// A keyword followed by one text (`story`, `byline`, `source`,
/// `conclusion`).
#[derive(Clone, Debug, PartialEq)]
pub struct TextItem {
    pub text: Text,
    pub span: Span,
}

/// A keyword followed by one string that is not shown as text (`accent`,
/// `style`, `locale`).
#[derive(Clone, Debug, PartialEq)]
pub struct StrItem {
    pub text: Str,
    pub span: Span,
}

/// `data NAME from "file.csv" ...`
#[derive(Clone, Debug, PartialEq)]
pub struct DataDecl {
    pub name: Ident,
    /// The CSV file; for a database source, the table name or query text
    /// (so that messages about the source point at it).
    pub file: Str,
    pub missing: Option<Vec<Str>>,
    /// `thousands ","`: the character grouping the digits of numbers in
    /// the file's cells.
    pub thousands: Option<Box<Str>>,
    /// `decimal ","`: the character before the decimals of numbers in the
    /// file's cells.
    pub decimal: Option<Box<Str>>,
    pub columns: Vec<ColumnDecl>,
    pub span: Span,
    /// `sheet "NAME"`: the sheet of a workbook.
    pub sheet: Option<Box<Str>>,
    /// `cells "A1:D20"`: the block of a workbook sheet.
    pub cells: Option<Box<Str>>,
    /// `from table "t" via ENVVAR` / `from query "..." via ENVVAR`: the rows
    /// come from a PostgreSQL database instead of a file.
    pub database: Option<DatabaseSource>,
}

/// Where a database `data` item reads from.
#[derive(Clone, Debug, PartialEq)]
pub struct DatabaseSource {
    /// `table "schema"."name"` (schema optional) or `query "..."`.
    pub from: DbFrom,
    /// The environment variable holding the connection string.
    pub env: Ident,
    /// `in order of COL, ...`: the row order.
    pub order: Vec<Ident>,
    pub span: Span,
}

/// A table or a query.
#[derive(Clone, Debug, PartialEq)]
pub enum DbFrom {
    Table { schema: Option<Str>, name: Str },
    Query(Str),
}

/// `name: type` inside a data block.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnDecl {
    pub name: Ident,
    pub ty: Ident,
    pub span: Span,
}

/// `view NAME = INPUT | steps`
#[derive(Clone, Debug, PartialEq)]
pub struct ViewDecl {
    pub name: Ident,
    pub input: Ident,
    pub steps: Vec<StepAst>,
    pub span: Span,
}

/// One view step.
#[derive(Clone, Debug, PartialEq)]
pub enum StepAst {
    Keep {
        expr: Expr,
        span: Span,
    },
    By {
        keys: Vec<Ident>,
        aggregates: Vec<AggregateAst>,
        span: Span,
    },
    Add {
        name: Ident,
        expr: Expr,
        span: Span,
    },
    Sort {
        keys: Vec<SortKey>,
        span: Span,
    },
    Top {
        n: u64,
        n_span: Span,
        key: Ident,
        by: Ident,
        rest: Option<Str>,
        span: Span,
    },
    /// `columns a, b, c`
    Columns {
        names: Vec<Ident>,
        span: Span,
    },
}

impl StepAst {
    pub fn span(&self) -> &Span {
        match self {
            StepAst::Keep { span, .. }
            | StepAst::By { span, .. }
            | StepAst::Add { span, .. }
            | StepAst::Sort { span, .. }
            | StepAst::Top { span, .. }
            | StepAst::Columns { span, .. } => span,
        }
    }
}

/// `NAME = FUNC(COLUMN)`
#[derive(Clone, Debug, PartialEq)]
pub struct AggregateAst {
    pub name: Ident,
    pub func: Ident,
    pub column: Option<Ident>,
    pub span: Span,
}

/// A sort key and its direction (`true` = descending).
#[derive(Clone, Debug, PartialEq)]
pub struct SortKey {
    pub column: Ident,
    pub descending: bool,
    pub span: Span,
}

/// Binary operators of expressions.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinOp {
    Add,
    Sub,
    Mul,
    Div,
    Eq,
    Ne,
    Lt,
    Le,
    Gt,
    Ge,
    And,
    Or,
}

impl BinOp {
    pub fn symbol(self) -> &'static str {
        match self {
            BinOp::Add => "+",
            BinOp::Sub => "-",
            BinOp::Mul => "*",
            BinOp::Div => "/",
            BinOp::Eq => "=",
            BinOp::Ne => "!=",
            BinOp::Lt => "<",
            BinOp::Le => "<=",
            BinOp::Gt => ">",
            BinOp::Ge => ">=",
            BinOp::And => "and",
            BinOp::Or => "or",
        }
    }
}

/// An expression, wherever it is written: in a view's `keep` and `add` and
/// a selection's `where` (over the cells of a row), in a `value` or a quoted
/// value (over values), in a `claim` (a condition over values). One tree
/// for all of them; which names, functions and operators each place allows
/// is checked by the planner.
///
/// Operators of one precedence level written one after the other form one
/// [`Expr::Chain`] (`a + b - c`), so the depth of a tree grows with the
/// nesting of parentheses and signs (capped by the parser), never with the
/// length of a chain.
#[derive(Clone, Debug, PartialEq)]
pub enum Expr {
    /// A name: a column in a row expression; a value (or a table, where a
    /// function takes one) in a value expression.
    Name(Ident),
    Number {
        value: f64,
        span: Span,
    },
    Text(Str),
    /// `-x`: one node per sign, each with the span of the whole operand.
    Neg {
        expr: Box<Expr>,
        span: Span,
    },
    Not {
        expr: Box<Expr>,
        span: Span,
    },
    /// Operators of one level applied left to right: `a + b - c`
    /// (`Add`, `Sub`), `a * b / c` (`Mul`, `Div`), `a and b and c`,
    /// `a or b`. `rest` is never empty.
    Chain {
        first: Box<Expr>,
        rest: Vec<Link>,
        span: Span,
    },
    /// `a < b`: `op` is one of `Eq` .. `Ge` (comparisons do not chain).
    Compare {
        op: BinOp,
        left: Box<Expr>,
        right: Box<Expr>,
        span: Span,
    },
    /// `expr [not] in (literals)`; the list holds only `Number` and `Text`.
    In {
        expr: Box<Expr>,
        list: Vec<Expr>,
        negated: bool,
        span: Span,
    },
    /// `a about b within 5%`
    About {
        left: Box<Expr>,
        right: Box<Expr>,
        tolerance: Tolerance,
        span: Span,
    },
    /// `FUNCTION(ARGUMENT, ...)`
    Call {
        func: Ident,
        args: Vec<CallArg>,
        span: Span,
    },
}

/// One operator of a [`Expr::Chain`] and its right operand.
#[derive(Clone, Debug, PartialEq)]
pub struct Link {
    pub op: BinOp,
    pub operand: Expr,
}

impl Expr {
    pub fn span(&self) -> Span {
        match self {
            Expr::Name(i) => i.span.clone(),
            Expr::Text(s) => s.span.clone(),
            Expr::Number { span, .. }
            | Expr::Neg { span, .. }
            | Expr::Not { span, .. }
            | Expr::Chain { span, .. }
            | Expr::Compare { span, .. }
            | Expr::In { span, .. }
            | Expr::About { span, .. }
            | Expr::Call { span, .. } => span.clone(),
        }
    }

    /// True for the operators of conditions: comparisons, `in`, `about`,
    /// `not`, `and` and `or`.
    pub fn is_condition(&self) -> bool {
        match self {
            Expr::Not { .. } | Expr::Compare { .. } | Expr::In { .. } | Expr::About { .. } => true,
            Expr::Chain { rest, .. } => rest
                .first()
                .is_some_and(|l| matches!(l.op, BinOp::And | BinOp::Or)),
            _ => false,
        }
    }
}

/// The span of `first` up to the end of `upto`: the part of a chain that
/// an operator applies to (`a + b` in `a + b + c`).
pub fn span_from(first: &Expr, upto: &Expr) -> Span {
    first.span().start..upto.span().end
}

/// `compare KEY by MEASURE`
#[derive(Clone, Debug, PartialEq)]
pub struct CompareDecl {
    pub key: Ident,
    pub measure: Ident,
    pub span: Span,
}

/// `frame "Headline" { ... }`
#[derive(Clone, Debug, PartialEq)]
pub struct FrameDecl {
    pub headline: Text,
    pub stmts: Vec<FrameStmt>,
    pub span: Span,
}

/// Chart forms.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ChartForm {
    Line,
    Bars,
    Dots,
    Scatter,
    Pie,
    Table,
}

impl ChartForm {
    pub fn keyword(self) -> &'static str {
        match self {
            ChartForm::Line => "line",
            ChartForm::Bars => "bars",
            ChartForm::Dots => "dots",
            ChartForm::Scatter => "scatter",
            ChartForm::Pie => "pie",
            ChartForm::Table => "table",
        }
    }
}

/// Options of a chart statement.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OptName {
    X,
    Y,
    Series,
    Category,
    Value,
    Ordered,
    Horizontal,
    Vertical,
    Stack,
    Group,
    Label,
    Fit,
    Heading,
}

impl OptName {
    pub fn keyword(self) -> &'static str {
        match self {
            OptName::X => "x",
            OptName::Y => "y",
            OptName::Series => "series",
            OptName::Category => "category",
            OptName::Value => "value",
            OptName::Ordered => "ordered",
            OptName::Horizontal => "horizontal",
            OptName::Vertical => "vertical",
            OptName::Stack => "stack",
            OptName::Group => "group",
            OptName::Label => "label",
            OptName::Fit => "fit",
            OptName::Heading => "heading",
        }
    }
}

/// One option: `x month`, `ordered`.
#[derive(Clone, Debug, PartialEq)]
pub struct ChartOpt {
    pub name: OptName,
    pub column: Option<Ident>,
    /// The quoted text of `heading COL "Text"`.
    pub text: Option<Str>,
    pub span: Span,
}

/// `line VIEW: ...` or `bars VIEW: ...`
#[derive(Clone, Debug, PartialEq)]
pub struct ChartStmt {
    pub form: ChartForm,
    pub view: Ident,
    pub opts: Vec<ChartOpt>,
    pub span: Span,
}

/// Which axis an axis title names.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AxisName {
    X,
    Y,
}

/// What `show`, `hide` and `spotlight` apply to.
#[derive(Clone, Debug, PartialEq)]
pub enum Targets {
    All(Span),
    None(Span),
    Focus(Span),
    Names(Vec<Str>),
    /// `"Row" in column, ...`: cells of a table.
    Cells(Vec<(Str, Ident)>),
}

/// A statement inside a frame.
#[derive(Clone, Debug, PartialEq)]
pub enum FrameStmt {
    Chart(ChartStmt),
    AxisTitle {
        axis: AxisName,
        text: Text,
        span: Span,
    },
    Show {
        targets: Targets,
        span: Span,
    },
    Hide {
        targets: Targets,
        span: Span,
    },
    Spotlight {
        targets: Targets,
        span: Span,
    },
    Takeaway {
        text: Text,
        span: Span,
    },
    Notes {
        text: Text,
        span: Span,
    },
    Range {
        axis: AxisName,
        from: f64,
        to: f64,
        span: Span,
    },
    Allow(AllowDecl),
    /// `figure "text" "caption"`
    Figure {
        text: Text,
        caption: Text,
        span: Span,
    },
    Split(SplitStmt),
    /// `unfold` or `unfold "A", "B"`.
    Unfold {
        order: Vec<Str>,
        span: Span,
    },
    Callout {
        at: Position,
        on: Option<Str>,
        text: Text,
        span: Span,
    },
    Band {
        from: Position,
        to: Position,
        text: Option<Text>,
        span: Span,
    },
    Reference {
        value: Position,
        text: Text,
        span: Span,
    },
    /// `moment AT [to UNTIL] "text"`: a time or period marked on a time axis.
    Moment {
        at: Position,
        until: Option<Position>,
        text: Text,
        span: Span,
    },
    /// `cite VALUE`: the evidence of a named value drawn on the chart.
    Cite {
        value: Ident,
        span: Span,
    },
    /// `label ends`
    LabelEnds {
        span: Span,
    },
    /// `gridlines` (`on: true`) or `gridlines off` (`on: false`).
    Gridlines {
        on: bool,
        span: Span,
    },
    /// `footnote claims` (`claims: true`) or `footnote off`.
    Footnote {
        claims: bool,
        span: Span,
    },
    Draw(DrawStmt),
}

impl FrameStmt {
    /// The whole statement's span.
    pub fn span(&self) -> Span {
        match self {
            FrameStmt::Chart(c) => c.span.clone(),
            FrameStmt::Draw(d) => d.span.clone(),
            FrameStmt::Split(s) => s.span.clone(),
            FrameStmt::Allow(a) => a.span.clone(),
            FrameStmt::AxisTitle { span, .. }
            | FrameStmt::Show { span, .. }
            | FrameStmt::Hide { span, .. }
            | FrameStmt::Spotlight { span, .. }
            | FrameStmt::Takeaway { span, .. }
            | FrameStmt::Notes { span, .. }
            | FrameStmt::Range { span, .. }
            | FrameStmt::Figure { span, .. }
            | FrameStmt::Unfold { span, .. }
            | FrameStmt::Callout { span, .. }
            | FrameStmt::Band { span, .. }
            | FrameStmt::Reference { span, .. }
            | FrameStmt::Cite { span, .. }
            | FrameStmt::Moment { span, .. }
            | FrameStmt::LabelEnds { span }
            | FrameStmt::Gridlines { span, .. }
            | FrameStmt::Footnote { span, .. } => span.clone(),
        }
    }
}

/// `split KEY [ascending|descending] [by MEASURE] [order "A", ...] [trim] [own scales]`
#[derive(Clone, Debug, PartialEq)]
pub struct SplitStmt {
    pub key: Ident,
    /// `Some(true)` descending, `Some(false)` ascending, `None` first appearance.
    pub descending: Option<bool>,
    pub by: Option<Ident>,
    pub order: Vec<Str>,
    pub trim: bool,
    /// `own scales`: each panel on a scale of its own.
    pub own_scales: bool,
    pub span: Span,
}

/// `value NAME = EXPRESSION`
#[derive(Clone, Debug, PartialEq)]
pub struct ValueDecl {
    pub name: Ident,
    pub expr: Expr,
    pub span: Span,
}

/// `claim CONDITION "sentence"`
#[derive(Clone, Debug, PartialEq)]
pub struct ClaimDecl {
    pub condition: Expr,
    pub sentence: Str,
    pub span: Span,
}

/// An argument of a value function.
#[derive(Clone, Debug, PartialEq)]
pub enum CallArg {
    Selection(Selection),
    Value(Expr),
}

impl CallArg {
    pub fn span(&self) -> Span {
        match self {
            CallArg::Selection(s) => s.span.clone(),
            CallArg::Value(v) => v.span(),
        }
    }
}

/// `VIEW.COLUMN [by COLUMN] [where CONDITION]` or `VIEW where CONDITION`.
#[derive(Clone, Debug, PartialEq)]
pub struct Selection {
    pub view: Ident,
    pub column: Option<Ident>,
    pub by: Option<Ident>,
    pub filter: Option<Expr>,
    pub span: Span,
}

/// A tolerance of `about ... within ...`.
#[derive(Clone, Debug, PartialEq)]
pub struct Tolerance {
    pub amount: f64,
    /// `true` for a percentage of the right-hand side.
    pub relative: bool,
    pub span: Span,
}
