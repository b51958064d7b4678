//! The sentence patterns of generated descriptions (the SVG `<desc>` a
//! screen reader reads), one set per language crescendo ships: English,
//! German, French and Spanish. `{1}`, `{2}`, … are filled with the parts
//! (names and figures as written by the story and the number policy);
//! a translator moves them where the language wants them. A story in a
//! locale without patterns is described in English, and `plan` says so
//! once (warning `locale-sentences`).

/// One language's patterns.
pub(crate) struct Sentences {
    pub line: &'static str,
    pub one_line_per: &'static str,
    pub rose: &'static str,
    pub fell: &'static str,
    pub level: &'static str,
    pub highlighted: &'static str,
    pub the_measure: &'static str,
    pub bars: &'static str,
    pub stacked: &'static str,
    pub grouped: &'static str,
    pub dots: &'static str,
    pub no_data: &'static str,
    pub scatter: &'static str,
    pub fit: &'static str,
    pub correlation: &'static str,
    pub highlighted_list: &'static str,
    pub figure: &'static str,
    pub figures: &'static str,
    pub table: &'static str,
    pub pie: &'static str,
    pub panels: &'static str,
    pub common_scale: &'static str,
    pub separate_scales: &'static str,
    pub plugin: &'static str,
    pub takeaway: &'static str,
    /// `cite`: one mark or the marks of a share.
    pub cited: &'static str,
    /// `cite`: a ratio or difference of two marks.
    pub cited_pair: &'static str,
    /// `cite`: a change from one point to another.
    pub cited_change: &'static str,
    /// `cite`: a growth or fit drawn as a path.
    pub cited_path: &'static str,
    /// A `moment` on a line chart: its label and its time.
    pub marked: &'static str,
}

const EN: Sentences = Sentences {
    line: "Line chart of {1} from {2} to {3}",
    one_line_per: ", one line per {1}: {2}",
    rose: " Highlighted: {1} rose from {2} in {3} to {4} in {5}, with a high of {6} in {7}.",
    fell: " Highlighted: {1} fell from {2} in {3} to {4} in {5}, with a high of {6} in {7}.",
    level:
        " Highlighted: {1} ended level from {2} in {3} to {4} in {5}, with a high of {6} in {7}.",
    highlighted: " (highlighted)",
    the_measure: "the measure",
    bars: "Bar chart of {1} by {2}, {3} bars: {4}.",
    stacked: "Stacked bar chart of {1}, {2} categories split by {3} into {4}. Totals: {5}.",
    grouped: "Grouped bar chart of {1}, {2} categories split by {3} into {4}. Totals: {5}.",
    dots: "Dot plot of {1}: {2}.",
    no_data: "no data",
    scatter: "Scatter of {1} against {2}, {3} points",
    fit: "; fitted line rises {1} per unit",
    correlation: ", correlation {1}",
    highlighted_list: "; highlighted: {1}",
    figure: "Key figure: {1}.",
    figures: "Key figures: {1}.",
    table: "Table of {1} rows with columns {2}",
    pie: "Pie chart of shares by {1}: {2}.",
    panels: "Small multiples, one panel per {1} on {2}: {3}.",
    common_scale: "one common scale",
    separate_scales: "separate scales",
    plugin: "Chart drawn by the plugin {1} {2} (form {3}).",
    takeaway: " Takeaway: {1}",
    cited: " Marked: {1} at {2}.",
    cited_pair: " Marked: {1} between {2} and {3}.",
    cited_change: " Marked: {1} from {2} to {3}.",
    cited_path: " Marked: {1}, as a thin path over the data.",
    marked: " Marked: {1} ({2}).",
};

const DE: Sentences = Sentences {
    line: "Liniendiagramm: {1} von {2} bis {3}",
    one_line_per: ", eine Linie je {1}: {2}",
    rose: " Hervorgehoben: {1} stieg von {2} ({3}) auf {4} ({5}), Höchstwert {6} ({7}).",
    fell: " Hervorgehoben: {1} fiel von {2} ({3}) auf {4} ({5}), Höchstwert {6} ({7}).",
    level: " Hervorgehoben: {1} lag am Ende gleich, {2} ({3}) und {4} ({5}), Höchstwert {6} ({7}).",
    highlighted: " (hervorgehoben)",
    the_measure: "Messwert",
    bars: "Balkendiagramm: {1} je {2}, {3} Balken: {4}.",
    stacked:
        "Gestapeltes Balkendiagramm: {1}, {2} Kategorien, aufgeteilt nach {3} in {4}. Summen: {5}.",
    grouped:
        "Gruppiertes Balkendiagramm: {1}, {2} Kategorien, aufgeteilt nach {3} in {4}. Summen: {5}.",
    dots: "Punktdiagramm: {1}: {2}.",
    no_data: "keine Daten",
    scatter: "Streudiagramm: {1} gegen {2}, {3} Punkte",
    fit: "; die Ausgleichsgerade steigt um {1} je Einheit",
    correlation: ", Korrelation {1}",
    highlighted_list: "; hervorgehoben: {1}",
    figure: "Kennzahl: {1}.",
    figures: "Kennzahlen: {1}.",
    table: "Tabelle mit {1} Zeilen und den Spalten {2}",
    pie: "Kreisdiagramm der Anteile je {1}: {2}.",
    panels: "Kleine Vielfache, ein Feld je {1} auf {2}: {3}.",
    common_scale: "einer gemeinsamen Skala",
    separate_scales: "getrennten Skalen",
    plugin: "Diagramm des Plugins {1} {2} (Form {3}).",
    takeaway: " Kernaussage: {1}",
    cited: " Markiert: {1} bei {2}.",
    cited_pair: " Markiert: {1} zwischen {2} und {3}.",
    cited_change: " Markiert: {1} von {2} bis {3}.",
    cited_path: " Markiert: {1}, als dünne Linie über den Daten.",
    marked: " Markiert: {1} ({2}).",
};

const FR: Sentences = Sentences {
    line: "Graphique linéaire de {1} de {2} à {3}",
    one_line_per: ", une ligne par {1}\u{a0}: {2}",
    rose: " En évidence\u{a0}: {1} a augmenté de {2} ({3}) à {4} ({5}), avec un maximum de {6} ({7}).",
    fell: " En évidence\u{a0}: {1} a baissé de {2} ({3}) à {4} ({5}), avec un maximum de {6} ({7}).",
    level: " En évidence\u{a0}: {1} finit au même niveau, de {2} ({3}) à {4} ({5}), avec un maximum de {6} ({7}).",
    highlighted: " (en évidence)",
    the_measure: "la mesure",
    bars: "Diagramme en barres de {1} par {2}, {3} barres\u{a0}: {4}.",
    stacked: "Diagramme en barres empilées de {1}, {2} catégories réparties par {3} en {4}. Totaux\u{a0}: {5}.",
    grouped: "Diagramme en barres groupées de {1}, {2} catégories réparties par {3} en {4}. Totaux\u{a0}: {5}.",
    dots: "Diagramme en points de {1}\u{a0}: {2}.",
    no_data: "aucune donnée",
    scatter: "Nuage de points de {1} en fonction de {2}, {3} points",
    fit: "\u{a0}; la droite d’ajustement monte de {1} par unité",
    correlation: ", corrélation {1}",
    highlighted_list: "\u{a0}; en évidence\u{a0}: {1}",
    figure: "Chiffre clé\u{a0}: {1}.",
    figures: "Chiffres clés\u{a0}: {1}.",
    table: "Tableau de {1} lignes, colonnes {2}",
    pie: "Diagramme circulaire des parts par {1}\u{a0}: {2}.",
    panels: "Petits multiples, un panneau par {1} sur {2}\u{a0}: {3}.",
    common_scale: "une échelle commune",
    separate_scales: "des échelles séparées",
    plugin: "Graphique dessiné par le plugin {1} {2} (forme {3}).",
    takeaway: " À retenir\u{a0}: {1}",
    cited: " Marqué\u{a0}: {1} à {2}.",
    cited_pair: " Marqué\u{a0}: {1} entre {2} et {3}.",
    cited_change: " Marqué\u{a0}: {1} de {2} à {3}.",
    cited_path: " Marqué\u{a0}: {1}, en tracé fin sur les données.",
    marked: " Repère\u{a0}: {1} ({2}).",
};

const ES: Sentences = Sentences {
    line: "Gráfico de líneas de {1} de {2} a {3}",
    one_line_per: ", una línea por {1}: {2}",
    rose: " Destacado: {1} subió de {2} ({3}) a {4} ({5}), con un máximo de {6} ({7}).",
    fell: " Destacado: {1} bajó de {2} ({3}) a {4} ({5}), con un máximo de {6} ({7}).",
    level: " Destacado: {1} terminó igual, de {2} ({3}) a {4} ({5}), con un máximo de {6} ({7}).",
    highlighted: " (destacado)",
    the_measure: "la medida",
    bars: "Gráfico de barras de {1} por {2}, {3} barras: {4}.",
    stacked:
        "Gráfico de barras apiladas de {1}, {2} categorías divididas por {3} en {4}. Totales: {5}.",
    grouped:
        "Gráfico de barras agrupadas de {1}, {2} categorías divididas por {3} en {4}. Totales: {5}.",
    dots: "Diagrama de puntos de {1}: {2}.",
    no_data: "sin datos",
    scatter: "Dispersión de {1} frente a {2}, {3} puntos",
    fit: "; la recta de ajuste sube {1} por unidad",
    correlation: ", correlación {1}",
    highlighted_list: "; destacado: {1}",
    figure: "Cifra clave: {1}.",
    figures: "Cifras clave: {1}.",
    table: "Tabla de {1} filas con las columnas {2}",
    pie: "Gráfico circular de las partes por {1}: {2}.",
    panels: "Múltiplos pequeños, un panel por {1} en {2}: {3}.",
    common_scale: "una escala común",
    separate_scales: "escalas separadas",
    plugin: "Gráfico dibujado por el plugin {1} {2} (forma {3}).",
    takeaway: " Conclusión: {1}",
    cited: " Marcado: {1} en {2}.",
    cited_pair: " Marcado: {1} entre {2} y {3}.",
    cited_change: " Marcado: {1} de {2} a {3}.",
    cited_path: " Marcado: {1}, como trazo fino sobre los datos.",
    marked: " Marcado: {1} ({2}).",
};

/// The patterns of a language (`de`), `None` when crescendo ships none.
pub(crate) fn of_language(language: &str) -> Option<&'static Sentences> {
    crescendo_data::locale::by_language(language, [&EN, &DE, &FR, &ES])
}

/// The patterns of the story being planned (English without a locale or
/// for a language without patterns).
pub(crate) fn current() -> &'static Sentences {
    let c = crescendo_data::locale::current();
    c.locale
        .as_ref()
        .and_then(|l| of_language(l.language()))
        .unwrap_or(&EN)
}

/// A pattern with its parts filled in (`{1}` is `parts[0]`). A part is
/// inserted as it is: a placeholder inside a part is not expanded again.
pub(crate) fn fill(pattern: &str, parts: &[&str]) -> String {
    let mut out = String::with_capacity(pattern.len() + 32);
    let mut rest = pattern;
    while let Some(open) = rest.find('{') {
        out.push_str(&rest[..open]);
        let after = &rest[open + 1..];
        let n = after
            .find('}')
            .and_then(|close| after[..close].parse::<usize>().ok().map(|n| (n, close)));
        match n {
            Some((n, close)) if (1..=parts.len()).contains(&n) => {
                out.push_str(parts[n - 1]);
                rest = &after[close + 1..];
            }
            _ => {
                out.push('{');
                rest = after;
            }
        }
    }
    out.push_str(rest);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parts_fill_their_places_once() {
        assert_eq!(fill("{2} of {1}", &["a", "b"]), "b of a");
        // a part that looks like a placeholder stays as written
        assert_eq!(fill("x {1} y", &["{2}", "z"]), "x {2} y");
        assert_eq!(fill("{3} {x}", &["a"]), "{3} {x}");
    }

    /// Every language's pattern uses the same placeholders as English's
    /// (a translation may move them, never lose or add one).
    #[test]
    fn every_language_keeps_the_placeholders() {
        fn marks(p: &str) -> Vec<usize> {
            let mut v: Vec<usize> = (1..=9)
                .filter(|n| p.contains(&format!("{{{n}}}")))
                .collect();
            v.sort_unstable();
            v
        }
        let fields = |s: &Sentences| {
            vec![
                s.line,
                s.one_line_per,
                s.rose,
                s.fell,
                s.level,
                s.highlighted,
                s.the_measure,
                s.bars,
                s.stacked,
                s.grouped,
                s.dots,
                s.no_data,
                s.scatter,
                s.fit,
                s.correlation,
                s.highlighted_list,
                s.figure,
                s.figures,
                s.table,
                s.pie,
                s.panels,
                s.common_scale,
                s.separate_scales,
                s.plugin,
                s.takeaway,
                s.marked,
            ]
        };
        for lang in ["de", "fr", "es"] {
            let s = of_language(lang).expect("shipped");
            for (en, other) in fields(&EN).into_iter().zip(fields(s)) {
                assert_eq!(marks(en), marks(other), "{lang}: {other}");
            }
        }
        assert!(of_language("ja").is_none());
    }
}
