//! The audience's conventions: how numbers and dates are written (a
//! locale, from the story's `locale "de-DE"` statement) and when the year
//! starts (a fiscal calendar, from `fiscal year starts July`).
//!
//! Locale data comes from ICU4X (`icu_decimal`, `icu_datetime`) with its
//! compiled CLDR data (CLDR 49.0.0 in ICU4X 2.4; see the data crates'
//! READMEs). Our own rounding rules (`format.rs`) choose the digits; the
//! locale only decides the symbols and grouping around them (decimal comma,
//! grouping separator and sizes, minus sign) and the month names and date
//! patterns. Without a locale statement nothing here changes the output.
//!
//! The conventions of the story being built are held per thread while it
//! is planned and drawn ([`scoped`]); formatting functions read them with
//! [`current`]. A build runs on one thread, so two stories built at once
//! on two threads do not see each other's conventions.
//!
//! # Fiscal years
//!
//! A fiscal year that starts in month S (S > 1) is named by the calendar
//! year in which it ends (common practice in budgeting and reporting, e.g.
//! public bodies whose year runs July to June): with S = July, July 2024 to
//! June 2025 is FY2025; its first quarter is July–September 2024
//! ("FY2025 Q1"), and March 2025 is in "FY2025 Q3".

use std::cell::RefCell;
use std::rc::Rc;

use fixed_decimal::Decimal as FixedDecimal;
use icu_calendar::{Date, Gregorian};
use icu_datetime::fieldsets::{M, MD, YM, YMD};
use icu_datetime::FixedCalendarDateTimeFormatter;
use icu_decimal::DecimalFormatter;

use crate::format::CompactStep;

/// A locale's formatters, built once per story.
pub struct Locale {
    tag: String,
    decimal: DecimalFormatter,
    /// The same without grouping, for numbers printed without groups.
    ungrouped: DecimalFormatter,
    month: FixedCalendarDateTimeFormatter<Gregorian, M>,
    month_year: FixedCalendarDateTimeFormatter<Gregorian, YM>,
    day: FixedCalendarDateTimeFormatter<Gregorian, MD>,
    day_year: FixedCalendarDateTimeFormatter<Gregorian, YMD>,
    /// Percent and compact patterns ([`Forms`]).
    forms: Option<&'static Forms>,
    /// The language subtag (`de`).
    language: String,
}

/// A locale's percent and compact forms. ICU4X's stable components do not
/// format percentages or compact numbers (those live in its experimental
/// crate), so the CLDR patterns of the languages crescendo ships are here:
/// CLDR `percentFormats` "standard" and `decimalFormats` "short" (checked
/// against cldr-json 44.1 `numbers.json` for de and fr; es and en, and the
/// kind of space in each pattern, from memory of the same data, unchanged
/// through CLDR 49 as far as known). A language without an entry keeps
/// the crescendo forms (`12.3%`, `4.5M`), its digits still localised.
#[derive(Debug)]
pub struct Forms {
    /// The text after a percentage's digits ("%", "\u{a0}%").
    pub percent_suffix: &'static str,
    /// The compact steps, from the largest down.
    pub compact: &'static [CompactStep],
}

/// The crescendo forms (no locale, or a language without patterns).
pub const CRESCENDO_FORMS: Forms = Forms {
    percent_suffix: "%",
    compact: crate::format::COMPACT_STEPS,
};

/// The forms of a language (its CLDR patterns), `None` when crescendo
/// ships none for it.
pub fn forms_of(language: &str) -> Option<&'static Forms> {
    const EN: Forms = Forms {
        // "#,##0%"; short: "0K", "0M", "0B", "0T"
        percent_suffix: "%",
        compact: &[(12, 12, "T"), (9, 9, "B"), (6, 6, "M"), (3, 3, "K")],
    };
    const DE: Forms = Forms {
        // "#,##0 %"; short: thousands stay whole ("0"), "0 Mio'.'",
        // "0 Mrd'.'", "0 Bio'.'" (the space a no-break space)
        percent_suffix: "\u{a0}%",
        compact: &[
            (12, 12, "\u{a0}Bio."),
            (9, 9, "\u{a0}Mrd."),
            (6, 6, "\u{a0}Mio."),
        ],
    };
    const FR: Forms = Forms {
        // "#,##0 %" with U+202F NARROW NO-BREAK SPACE; short: "0 k",
        // "0 M", "0 Md", "0 Bn"
        percent_suffix: "\u{202f}%",
        compact: &[
            (12, 12, "\u{a0}Bn"),
            (9, 9, "\u{a0}Md"),
            (6, 6, "\u{a0}M"),
            (3, 3, "\u{a0}k"),
        ],
    };
    const ES: Forms = Forms {
        // "#,##0 %"; short: "0 mil", "0 M", "0000 M" (10^9 in millions),
        // "00 mil M" (10^10), "0 B" (10^12)
        percent_suffix: "\u{a0}%",
        compact: &[
            (12, 12, "\u{a0}B"),
            (10, 9, "\u{a0}mil\u{a0}M"),
            (6, 6, "\u{a0}M"),
            (3, 3, "\u{a0}mil"),
        ],
    };
    by_language(language, [&EN, &DE, &FR, &ES])
}

/// Of things given for the languages crescendo ships words and patterns
/// for, in the order English, German, French, Spanish, the one for
/// `language` (a language subtag such as `de`); `None` for another.
pub fn by_language<T>(language: &str, [en, de, fr, es]: [T; 4]) -> Option<T> {
    match language {
        "en" => Some(en),
        "de" => Some(de),
        "fr" => Some(fr),
        "es" => Some(es),
        _ => None,
    }
}

impl std::fmt::Debug for Locale {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "Locale({})", self.tag)
    }
}

impl Locale {
    /// The formatters for a BCP 47 tag such as `de-DE`, `fr-FR`, `en-IN`.
    /// A tag that is not well-formed is an error (the message says why); a
    /// well-formed tag whose language the CLDR data does not cover is an
    /// error too, rather than a silent fallback to the root conventions.
    pub fn new(tag: &str) -> Result<Locale, String> {
        let parsed = icu_locale_core::Locale::try_from_str(tag)
            .map_err(|e| format!("`{tag}` is not a locale tag ({e:?}); write e.g. \"de-DE\""))?;
        let fail =
            |what: &str, e: &dyn std::fmt::Debug| format!("no {what} data for `{tag}`: {e:?}");
        let decimal = DecimalFormatter::try_new((&parsed).into(), Default::default())
            .map_err(|e| fail("number", &e))?;
        let mut options = icu_decimal::options::DecimalFormatterOptions::default();
        options.grouping_strategy = Some(icu_decimal::options::GroupingStrategy::Never);
        let ungrouped =
            DecimalFormatter::try_new((&parsed).into(), options).map_err(|e| fail("number", &e))?;
        let month = FixedCalendarDateTimeFormatter::try_new((&parsed).into(), M::medium())
            .map_err(|e| fail("month", &e))?;
        let month_year = FixedCalendarDateTimeFormatter::try_new((&parsed).into(), YM::medium())
            .map_err(|e| fail("month", &e))?;
        let day = FixedCalendarDateTimeFormatter::try_new((&parsed).into(), MD::medium())
            .map_err(|e| fail("date", &e))?;
        let day_year = FixedCalendarDateTimeFormatter::try_new((&parsed).into(), YMD::medium())
            .map_err(|e| fail("date", &e))?;
        let forms = forms_of(parsed.id.language.as_str());
        let locale = Locale {
            forms,
            language: parsed.id.language.as_str().to_string(),
            tag: parsed.to_string(),
            decimal,
            ungrouped,
            month,
            month_year,
            day,
            day_year,
        };
        // ICU4X falls back silently to CLDR's root locale for a language it
        // has no data for; root names the months "M01" … "M12". We would
        // rather say so than write German numbers with root month names.
        if locale.month_name(1) == "M01" {
            return Err(format!(
                "CLDR (as shipped with crescendo) has no date and number conventions for `{tag}`"
            ));
        }
        Ok(locale)
    }

    /// The tag as ICU4X normalises it (`de-DE`).
    pub fn tag(&self) -> &str {
        &self.tag
    }

    /// Whether crescendo ships this language's own patterns (percent,
    /// compact, sentences); without them the crescendo forms are used.
    pub fn has_patterns(&self) -> bool {
        self.forms.is_some()
    }

    /// The language subtag (`de` for `de-AT`).
    pub fn language(&self) -> &str {
        &self.language
    }

    /// The compact steps of this locale (CLDR's short decimal formats).
    pub fn compact_steps(&self) -> &'static [CompactStep] {
        self.forms.unwrap_or(&CRESCENDO_FORMS).compact
    }

    /// What follows a percentage's digits ("%", "\u{a0}%").
    pub fn percent_suffix(&self) -> &'static str {
        self.forms.unwrap_or(&CRESCENDO_FORMS).percent_suffix
    }

    /// Rewrite a number written the crescendo way (`-12,345.6`, ASCII,
    /// comma groups, optional suffix such as `k` or `\u{a0}Mio.`) in this
    /// locale.
    pub fn number(&self, ascii: &str) -> String {
        let end = ascii.find(|c: char| !(c.is_ascii_digit() || matches!(c, '.' | ',' | '-')));
        let (body, suffix) = match end {
            Some(i) => ascii.split_at(i),
            None => (ascii, ""),
        };
        let plain: String = body.chars().filter(|&c| c != ',').collect();
        // A number of a thousand or more written without groups (a count
        // in a sentence, a year) stays without groups.
        let int_digits = plain
            .split('.')
            .next()
            .unwrap_or("")
            .trim_start_matches('-')
            .len();
        let formatter = if int_digits >= 4 && !body.contains(',') {
            &self.ungrouped
        } else {
            &self.decimal
        };
        match plain.parse::<FixedDecimal>() {
            Ok(d) => format!("{}{suffix}", formatter.format(&d)),
            Err(_) => ascii.to_string(),
        }
    }

    /// The decimal separator ("," for de-DE and fr-FR, "." for en-IN).
    pub fn decimal_separator(&self) -> String {
        let one_and_half = self.number("1.5");
        one_and_half
            .trim_start_matches('1')
            .trim_end_matches('5')
            .to_string()
    }

    fn date(y: i32, m: u32, d: u32) -> Option<Date<Gregorian>> {
        Date::try_new_gregorian(y, u8::try_from(m).ok()?, u8::try_from(d).ok()?).ok()
    }

    /// The abbreviated month name ("Jan", "janv.", "Jan").
    pub fn month_name(&self, month: u32) -> String {
        Self::date(2000, month.clamp(1, 12), 1)
            .map(|d| self.month.format(&d).to_string())
            .unwrap_or_default()
    }

    /// A month of a year ("Jan 2024", "févr. 2024"): CLDR's medium
    /// year-month pattern when it spells the month; where that pattern is
    /// numeric (German: "02/2024"), the abbreviated month name and the year
    /// ("Feb. 2024" style), so that axis labels name their months.
    pub fn month_year(&self, year: i32, month: u32) -> String {
        let month = month.clamp(1, 12);
        let Some(d) = Self::date(year, month, 1) else {
            return format!("{year}-{month:02}");
        };
        let cldr = self.month_year.format(&d).to_string();
        if cldr.chars().any(char::is_alphabetic) {
            cldr
        } else {
            format!("{} {year}", self.month_name(month))
        }
    }

    /// A day, with or without its year ("4 Mar", "04.03.2024").
    pub fn day(&self, year: i32, month: u32, day: u32, with_year: bool) -> String {
        match Self::date(year, month, day) {
            Some(d) if with_year => self.day_year.format(&d).to_string(),
            Some(d) => self.day.format(&d).to_string(),
            None => format!("{year}-{month:02}-{day:02}"),
        }
    }
}

/// What a story calls its fiscal periods: the year's prefix (`FY` in
/// `FY2025`), and the quarter's and the half's (`Q` in `Q3`, `H` in `H1`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FiscalNames {
    pub year: &'static str,
    pub quarter: &'static str,
    pub half: &'static str,
}

/// The English names, and crescendo's without a locale.
pub const FISCAL_NAMES: FiscalNames = FiscalNames {
    year: "FY",
    quarter: "Q",
    half: "H",
};

/// The names a language's readers expect (common practice of business
/// writing, from memory, not from CLDR, which has no fiscal labels): German
/// `GJ 2025` (Geschäftsjahr) with `Q1`, `H1`; French `Ex. 2025`
/// (exercice) with `T1` (trimestre), `S1` (semestre); Spanish `Ej. 2025`
/// (ejercicio) with `T1`, `S1`. Other languages keep the English names.
pub fn fiscal_names_of(language: &str) -> &'static FiscalNames {
    const DE: FiscalNames = FiscalNames {
        year: "GJ\u{a0}",
        quarter: "Q",
        half: "H",
    };
    const FR: FiscalNames = FiscalNames {
        year: "Ex.\u{a0}",
        quarter: "T",
        half: "S",
    };
    const ES: FiscalNames = FiscalNames {
        year: "Ej.\u{a0}",
        quarter: "T",
        half: "S",
    };
    by_language(language, [&FISCAL_NAMES, &DE, &FR, &ES]).unwrap_or(&FISCAL_NAMES)
}

/// The names a story gave (`fiscal names year "GJ"`), each kept once for
/// the life of the process so that [`Fiscal`] stays a plain value: a story
/// has one set, and a `watch` session re-planning it meets the same one.
pub fn intern_names(names: FiscalNamesOwned) -> &'static FiscalNames {
    use std::sync::{Mutex, OnceLock};
    static KEPT: OnceLock<Mutex<Vec<&'static FiscalNames>>> = OnceLock::new();
    let kept = KEPT.get_or_init(|| Mutex::new(Vec::new()));
    let mut kept = kept.lock().unwrap_or_else(|e| e.into_inner());
    let same = |n: &&&'static FiscalNames| {
        n.year == names.year && n.quarter == names.quarter && n.half == names.half
    };
    if let Some(n) = kept.iter().find(same) {
        return n;
    }
    let leak = |s: String| -> &'static str { Box::leak(s.into_boxed_str()) };
    let made: &'static FiscalNames = Box::leak(Box::new(FiscalNames {
        year: leak(names.year),
        quarter: leak(names.quarter),
        half: leak(names.half),
    }));
    kept.push(made);
    made
}

/// Fiscal names as a story writes them, before [`intern_names`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FiscalNamesOwned {
    pub year: String,
    pub quarter: String,
    pub half: String,
}

/// When the year starts: `1` is the calendar year; `7` a fiscal year from
/// July to June, named by the calendar year in which it ends; and what the
/// fiscal periods are called.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Fiscal {
    pub start_month: u32,
    pub names: &'static FiscalNames,
}

impl Default for Fiscal {
    fn default() -> Self {
        Fiscal {
            start_month: 1,
            names: &FISCAL_NAMES,
        }
    }
}

impl Fiscal {
    /// A fiscal year from `start_month` with the English names.
    pub fn starting(start_month: u32) -> Fiscal {
        Fiscal {
            start_month: start_month.clamp(1, 12),
            names: &FISCAL_NAMES,
        }
    }

    /// True for a year that does not start in January.
    pub fn is_fiscal(self) -> bool {
        self.start_month != 1
    }

    /// The fiscal year of a calendar month (1-based): the calendar year in
    /// which the fiscal year ends.
    pub fn year_of(self, year: i32, month: u32) -> i32 {
        if self.is_fiscal() && month >= self.start_month {
            year + 1
        } else {
            year
        }
    }

    /// The fiscal quarter (1 to 4) of a calendar month.
    pub fn quarter_of(self, month: u32) -> u32 {
        let from_start = (month + 12 - self.start_month.clamp(1, 12)) % 12;
        from_start / 3 + 1
    }

    /// The month-index offset of the fiscal year: ticks of 3, 6 or 12
    /// months are aligned on `idx ≡ offset (mod step)`.
    pub fn offset(self) -> i64 {
        i64::from(self.start_month.clamp(1, 12)) - 1
    }

    /// "FY2025" (fiscal, with the story's prefix) or "2025" (calendar).
    pub fn year_label(self, year: i32, month: u32) -> String {
        if self.is_fiscal() {
            format!("{}{}", self.names.year, self.year_of(year, month))
        } else {
            year.to_string()
        }
    }

    /// "Q3" (fiscal: the story's quarter name; calendar: `Q`).
    pub fn quarter_name(self, quarter: u32) -> String {
        let name = if self.is_fiscal() {
            self.names.quarter
        } else {
            "Q"
        };
        format!("{name}{quarter}")
    }

    /// "H1" (fiscal: the story's half name; calendar: `H`).
    pub fn half_name(self, half: u32) -> String {
        let name = if self.is_fiscal() {
            self.names.half
        } else {
            "H"
        };
        format!("{name}{half}")
    }

    /// "FY2025 Q3" (fiscal) or "2025 Q3" (calendar).
    pub fn quarter_label(self, year: i32, month: u32) -> String {
        format!(
            "{} {}",
            self.year_label(year, month),
            self.quarter_name(self.quarter_of(month))
        )
    }
}

/// Everything a story says about its audience's conventions.
#[derive(Debug, Default)]
pub struct Conventions {
    pub locale: Option<Locale>,
    pub fiscal: Fiscal,
}

impl Conventions {
    /// The conventions a plan records (`locale`, `fiscal_start`). A locale
    /// the plan accepted always builds; should it not, numbers fall back to
    /// the default conventions rather than failing the drawing.
    pub fn of(locale: Option<&str>, fiscal_start: Option<u32>) -> Rc<Conventions> {
        Conventions::named(locale, fiscal_start, None)
    }

    /// [`Conventions::of`] with the fiscal names a story gave; without
    /// them, the locale's ([`fiscal_names_of`]).
    pub fn named(
        locale: Option<&str>,
        fiscal_start: Option<u32>,
        names: Option<&'static FiscalNames>,
    ) -> Rc<Conventions> {
        let locale = locale.and_then(|t| Locale::new(t).ok());
        let names = names.unwrap_or_else(|| {
            locale
                .as_ref()
                .map_or(&FISCAL_NAMES, |l| fiscal_names_of(l.language()))
        });
        Rc::new(Conventions {
            locale,
            fiscal: Fiscal {
                start_month: fiscal_start.unwrap_or(1).clamp(1, 12),
                names,
            },
        })
    }
}

thread_local! {
    static CURRENT: RefCell<Rc<Conventions>> = RefCell::new(Rc::new(Conventions::default()));
}

/// The conventions in force on this thread (the defaults outside
/// [`scoped`]).
pub fn current() -> Rc<Conventions> {
    CURRENT.with(|c| c.borrow().clone())
}

/// Run `f` with `conventions` in force on this thread; the previous ones
/// come back afterwards, even if `f` panics.
pub fn scoped<R>(conventions: Rc<Conventions>, f: impl FnOnce() -> R) -> R {
    struct Restore(Option<Rc<Conventions>>);
    impl Drop for Restore {
        fn drop(&mut self) {
            if let Some(prev) = self.0.take() {
                CURRENT.with(|c| *c.borrow_mut() = prev);
            }
        }
    }
    let prev = CURRENT.with(|c| std::mem::replace(&mut *c.borrow_mut(), conventions));
    let _restore = Restore(Some(prev));
    f()
}

/// Apply the current locale to a number written the crescendo way.
pub fn localize_number(ascii: String) -> String {
    let c = current();
    match &c.locale {
        Some(l) if ascii != "n/a" => l.number(&ascii),
        _ => ascii,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Expected strings are CLDR 49 as shipped in ICU4X 2.4's compiled data
    // (icu_decimal_data / icu_datetime_data 2.4.0): de uses "." for groups
    // and "," for decimals; fr groups with U+202F NARROW NO-BREAK SPACE;
    // en-IN groups by 3 then 2 (lakh/crore, "12,34,567"); es needs at least
    // two digits in the top group before grouping (minimumGroupingDigits =
    // 2: "1234" but "12.345").
    #[test]
    fn numbers_follow_cldr() {
        let de = Locale::new("de-DE").expect("de");
        assert_eq!(de.number("-12,345.67"), "-12.345,67");
        assert_eq!(de.number("0.50"), "0,50");
        let fr = Locale::new("fr-FR").expect("fr");
        assert_eq!(fr.number("1,234,567.8"), "1\u{202f}234\u{202f}567,8");
        let en_in = Locale::new("en-IN").expect("en-IN");
        assert_eq!(en_in.number("1,234,567"), "12,34,567");
        let es = Locale::new("es-ES").expect("es");
        assert_eq!(es.number("1,234"), "1234");
        assert_eq!(es.number("12,345.5"), "12.345,5");
        assert_eq!(de.number("12.3k"), "12,3k");
        let en = Locale::new("en-US").expect("en");
        assert_eq!(en.number("-12,345.67"), "-12,345.67");
        assert_eq!(de.decimal_separator(), ",");
        assert_eq!(en_in.decimal_separator(), ".");
    }

    #[test]
    fn months_and_days_follow_cldr() {
        let de = Locale::new("de-DE").expect("de");
        // CLDR 49 German stand-alone abbreviated month names: "Jan", "Feb", "Mär"…
        assert_eq!(de.month_name(3), "Mär");
        let fr = Locale::new("fr-FR").expect("fr");
        assert_eq!(fr.month_name(1), "janv.");
        assert_eq!(fr.month_year(2024, 2), "févr. 2024");
        let en = Locale::new("en-US").expect("en");
        assert_eq!(en.month_year(2024, 1), "Jan 2024");
        assert_eq!(en.day(2024, 3, 4, true), "Mar 4, 2024");
        assert_eq!(de.day(2024, 3, 4, true), "04.03.2024");
        // CLDR's German medium year-month is numeric ("03/2024"): the
        // month's name is used instead
        assert_eq!(de.month_year(2024, 3), "Mär 2024");
    }

    #[test]
    fn bad_tags_are_errors() {
        assert!(Locale::new("de_DE!").is_err());
        assert!(Locale::new("zz-ZZ").is_err());
        assert!(Locale::new("qaa").is_err());
        // a language with data in a region CLDR does not list still works
        // (fallback within the language)
        assert_eq!(
            Locale::new("de-JP").expect("de-JP").number("1,234.5"),
            "1.234,5"
        );
        for tag in [
            "ja-JP", "hi-IN", "pt-BR", "sv-SE", "pl-PL", "ar-EG", "zh-CN",
        ] {
            assert!(Locale::new(tag).is_ok(), "{tag}");
        }
    }

    #[test]
    fn fiscal_years_are_named_by_the_year_they_end_in() {
        // Worked example (common practice): a year starting in July.
        // July 2024 .. June 2025 is FY2025. Quarters: Jul-Sep Q1,
        // Oct-Dec Q2, Jan-Mar Q3, Apr-Jun Q4. So March 2025 is FY2025 Q3,
        // July 2024 is FY2025 Q1 and June 2024 is FY2024 Q4.
        let f = Fiscal::starting(7);
        assert_eq!(f.quarter_label(2025, 3), "FY2025 Q3");
        assert_eq!(f.quarter_label(2024, 7), "FY2025 Q1");
        assert_eq!(f.quarter_label(2024, 6), "FY2024 Q4");
        assert_eq!(f.year_label(2024, 12), "FY2025");
        // A year starting in April (as in several national budgets):
        // April 2024 .. March 2025 is FY2025; January 2025 is its Q4.
        let apr = Fiscal::starting(4);
        assert_eq!(apr.quarter_label(2025, 1), "FY2025 Q4");
        assert_eq!(apr.quarter_label(2024, 4), "FY2025 Q1");
        // The calendar year: no prefix.
        let cal = Fiscal::default();
        assert_eq!(cal.quarter_label(2024, 11), "2024 Q4");
    }

    #[test]
    fn scoped_conventions_come_back() {
        assert!(current().locale.is_none());
        let c = Rc::new(Conventions {
            locale: Some(Locale::new("de-DE").expect("de")),
            fiscal: Fiscal::default(),
        });
        let inside = scoped(c, || localize_number("1,234.5".into()));
        assert_eq!(inside, "1.234,5");
        assert_eq!(localize_number("1,234.5".into()), "1,234.5");
    }
}
