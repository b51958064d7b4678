//! What changed between two decks of one story: frames paired across the
//! two, their texts, quoted values, pictures and places; claims whose
//! verdict or room changed; lint findings that came or went. Plain data,
//! written out as a page, as Markdown or as JSON.

use std::collections::BTreeMap;

use crescendo_plan::{ClaimPlan, DeckPlan, FramePlan};
use serde::Serialize;

use crate::content::{compare, ChartChange, Content};

/// One deck as drawn: its plan, each frame's SVG, its lint findings.
pub struct Side<'a> {
    pub plan: &'a DeckPlan,
    pub svgs: Vec<String>,
    /// Each finding with the number of the frame it is about.
    pub lint: Vec<(Option<usize>, String)>,
}

#[derive(Serialize, Clone, Copy, PartialEq, Eq, Debug)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    Unchanged,
    Changed,
    Added,
    Removed,
}

/// A text of a frame that reads differently now.
#[derive(Serialize, Debug)]
pub struct TextChange {
    pub part: &'static str,
    pub old: Option<String>,
    pub new: Option<String>,
}

/// A quoted value whose figure moved.
#[derive(Serialize, Debug)]
pub struct Figure {
    pub name: String,
    pub old: Option<String>,
    pub new: Option<String>,
    /// The difference, where both figures are plain numbers of one kind.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub change: Option<String>,
}

/// One frame of either deck, paired with its counterpart.
#[derive(Serialize, Debug)]
pub struct FrameReview {
    pub status: Status,
    /// Its number in the deck at the revision, and now.
    pub old: Option<usize>,
    pub new: Option<usize>,
    pub headline: String,
    /// It kept its content but changed places with others.
    pub moved: bool,
    /// The chart or any drawn text differs.
    pub picture_changed: bool,
    pub texts: Vec<TextChange>,
    pub figures: Vec<Figure>,
    /// What the chart shows differently: data, roles, annotations, titles
    /// (the same comparison `crescendo diff` prints).
    pub chart: Vec<ChartChange>,
    /// Sentences of the reviewed claims that rest on a value this frame
    /// quotes.
    pub claims: Vec<String>,
    /// Lint findings about this frame that are new, and that are gone.
    pub lint_added: Vec<String>,
    pub lint_removed: Vec<String>,
    #[serde(skip)]
    pub old_svg: Option<String>,
    #[serde(skip)]
    pub new_svg: Option<String>,
}

/// A claim in one deck.
#[derive(Serialize, Debug, Clone)]
pub struct ClaimState {
    pub holds: bool,
    /// Room left as a share (see `ClaimPlan::margin`), to 4 decimals.
    pub room: Option<f64>,
    pub detail: Vec<String>,
}

/// A claim whose verdict or room changed, or that fails or nearly fails.
#[derive(Serialize, Debug)]
pub struct ClaimReview {
    pub sentence: String,
    pub condition: String,
    /// In words: `fails now`, `still fails`, `holds again`, `near miss`,
    /// `room changed`, `new`, `gone`.
    pub verdict: &'static str,
    pub old: Option<ClaimState>,
    pub new: Option<ClaimState>,
}

#[derive(Serialize, Debug, Default)]
pub struct Lint {
    pub added: Vec<String>,
    pub removed: Vec<String>,
}

impl Lint {
    /// Each finding with what became of it (`new`, then `resolved`).
    pub fn changes(&self) -> impl Iterator<Item = (&'static str, &str)> {
        let added = self.added.iter().map(|l| ("new", l.as_str()));
        added.chain(self.removed.iter().map(|l| ("resolved", l.as_str())))
    }
}

#[derive(Serialize, Debug, Default, PartialEq, Eq)]
pub struct Counts {
    pub changed: usize,
    pub added: usize,
    pub removed: usize,
    pub moved: usize,
    pub unchanged: usize,
    pub failing_claims: usize,
    pub near_misses: usize,
}

#[derive(Serialize, Debug)]
pub struct Review {
    pub title: String,
    /// The revision as given, and its commit.
    pub against: String,
    pub commit: String,
    pub counts: Counts,
    pub frames: Vec<FrameReview>,
    /// Every named value whose figure moved, came or went, quoted or not.
    pub values: Vec<ValueChange>,
    pub claims: Vec<ClaimReview>,
    pub lint: Lint,
}

/// A named value that moved, with the frames (new numbers, or old ones for
/// removed frames) that quote it; none when it is quoted nowhere.
#[derive(Serialize, Debug)]
pub struct ValueChange {
    #[serde(flatten)]
    pub figure: Figure,
    /// The exact numbers, when they moved though the figure did not.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub exact: Option<[f64; 2]>,
    pub quoted_in: Vec<usize>,
}

/// Every value of either deck whose figure or exact number differs.
fn values(old: &DeckPlan, new: &DeckPlan, plain: bool) -> Vec<ValueChange> {
    let mut moved = figures(&old.values, &new.values, plain);
    // moved by less than the figure shows: the same figure, other digits
    for (name, x) in &old.exact {
        let y = new.exact.get(name);
        let figure = old.values.get(name);
        if y.is_some_and(|y| y != x)
            && figure.is_some()
            && figure == new.values.get(name)
            && !moved.iter().any(|f| &f.name == name)
        {
            moved.push(Figure {
                name: name.clone(),
                old: figure.cloned(),
                new: figure.cloned(),
                change: None,
            });
        }
    }
    moved.sort_by(|a, b| a.name.cmp(&b.name));
    moved
        .into_iter()
        .map(|figure| {
            let quoting = |p: &DeckPlan| {
                p.frames
                    .iter()
                    .filter(|f| f.quoted.contains_key(&figure.name))
                    .map(|f| f.number)
                    .collect::<Vec<_>>()
            };
            let mut quoted_in = quoting(new);
            if quoted_in.is_empty() {
                quoted_in = quoting(old);
            }
            let exact = match (old.exact.get(&figure.name), new.exact.get(&figure.name)) {
                (Some(x), Some(y)) if figure.old == figure.new => Some([*x, *y]),
                _ => None,
            };
            ValueChange {
                figure,
                exact,
                quoted_in,
            }
        })
        .collect()
}

impl Review {
    /// Any frame changed, moved, came or went.
    pub fn any_change(&self) -> bool {
        self.frames.iter().any(|f| f.status != Status::Unchanged)
    }
}

/// How a frame is recognised across the two decks: its headline as
/// written (quoted values unfilled), so a moved figure keeps the pairing.
fn key(f: &FramePlan) -> &str {
    f.templates
        .get("headline")
        .map(String::as_str)
        .unwrap_or(&f.headline)
}

/// Pairs of (old index, new index): same written headline first (in
/// order of occurrence), then leftovers at the same place.
fn pair(old: &[FramePlan], new: &[FramePlan]) -> Vec<(Option<usize>, Option<usize>)> {
    let mut taken_old = vec![false; old.len()];
    let mut of_new: Vec<Option<usize>> = vec![None; new.len()];
    for (j, nf) in new.iter().enumerate() {
        if let Some(i) = (0..old.len()).find(|&i| !taken_old[i] && key(&old[i]) == key(nf)) {
            taken_old[i] = true;
            of_new[j] = Some(i);
        }
    }
    for (j, slot) in of_new.iter_mut().enumerate() {
        if slot.is_none() && j < old.len() && !taken_old[j] {
            taken_old[j] = true;
            *slot = Some(j);
        }
    }
    let mut pairs: Vec<(Option<usize>, Option<usize>)> = of_new
        .iter()
        .enumerate()
        .map(|(j, i)| (*i, Some(j)))
        .collect();
    // frames that are gone go where they stood
    for (i, taken) in taken_old.iter().enumerate() {
        if !taken {
            let at = pairs
                .iter()
                .position(|(o, _)| o.is_some_and(|o| o > i))
                .unwrap_or(pairs.len());
            pairs.insert(at, (Some(i), None));
        }
    }
    pairs
}

/// The old indices (in new order) that keep their order: the longest
/// increasing run; every other paired frame moved.
fn staying(olds: &[usize]) -> Vec<bool> {
    let n = olds.len();
    let (mut len, mut prev) = (vec![1usize; n], vec![usize::MAX; n]);
    for j in 0..n {
        for i in 0..j {
            if olds[i] < olds[j] && len[i] + 1 > len[j] {
                len[j] = len[i] + 1;
                prev[j] = i;
            }
        }
    }
    let mut keep = vec![false; n];
    let mut at = (0..n).max_by_key(|&j| (len[j], std::cmp::Reverse(j)));
    while let Some(j) = at {
        keep[j] = true;
        at = (prev[j] != usize::MAX).then_some(prev[j]);
    }
    keep
}

/// A frame's text as read from its plan.
type Part = fn(&FramePlan) -> Option<String>;

fn texts(old: &FramePlan, new: &FramePlan) -> Vec<TextChange> {
    let parts: [(&'static str, Part); 4] = [
        ("headline", |f| Some(f.headline.clone())),
        ("takeaway", |f| f.takeaway.clone()),
        ("notes", |f| f.notes.clone()),
        ("source", |f| f.source.clone()),
    ];
    parts
        .iter()
        .filter_map(|(part, get)| {
            let (o, n) = (get(old), get(new));
            // the same words with other quoted figures: the figures say it
            let (t_old, t_new) = (old.templates.get(*part), new.templates.get(*part));
            let same_words = t_old.is_some() && t_old == t_new;
            (o != n && !same_words).then_some(TextChange {
                part,
                old: o,
                new: n,
            })
        })
        .collect()
}

fn figures(
    old: &BTreeMap<String, String>,
    new: &BTreeMap<String, String>,
    plain: bool,
) -> Vec<Figure> {
    let mut names: Vec<&String> = old.keys().chain(new.keys()).collect();
    names.sort();
    names.dedup();
    names
        .into_iter()
        .filter(|n| old.get(*n) != new.get(*n))
        .map(|n| {
            let (o, w) = (old.get(n).cloned(), new.get(n).cloned());
            let change = match (&o, &w) {
                (Some(a), Some(b)) if plain => figure_change(a, b),
                _ => None,
            };
            Figure {
                name: n.clone(),
                old: o,
                new: w,
                change,
            }
        })
        .collect()
}

/// A figure split into what comes before its number, the number and its
/// decimals, and what follows.
fn split_figure(s: &str) -> Option<(&str, f64, usize, &str)> {
    let start = s.find(|c: char| c.is_ascii_digit())?;
    let rest = &s[start..];
    let len = rest
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == ','))
        .unwrap_or(rest.len());
    let digits = &rest[..len];
    let mut number: f64 = digits.replace(',', "").parse().ok()?;
    let mut before = &s[..start];
    if let Some(b) = before.strip_suffix(['-', '−']) {
        number = -number;
        before = b;
    }
    let decimals = digits.split_once('.').map_or(0, |(_, d)| d.len());
    Some((before, number, decimals, &rest[len..]))
}

/// `12.5%` → `14.0%`: `+1.5 points`; `$2.3M` → `$1.9M`: `−$0.4M`. `None`
/// when the two are not plain numbers written alike.
pub fn figure_change(old: &str, new: &str) -> Option<String> {
    let (b1, a, d1, s1) = split_figure(old)?;
    let (b2, b, d2, s2) = split_figure(new)?;
    if b1 != b2 || s1 != s2 {
        return None;
    }
    let decimals = d1.max(d2);
    let diff = b - a;
    let size = format!("{:.*}", decimals, diff.abs());
    if size.chars().all(|c| c == '0' || c == '.') {
        return None;
    }
    let sign = if diff < 0.0 { "−" } else { "+" };
    Some(match s1.trim() {
        "%" => format!("{sign}{size} points"),
        _ => format!("{sign}{b1}{size}{s1}"),
    })
}

/// Pair the frames of two decks and say how each changed.
pub fn frames(old: &Side, new: &Side) -> Vec<FrameReview> {
    // the change of a figure is computed only for figures written the
    // English way (a deck with a locale may group digits otherwise)
    let plain = old.plan.locale.is_none() && new.plan.locale.is_none();
    let (of, nf) = (&old.plan.frames, &new.plan.frames);
    let pairs = pair(of, nf);
    let both: Vec<usize> = pairs
        .iter()
        .filter_map(|p| match p {
            (Some(i), Some(_)) => Some(*i),
            _ => None,
        })
        .collect();
    let keep = staying(&both);
    let mut k = 0;
    let mut out = Vec::new();
    for (i, j) in pairs {
        let review = match (i, j) {
            (Some(i), Some(j)) => {
                let moved = !keep[k];
                k += 1;
                let (o, n) = (&of[i], &nf[j]);
                let texts = texts(o, n);
                let figures = figures(&o.quoted, &n.quoted, plain);
                let picture_changed = old.svgs.get(i) != new.svgs.get(j);
                let chart = compare(&Content::of(o), &Content::of(n));
                let same = !moved
                    && !picture_changed
                    && texts.is_empty()
                    && figures.is_empty()
                    && chart.is_empty();
                FrameReview {
                    status: if same {
                        Status::Unchanged
                    } else {
                        Status::Changed
                    },
                    old: Some(o.number),
                    new: Some(n.number),
                    headline: n.headline.clone(),
                    moved,
                    picture_changed,
                    texts,
                    figures,
                    chart,
                    claims: Vec::new(),
                    lint_added: Vec::new(),
                    lint_removed: Vec::new(),
                    old_svg: old.svgs.get(i).cloned(),
                    new_svg: new.svgs.get(j).cloned(),
                }
            }
            (Some(i), None) => lone(&of[i], Status::Removed, old.svgs.get(i)),
            (None, Some(j)) => lone(&nf[j], Status::Added, new.svgs.get(j)),
            (None, None) => continue,
        };
        out.push(review);
    }
    out
}

fn lone(f: &FramePlan, status: Status, svg: Option<&String>) -> FrameReview {
    let (old, new) = match status {
        Status::Removed => (Some(f.number), None),
        _ => (None, Some(f.number)),
    };
    FrameReview {
        status,
        old,
        new,
        headline: f.headline.clone(),
        moved: false,
        picture_changed: true,
        texts: Vec::new(),
        figures: Vec::new(),
        chart: Vec::new(),
        claims: Vec::new(),
        lint_added: Vec::new(),
        lint_removed: Vec::new(),
        old_svg: old.and(svg.cloned()),
        new_svg: new.and(svg.cloned()),
    }
}

fn state(c: &ClaimPlan) -> ClaimState {
    ClaimState {
        holds: c.holds,
        room: c.margin.map(|m| (m * 10_000.0).round() / 10_000.0),
        detail: c.detail.clone(),
    }
}

/// Claims paired by sentence (then by condition); those worth a reviewer's
/// look. `near`: the room below which a holding claim is a near miss.
pub fn claims(old: &DeckPlan, new: &DeckPlan, near: f64) -> Vec<ClaimReview> {
    let mut used = vec![false; old.claims.len()];
    let mut out = Vec::new();
    for c in &new.claims {
        let found = (0..old.claims.len())
            .find(|&i| !used[i] && old.claims[i].sentence == c.sentence)
            .or_else(|| {
                (0..old.claims.len()).find(|&i| !used[i] && old.claims[i].condition == c.condition)
            });
        if let Some(i) = found {
            used[i] = true;
        }
        let before = found.map(|i| &old.claims[i]);
        let narrow = c.holds && c.margin.is_some_and(|m| m < near);
        let verdict = match before {
            None => "new",
            Some(b) if b.holds && !c.holds => "fails now",
            Some(_) if !c.holds => "still fails",
            Some(b) if !b.holds => "holds again",
            _ if narrow => "near miss",
            Some(b) if b.detail != c.detail => "room changed",
            Some(_) => continue,
        };
        if verdict == "new" && c.holds && !narrow {
            continue;
        }
        out.push(ClaimReview {
            sentence: c.sentence.clone(),
            condition: c.condition.clone(),
            verdict,
            old: before.map(state),
            new: Some(state(c)),
        });
    }
    for (i, c) in old.claims.iter().enumerate() {
        if !used[i] {
            out.push(ClaimReview {
                sentence: c.sentence.clone(),
                condition: c.condition.clone(),
                verdict: "gone",
                old: Some(state(c)),
                new: None,
            });
        }
    }
    out
}

/// Link each frame to the reviewed claims resting on a value it quotes
/// (in the new deck; a removed frame in the old).
fn link(frames: &mut [FrameReview], claims: &[ClaimReview], old: &DeckPlan, new: &DeckPlan) {
    let rests = |plan: &DeckPlan, sentence: &str, quoted: &BTreeMap<String, String>| {
        plan.claims
            .iter()
            .find(|c| c.sentence == sentence)
            .is_some_and(|c| c.rests_on.iter().any(|v| quoted.contains_key(v)))
    };
    for f in frames.iter_mut() {
        let (plan, number) = match (f.new, f.old) {
            (Some(n), _) => (new, n),
            (None, Some(o)) => (old, o),
            _ => continue,
        };
        let Some(frame) = plan.frames.iter().find(|p| p.number == number) else {
            continue;
        };
        f.claims = claims
            .iter()
            .filter(|c| rests(plan, &c.sentence, &frame.quoted))
            .map(|c| c.sentence.clone())
            .collect();
    }
}

/// Lint findings that came and went: a finding about a frame is the same
/// finding when its text is the same and its frame is the paired one. Each
/// frame gets its own; the deck-wide lists name the frame.
fn lint_changes(old: &Side, new: &Side, frames: &mut [FrameReview]) -> Lint {
    // old frame number -> new frame number, for paired frames
    let paired: Vec<(usize, usize)> = frames
        .iter()
        .filter_map(|f| Some((f.old?, f.new?)))
        .collect();
    let to_new = |o: Option<usize>| -> Option<Option<usize>> {
        match o {
            None => Some(None),
            Some(o) => paired.iter().find(|p| p.0 == o).map(|p| Some(p.1)),
        }
    };
    let named = |frame: Option<usize>, text: &str| match frame {
        Some(n) => format!("frame {n}: {text}"),
        None => text.to_string(),
    };
    let mut lint = Lint::default();
    for (f, text) in &new.lint {
        let was = old
            .lint
            .iter()
            .any(|(o, t)| t == text && to_new(*o) == Some(*f));
        if !was {
            lint.added.push(named(*f, text));
            if let Some(fr) = frames.iter_mut().find(|fr| f.is_some() && fr.new == *f) {
                fr.lint_added.push(text.clone());
            }
        }
    }
    for (o, text) in &old.lint {
        let stays = to_new(*o).is_some_and(|f| new.lint.iter().any(|(n, t)| t == text && *n == f));
        if !stays {
            lint.removed.push(named(*o, text));
            if let Some(fr) = frames.iter_mut().find(|fr| o.is_some() && fr.old == *o) {
                fr.lint_removed.push(text.clone());
            }
        }
    }
    lint
}

/// The whole review.
pub fn review(old: &Side, new: &Side, against: (&str, &str), near: f64) -> Review {
    let mut frames = frames(old, new);
    let plain = old.plan.locale.is_none() && new.plan.locale.is_none();
    let values = values(old.plan, new.plan, plain);
    let claims = claims(old.plan, new.plan, near);
    link(&mut frames, &claims, old.plan, new.plan);
    let lint = lint_changes(old, new, &mut frames);
    let count = |s: Status| frames.iter().filter(|f| f.status == s).count();
    let counts = Counts {
        changed: count(Status::Changed),
        added: count(Status::Added),
        removed: count(Status::Removed),
        moved: frames.iter().filter(|f| f.moved).count(),
        unchanged: count(Status::Unchanged),
        failing_claims: new.plan.claims.iter().filter(|c| !c.holds).count(),
        near_misses: claims.iter().filter(|c| c.verdict == "near miss").count(),
    };
    Review {
        title: new.plan.title.clone(),
        against: against.0.to_string(),
        commit: against.1.to_string(),
        counts,
        frames,
        values,
        claims,
        lint,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_change_by_points_and_units() {
        assert_eq!(
            figure_change("12.5%", "14.0%").as_deref(),
            Some("+1.5 points")
        );
        assert_eq!(figure_change("$2.3M", "$1.9M").as_deref(), Some("−$0.4M"));
        assert_eq!(figure_change("1,204", "1,180").as_deref(), Some("−24"));
        assert_eq!(figure_change("-3", "2").as_deref(), Some("+5"));
        assert_eq!(figure_change("2.3×", "2.3×"), None);
        assert_eq!(figure_change("March 2024", "4 weeks"), None);
        assert_eq!(figure_change("12%", "12 people"), None);
    }

    #[test]
    fn every_moved_value_is_listed_even_below_its_rounding() {
        let deck = |lead: f64, total: &str| -> DeckPlan {
            serde_json::from_value(serde_json::json!({
                "title": "t", "byline": null, "source": null, "theme": "clear",
                "conclusion": null, "frames": [],
                "values": {"lead": "1.57", "total": total},
                "exact": {"lead": lead}
            }))
            .unwrap()
        };
        let moved = values(&deck(1.5705, "60"), &deck(1.5667, "66"), true);
        let names: Vec<&str> = moved.iter().map(|v| v.figure.name.as_str()).collect();
        assert_eq!(names, ["lead", "total"]);
        assert_eq!(moved[0].exact, Some([1.5705, 1.5667]));
        assert_eq!(moved[1].figure.change.as_deref(), Some("+6"));
        assert!(moved.iter().all(|v| v.quoted_in.is_empty()));
        assert!(values(&deck(1.5, "60"), &deck(1.5, "60"), true).is_empty());
    }

    #[test]
    fn the_longest_run_in_order_stays_and_the_rest_moved() {
        assert_eq!(staying(&[0, 1, 2]), vec![true, true, true]);
        // frame 3 was put first: it moved, the others kept their order
        assert_eq!(staying(&[2, 0, 1]), vec![false, true, true]);
        assert_eq!(staying(&[1, 0]), vec![true, false]);
        assert_eq!(staying(&[]), Vec::<bool>::new());
    }
}
