//! Database column types → the story's column types.
//!
//! | database type                         | undeclared | may be declared as        |
//! |---------------------------------------|------------|---------------------------|
//! | `text`, `varchar`, `char`, `name`     | text       | text, month, date         |
//! | `smallint`, `integer`, `bigint`       | number     | number, year, text        |
//! | `numeric`, `real`, `double precision` | number     | number, text              |
//! | `date`                                | date       | date, month, text         |
//!
//! * A `month` is a `date` column (its day is dropped: `2024-03-17` is
//!   March 2024) or a text column holding `YYYY-MM`.
//! * A `year` is an integer column (`2024`).
//! * A `date` is a `date` column or a text column holding `YYYY-MM-DD`.
//! * Text that does not read as the declared month or date is an error
//!   naming the column and the value, found when the value is received.
//! * Any other type (`boolean`, `timestamp`, `json`, …) is a located error
//!   naming the column and its database type, but only when the story reads
//!   that column.
//!
//! Inside the SQL every text-like, month and date value is text (months
//! and dates in ISO form, so that text order in the `C` collation is
//! calendar order), numbers keep their database type, years are integers.

use crescendo_data::ColType;

use crate::print::quote_ident;

/// How a column is read from the database.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Read {
    /// Any type, as its text (`col::text`).
    Text,
    /// An exact number type (integers and `numeric`).
    Exact,
    /// A binary floating-point type (`real`, `double precision`).
    Float,
    /// A `date` as `YYYY-MM-DD`.
    DateOfDate,
    /// A `date` as its month, `YYYY-MM`.
    MonthOfDate,
    /// An integer as a year.
    Year,
}

/// A database column as the story sees it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SrcColumn {
    pub name: String,
    pub ty: ColType,
    pub read: Read,
}

impl SrcColumn {
    /// The SQL expression that reads this column from the source.
    pub fn expr(&self) -> String {
        let c = quote_ident(&self.name);
        match self.read {
            Read::Text => format!("{c}::text"),
            Read::Exact | Read::Float => c,
            Read::DateOfDate => format!("to_char({c}, 'YYYY-MM-DD')"),
            Read::MonthOfDate => format!("to_char({c}, 'YYYY-MM')"),
            Read::Year => format!("{c}::integer"),
        }
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Kind {
    Text,
    Integer,
    Decimal,
    Float,
    Date,
}

fn kind(db_type: &str) -> Option<Kind> {
    Some(match db_type {
        "text" | "varchar" | "bpchar" | "name" | "citext" => Kind::Text,
        "int2" | "int4" | "int8" => Kind::Integer,
        "numeric" => Kind::Decimal,
        "float4" | "float8" => Kind::Float,
        "date" => Kind::Date,
        _ => return None,
    })
}

/// Whether a database type is text-like (ordered in the `C` collation).
pub fn is_text(db_type: &str) -> bool {
    kind(db_type) == Some(Kind::Text)
}

/// A readable name for a database type, as PostgreSQL's `format_type` would
/// say it.
pub fn display(db_type: &str) -> &str {
    match db_type {
        "int2" => "smallint",
        "int4" => "integer",
        "int8" => "bigint",
        "float4" => "real",
        "float8" => "double precision",
        "bpchar" => "character",
        "varchar" => "character varying",
        "bool" => "boolean",
        "timestamptz" => "timestamp with time zone",
        other => other,
    }
}

/// How to read a column of database type `db_type` (the protocol's type
/// name, e.g. `int4`) as `declared` (or its natural type). `Err` says why
/// it cannot be read.
pub fn map(db_type: &str, declared: Option<ColType>) -> Result<(ColType, Read), String> {
    let shown = display(db_type);
    let Some(k) = kind(db_type) else {
        return Err(format!(
            "its database type `{shown}` cannot be read (crescendo reads text, number, date, month and year columns)"
        ));
    };
    let read = match (declared, k) {
        (None | Some(ColType::Text), Kind::Text) => Read::Text,
        (Some(ColType::Text), _) => Read::Text,
        (None | Some(ColType::Number), Kind::Integer | Kind::Decimal) => Read::Exact,
        (None | Some(ColType::Number), Kind::Float) => Read::Float,
        (None | Some(ColType::Date), Kind::Date) => Read::DateOfDate,
        (Some(ColType::Date), Kind::Text) => Read::Text,
        (Some(ColType::Month), Kind::Date) => Read::MonthOfDate,
        (Some(ColType::Month), Kind::Text) => Read::Text,
        (Some(ColType::Year), Kind::Integer) => Read::Year,
        (Some(want), _) => {
            return Err(format!(
                "it is declared {} but its database type is `{shown}`",
                want.name()
            ))
        }
    };
    let ty = declared.unwrap_or(match k {
        Kind::Text => ColType::Text,
        Kind::Integer | Kind::Decimal | Kind::Float => ColType::Number,
        Kind::Date => ColType::Date,
    });
    Ok((ty, read))
}

#[cfg(test)]
mod tests;
