//! The crescendo story language: the pest grammar in `grammar/story.pest`,
//! a syntax tree with spans ([`ast`]), a parser that reports every syntax
//! error of a file ([`parse`]), walks over the tree ([`visit`]) and the
//! canonical layout ([`format`]).

pub mod ast;
mod fiscal_ast;
pub mod format;
pub mod parser;
mod position;
pub mod source;
mod template_ast;
pub mod visit;

pub use format::{format_source, format_story};
pub use parser::{parse, TOP_KEYWORDS};
