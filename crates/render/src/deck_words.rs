//! The HTML deck's own words (its buttons, their tooltips, the names a
//! screen reader says for the deck, a frame and the notes), one set per
//! language crescendo ships descriptions in: English, German, French and
//! Spanish. The deck takes the story's locale; a language without words
//! gets the English ones, marked `lang="en"` so a screen reader reads them
//! as English. The translations are the project's own; the keys (`n`, `d`)
//! stay the same in every language.

/// One language's words.
#[derive(Debug, PartialEq, Eq)]
pub(crate) struct DeckWords {
    /// What the deck is (`aria-roledescription` of the whole deck).
    pub deck: &'static str,
    /// What one frame is (`aria-roledescription` of each frame).
    pub frame: &'static str,
    /// The name of a frame's speaker notes.
    pub notes: &'static str,
    /// The notes switch's text and its tooltip.
    pub notes_button: &'static str,
    pub notes_tip: &'static str,
    /// The speaker's desk switch's text and its tooltip.
    pub desk_button: &'static str,
    pub desk_tip: &'static str,
    /// The time since the desk opened (the clock's name).
    pub clock: &'static str,
    /// The closing frame's name.
    pub conclusion: &'static str,
}

const EN: DeckWords = DeckWords {
    deck: "slide deck",
    frame: "slide",
    notes: "Speaker notes",
    notes_button: "Notes",
    notes_tip: "Show or hide the speaker notes (key n)",
    desk_button: "Desk",
    desk_tip: "The speaker's desk: this frame, the next one, the notes and the time since it opened (key d)",
    clock: "Time since the desk opened",
    conclusion: "Conclusion",
};

const DE: DeckWords = DeckWords {
    deck: "Foliensatz",
    frame: "Folie",
    notes: "Vortragsnotizen",
    notes_button: "Notizen",
    notes_tip: "Vortragsnotizen ein- oder ausblenden (Taste n)",
    desk_button: "Pult",
    desk_tip: "Das Rednerpult: diese Folie, die nächste, die Notizen und die Zeit seit dem Öffnen (Taste d)",
    clock: "Zeit seit dem Öffnen des Pults",
    conclusion: "Fazit",
};

const FR: DeckWords = DeckWords {
    deck: "présentation",
    frame: "diapositive",
    notes: "Notes de l’orateur",
    notes_button: "Notes",
    notes_tip: "Afficher ou masquer les notes de l’orateur (touche n)",
    desk_button: "Pupitre",
    desk_tip: "Le pupitre de l’orateur : cette diapositive, la suivante, les notes et le temps écoulé depuis son ouverture (touche d)",
    clock: "Temps écoulé depuis l’ouverture du pupitre",
    conclusion: "Conclusion",
};

const ES: DeckWords = DeckWords {
    deck: "presentación",
    frame: "diapositiva",
    notes: "Notas del orador",
    notes_button: "Notas",
    notes_tip: "Mostrar u ocultar las notas del orador (tecla n)",
    desk_button: "Atril",
    desk_tip: "El atril del orador: esta diapositiva, la siguiente, las notas y el tiempo desde que se abrió (tecla d)",
    clock: "Tiempo desde que se abrió el atril",
    conclusion: "Conclusión",
};

/// The words for a locale (`de-DE`, `fr_CH`, `es`), and whether they are
/// its own (`false`: English stands in).
pub(crate) fn of_locale(locale: Option<&str>) -> (&'static DeckWords, bool) {
    let language = locale
        .and_then(|l| l.split(['-', '_']).next())
        .unwrap_or("en")
        .to_ascii_lowercase();
    match language.as_str() {
        "en" => (&EN, true),
        "de" => (&DE, true),
        "fr" => (&FR, true),
        "es" => (&ES, true),
        _ => (&EN, false),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_shipped_language_has_words_of_its_own() {
        assert_eq!(of_locale(None), (&EN, true));
        assert_eq!(of_locale(Some("de-DE")), (&DE, true));
        assert_eq!(of_locale(Some("DE_at")), (&DE, true));
        assert_eq!(of_locale(Some("fr-CA")), (&FR, true));
        assert_eq!(of_locale(Some("es-MX")), (&ES, true));
        assert_eq!(of_locale(Some("ja-JP")), (&EN, false));
        // the keys the tooltips name are the keys the script listens to
        for w in [&EN, &DE, &FR, &ES] {
            assert!(w.notes_tip.ends_with(" n)"), "{}", w.notes_tip);
            assert!(w.desk_tip.ends_with(" d)"), "{}", w.desk_tip);
        }
    }
}
