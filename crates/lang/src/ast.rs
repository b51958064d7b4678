//! The syntax tree. Every node carries the byte span it came from, so later
//! stages can point diagnostics into the story source.

use std::ops::Range;

/// A byte range in the story file.
pub type Span = Range<usize>;

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

/// A parsed story: its items in source order.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct StoryAst {
    pub items: Vec<Item>,
}

/// A top-level item.
#[derive(Clone, Debug, PartialEq)]
pub enum Item {
    Title(TextItem),
    Byline(TextItem),
    Source(TextItem),
    Theme { name: Ident, span: Span },
    Data(DataDecl),
    View(ViewDecl),
    Compare(CompareDecl),
    Focus { names: Vec<Str>, span: Span },
    Conclusion(TextItem),
    Frame(FrameDecl),
}

impl Item {
    /// The whole item's span.
    pub fn span(&self) -> &Span {
        match self {
            Item::Title(t) | Item::Byline(t) | Item::Source(t) | Item::Conclusion(t) => &t.span,
            Item::Theme { span, .. } | Item::Focus { span, .. } => span,
            Item::Data(d) => &d.span,
            Item::View(v) => &v.span,
            Item::Compare(c) => &c.span,
            Item::Frame(f) => &f.span,
        }
    }
}

/// A keyword followed by one string.
#[derive(Clone, Debug, PartialEq)]
pub struct TextItem {
    pub text: Str,
    pub span: Span,
}

/// `data NAME from "file.csv" ...`
#[derive(Clone, Debug, PartialEq)]
pub struct DataDecl {
    pub name: Ident,
    pub file: Str,
    pub missing: Option<Vec<Str>>,
    pub columns: Vec<ColumnDecl>,
    pub span: Span,
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
}

impl StepAst {
    pub fn span(&self) -> &Span {
        match self {
            StepAst::Keep { span, .. }
            | StepAst::By { span, .. }
            | StepAst::Add { span, .. }
            | StepAst::Sort { span, .. }
            | StepAst::Top { span, .. } => span,
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

/// A row expression.
#[derive(Clone, Debug, PartialEq)]
pub enum Expr {
    Column(Ident),
    Number {
        value: f64,
        span: Span,
    },
    Text(Str),
    Neg {
        expr: Box<Expr>,
        span: Span,
    },
    Not {
        expr: Box<Expr>,
        span: Span,
    },
    Binary {
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
}

impl Expr {
    pub fn span(&self) -> Span {
        match self {
            Expr::Column(i) => i.span.clone(),
            Expr::Text(s) => s.span.clone(),
            Expr::Number { span, .. }
            | Expr::Neg { span, .. }
            | Expr::Not { span, .. }
            | Expr::Binary { span, .. }
            | Expr::In { span, .. } => span.clone(),
        }
    }
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
    pub headline: Str,
    pub stmts: Vec<FrameStmt>,
    pub span: Span,
}

/// Chart forms.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ChartForm {
    Line,
    Bars,
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
        }
    }
}

/// One option: `x month`, `ordered`.
#[derive(Clone, Debug, PartialEq)]
pub struct ChartOpt {
    pub name: OptName,
    pub column: Option<Ident>,
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
}

/// A statement inside a frame.
#[derive(Clone, Debug, PartialEq)]
pub enum FrameStmt {
    Chart(ChartStmt),
    AxisTitle {
        axis: AxisName,
        text: Str,
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
        text: Str,
        span: Span,
    },
    Notes {
        text: Str,
        span: Span,
    },
}
