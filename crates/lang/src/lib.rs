//! The crescendo story language: the pest grammar in `grammar/story.pest`,
//! a syntax tree with spans ([`ast`]) and a parser that reports every
//! syntax error of a file ([`parse`]).

pub mod ast;
pub mod format;
pub mod parser;

pub use format::{format_source, format_story};
pub use parser::{parse, TOP_KEYWORDS};
