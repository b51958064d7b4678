//! How a data file writes its numbers: the `thousands` and `decimal`
//! options of a `data` item. Without them a number cell is a plain decimal
//! number ([`crate::load::parse_number`]); with them, `1,050` or
//! `1.050,5` read as the numbers they mean, on every read path (the whole
//! load, the streamed views, the type probe).
//!
//! A grouping character is read only between groups of digits: one to
//! three digits, then groups of exactly three (`12,345,678`), before the
//! decimal character. A cell such as `1,05` with `thousands ","` is not a
//! number (it is more likely a decimal comma than a group), so it is an
//! error in a number column rather than a silent 105.

/// The characters that may group digits (a comma, a point, a space, an
/// apostrophe, a no-break space, a narrow no-break space, an underscore).
pub const GROUPING: [char; 7] = [',', '.', ' ', '\'', '\u{a0}', '\u{202f}', '_'];

/// How the numbers of a data file are written.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct NumberStyle {
    /// The character grouping the digits before the decimals, if any.
    pub thousands: Option<char>,
    /// The character before the decimals (`.` or `,`).
    pub decimal: char,
}

impl Default for NumberStyle {
    fn default() -> Self {
        NumberStyle {
            thousands: None,
            decimal: '.',
        }
    }
}

impl NumberStyle {
    /// A style from the options as written, or why it is not one.
    pub fn new(thousands: Option<&str>, decimal: Option<&str>) -> Result<NumberStyle, String> {
        let one = |s: &str| {
            let mut it = s.chars();
            match (it.next(), it.next()) {
                (Some(c), None) => Some(c),
                _ => None,
            }
        };
        let decimal = match decimal {
            None => '.',
            Some(d) => match one(d) {
                Some(c @ ('.' | ',')) => c,
                _ => {
                    return Err(format!(
                        "`decimal \"{d}\"`: the decimal character is \".\" or \",\""
                    ))
                }
            },
        };
        let thousands = match thousands {
            None => None,
            Some(t) => match one(t) {
                Some(c) if GROUPING.contains(&c) => Some(c),
                _ => {
                    return Err(format!(
                    "`thousands \"{t}\"`: the grouping character is one of \",\", \".\", \" \", \
                         \"'\", \"_\", a no-break space or a narrow no-break space"
                ))
                }
            },
        };
        if thousands == Some(decimal) {
            return Err(format!(
                "the grouping and the decimal character are both \"{decimal}\""
            ));
        }
        Ok(NumberStyle { thousands, decimal })
    }

    /// Whether this is the plain style (no groups, a decimal point).
    pub fn is_plain(&self) -> bool {
        *self == NumberStyle::default()
    }

    /// Read a number cell written in this style.
    pub fn parse(&self, s: &str) -> Option<f64> {
        if self.is_plain() {
            return crate::load::parse_number(s);
        }
        crate::load::parse_number(&self.plain(s)?)
    }

    /// The cell rewritten as a plain number (groups removed, a decimal
    /// point), or `None` when its groups are not groups of three.
    fn plain(&self, s: &str) -> Option<String> {
        let (sign, rest) = match s.strip_prefix(['-', '+']) {
            Some(r) => (&s[..1], r),
            None => ("", s),
        };
        // the integer part ends at the decimal character or the exponent
        let end = rest.find([self.decimal, 'e', 'E']).unwrap_or(rest.len());
        let (int, tail) = rest.split_at(end);
        let mut out = String::with_capacity(s.len());
        out.push_str(sign);
        match self.thousands {
            Some(t) if int.contains(t) => {
                let groups: Vec<&str> = int.split(t).collect();
                let digits = |g: &str| g.chars().all(|c| c.is_ascii_digit());
                let ok = (1..=3).contains(&groups[0].len())
                    && groups.iter().all(|g| digits(g))
                    && groups[1..].iter().all(|g| g.len() == 3);
                if !ok {
                    return None;
                }
                groups.iter().for_each(|g| out.push_str(g));
            }
            _ => out.push_str(int),
        }
        // after the integer part: no grouping character, and a decimal
        // point only when the file's decimal character is one
        if self.thousands.is_some_and(|t| tail.contains(t)) {
            return None;
        }
        if self.decimal != '.' {
            if tail.contains('.') || int.contains('.') && self.thousands != Some('.') {
                return None;
            }
            out.push_str(&tail.replacen(self.decimal, ".", 1));
        } else {
            out.push_str(tail);
        }
        Some(out)
    }
}

/// For a number cell that does not read, the options that would read it
/// (`1,050` → `thousands ","`; `1.050,5` → `thousands "." decimal ","`;
/// `3,5` → `decimal ","`), written as a story writes them; `None` when no
/// style reads it.
pub fn suggest(s: &str) -> Option<String> {
    let t = s.trim();
    let mut tries: Vec<NumberStyle> = Vec::new();
    for &g in &GROUPING {
        if g != '.' {
            tries.push(NumberStyle {
                thousands: Some(g),
                decimal: '.',
            });
        }
    }
    tries.push(NumberStyle {
        thousands: None,
        decimal: ',',
    });
    for &g in &GROUPING {
        if g != ',' {
            tries.push(NumberStyle {
                thousands: Some(g),
                decimal: ',',
            });
        }
    }
    // `1,050` reads both as a group and as a decimal comma: the group
    // (the usual reading of three digits after it) comes first.
    let style = tries.into_iter().find(|st| st.parse(t).is_some())?;
    let mut out = Vec::new();
    if let Some(g) = style.thousands {
        out.push(format!("thousands \"{g}\""));
    }
    if style.decimal != '.' {
        out.push(format!("decimal \"{}\"", style.decimal));
    }
    Some(out.join(" "))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn style(t: Option<&str>, d: Option<&str>) -> NumberStyle {
        NumberStyle::new(t, d).expect("a style")
    }

    /// Expected values worked out by hand from the rule in the module docs.
    #[test]
    fn grouped_and_decimal_comma_cells_read_as_their_numbers() {
        let comma = style(Some(","), None);
        assert_eq!(comma.parse("1,050"), Some(1050.0));
        assert_eq!(comma.parse("-12,345,678.5"), Some(-12_345_678.5));
        assert_eq!(comma.parse("1050"), Some(1050.0));
        assert_eq!(comma.parse("1,05"), None); // not a group of three
        assert_eq!(comma.parse("1,0500"), None);
        assert_eq!(comma.parse(",050"), None);
        assert_eq!(comma.parse("1.050,5"), None);
        let de = style(Some("."), Some(","));
        assert_eq!(de.parse("1.050,5"), Some(1050.5));
        assert_eq!(de.parse("3,25"), Some(3.25));
        assert_eq!(de.parse("3.25"), None); // a point is a group here
        assert_eq!(de.parse("1.234.567"), Some(1_234_567.0));
        let comma_only = style(None, Some(","));
        assert_eq!(comma_only.parse("3,5"), Some(3.5));
        assert_eq!(comma_only.parse("3.5"), None);
        assert_eq!(comma_only.parse("-0,5e3"), Some(-500.0));
        let space = style(Some(" "), Some(","));
        assert_eq!(space.parse("12 345,5"), Some(12345.5));
        assert_eq!(style(None, None).parse("1,050"), None);
    }

    #[test]
    fn bad_options_are_refused() {
        assert!(NumberStyle::new(Some(","), Some(",")).is_err());
        assert!(NumberStyle::new(Some("."), None).is_err());
        assert!(NumberStyle::new(Some("x"), None).is_err());
        assert!(NumberStyle::new(None, Some(";")).is_err());
        assert!(NumberStyle::new(Some(",,"), None).is_err());
    }

    #[test]
    fn suggestions_name_the_options_that_read_the_cell() {
        assert_eq!(suggest("1,050").as_deref(), Some("thousands \",\""));
        assert_eq!(
            suggest("1.050,5").as_deref(),
            Some("thousands \".\" decimal \",\"")
        );
        assert_eq!(suggest("3,5").as_deref(), Some("decimal \",\""));
        assert_eq!(suggest("12 345").as_deref(), Some("thousands \" \""));
        assert_eq!(suggest("eighty"), None);
    }
}
