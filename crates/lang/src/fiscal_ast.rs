//! The syntax tree of `fiscal names year "GJ ", quarter "Q", half "HJ"`
//! (re-exported from [`crate::ast`]).

use crate::ast::{Span, Str};

/// Which fiscal period a name is for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FiscalPart {
    Year,
    Quarter,
    Half,
}

impl FiscalPart {
    /// The word the story writes.
    pub fn word(self) -> &'static str {
        match self {
            FiscalPart::Year => "year",
            FiscalPart::Quarter => "quarter",
            FiscalPart::Half => "half",
        }
    }
}

/// One name of `fiscal names`: the part, the text, where it was written.
#[derive(Clone, Debug, PartialEq)]
pub struct FiscalName {
    pub part: FiscalPart,
    pub text: Str,
    pub span: Span,
}

/// `fiscal names …`: its names in the order written, and the whole line.
#[derive(Clone, Debug, PartialEq)]
pub struct FiscalNamesDecl {
    pub names: Vec<FiscalName>,
    pub span: Span,
}
