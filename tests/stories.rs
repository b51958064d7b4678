//! End-to-end tests over every story in `stories/`: they all build, their
//! plans and frames are snapshot-tested, builds are byte-for-byte
//! reproducible, and every SVG is well-formed with no text outside the
//! canvas and no two text boxes overlapping.

mod common;

use std::path::Path;
use std::sync::Arc;

use common::{crescendo_with_plugins as crescendo, read_dir_files, root, scratch, stories};
use crescendo_diag::Source;
use crescendo_plan::DeckPlan;
use serde_json::Value;

fn plan_of(path: &Path) -> DeckPlan {
    planned_of(path).plan
}

/// Draw the plugin charts of demo stories with the plugins they loaded.
struct Drawer(crescendo_plan::plugins::Plugins);

impl crescendo_render::plugin::PluginDrawer for Drawer {
    fn draw(
        &self,
        plugin: &str,
        request: &crescendo_plugin::Request,
    ) -> Result<crescendo_plugin::validate::Validated, String> {
        let p = self.0.get(plugin).ok_or("not loaded")?;
        p.render(request).map_err(|e| e.to_string())
    }
}

/// Every frame of a story drawn, plugin charts included.
fn frames_of(path: &Path) -> (DeckPlan, Vec<String>) {
    let planned = planned_of(path);
    let drawer = Drawer(planned.plugins);
    let svgs = planned
        .plan
        .frames
        .iter()
        .map(|f| {
            crescendo_render::render_frame_with(&planned.plan, f, Some(&drawer)).expect("render")
        })
        .collect();
    (planned.plan, svgs)
}

/// The plan of a story and the display list of every frame.
fn layouts_of(path: &Path) -> (DeckPlan, Vec<crescendo_render::DisplayList>) {
    let planned = planned_of(path);
    let drawer = Drawer(planned.plugins);
    let lists = (planned.plan.frames.iter())
        .map(|f| crescendo_render::display_list(&planned.plan, f, Some(&drawer)).expect("layout"))
        .collect();
    (planned.plan, lists)
}

fn planned_of(path: &Path) -> crescendo_plan::Planned {
    let text = std::fs::read_to_string(path).expect("read story");
    let rel = path.strip_prefix(root()).unwrap_or(path);
    let src: Arc<Source> = Source::file(rel.display().to_string(), text);
    match crescendo_plan::plan_story(&src, path.parent().unwrap(), &common::plan_options()) {
        Ok(p) => {
            assert!(
                p.failed_claims.is_empty(),
                "{}",
                crescendo_diag::render(&p.failed_claims, false)
            );
            p
        }
        Err(diags) => panic!("{}", crescendo_diag::render(&diags, false)),
    }
}

/// Pretty JSON that keeps short arrays and objects on one line, so plan
/// snapshots stay readable (one point per line).
fn compact_json(v: &Value, indent: usize, out: &mut String) {
    let inline = serde_json::to_string(v).unwrap_or_default();
    if inline.len() <= 96 || !(v.is_array() || v.is_object()) {
        out.push_str(&inline);
        return;
    }
    let pad = "  ".repeat(indent + 1);
    match v {
        Value::Array(items) => {
            out.push_str("[\n");
            for (i, item) in items.iter().enumerate() {
                out.push_str(&pad);
                compact_json(item, indent + 1, out);
                out.push_str(if i + 1 < items.len() { ",\n" } else { "\n" });
            }
            out.push_str(&"  ".repeat(indent));
            out.push(']');
        }
        Value::Object(map) => {
            out.push_str("{\n");
            for (i, (k, item)) in map.iter().enumerate() {
                out.push_str(&pad);
                out.push_str(&serde_json::to_string(k).unwrap_or_default());
                out.push_str(": ");
                compact_json(item, indent + 1, out);
                out.push_str(if i + 1 < map.len() { ",\n" } else { "\n" });
            }
            out.push_str(&"  ".repeat(indent));
            out.push('}');
        }
        _ => unreachable!(),
    }
}

#[test]
fn there_are_demo_stories() {
    let names: Vec<String> = stories().into_iter().map(|(n, _)| n).collect();
    assert!(names.len() >= 2, "{names:?}");
}

#[test]
fn plans_of_every_story_match_their_snapshots() {
    for (name, path) in stories() {
        let plan = plan_of(&path);
        assert!(!plan.frames.is_empty(), "{name} has no frames");
        let mut out = String::new();
        compact_json(&serde_json::to_value(&plan).unwrap(), 0, &mut out);
        insta::assert_snapshot!(format!("plan_{name}"), out);
    }
}

#[test]
fn frames_of_the_pools_story_match_their_svg_snapshots() {
    let path = root().join("stories/pools/pools.cresc");
    let plan = plan_of(&path);
    for f in &plan.frames {
        let svg = crescendo_render::render_frame(&plan, f).expect("render");
        insta::assert_snapshot!(format!("svg_pools_{:02}_{}", f.number, f.slug), svg);
    }
}

#[test]
fn every_story_builds_with_the_command() {
    for (name, path) in stories() {
        let out = scratch(&format!("build-{name}"));
        let run = crescendo(
            &root(),
            &[
                "build",
                path.to_str().unwrap(),
                "--out",
                out.join("deck").to_str().unwrap(),
            ],
        );
        assert!(
            run.status.success(),
            "{name}: {}",
            String::from_utf8_lossy(&run.stderr)
        );
        let files = read_dir_files(&out.join("deck"));
        let plan = plan_of(&path);
        // one SVG per frame, in order, plus the manifest and the HTML deck
        let svgs: Vec<&String> = files
            .iter()
            .map(|(n, _)| n)
            .filter(|n| n.ends_with(".svg"))
            .collect();
        assert_eq!(svgs.len(), plan.frames.len(), "{name}");
        for (i, f) in svgs.iter().enumerate() {
            assert!(f.starts_with(&format!("{:02}-", i + 1)), "{f}");
        }
        let manifest: Value = serde_json::from_slice(
            &files
                .iter()
                .find(|(n, _)| n == "deck.json")
                .expect("deck.json")
                .1,
        )
        .unwrap();
        assert_eq!(manifest["title"], plan.title.as_str());
        let frames = manifest["frames"].as_array().unwrap();
        assert_eq!(frames.len(), plan.frames.len());
        for (entry, f) in frames.iter().zip(&plan.frames) {
            assert_eq!(entry["headline"], f.headline.as_str());
            let file = entry["file"].as_str().unwrap();
            let bytes = &files.iter().find(|(n, _)| n == file).expect("frame file").1;
            // the manifest's checksum is the SHA-256 of the file as written
            // (checked against the coreutils-compatible hex digest format)
            use sha2::Digest;
            let digest: String = sha2::Sha256::digest(bytes)
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect();
            assert_eq!(entry["sha256"], digest.as_str());
        }
        let html = String::from_utf8(
            files
                .iter()
                .find(|(n, _)| n == "index.html")
                .unwrap()
                .1
                .clone(),
        )
        .unwrap();
        assert!(html.contains("<svg"), "{name}: SVGs are inline");
        for remote in ["src=\"http", "href=\"http", "url(http", "@import", "fetch("] {
            assert!(
                !html.contains(remote),
                "{name}: the HTML deck loads `{remote}`"
            );
        }
        assert!(!html.contains("<script src"), "no external scripts");
        assert!(!html.contains("<link"), "no external stylesheets");
    }
}

#[test]
fn builds_are_byte_identical() {
    for (name, path) in stories() {
        let a = scratch(&format!("det-a-{name}")).join("deck");
        let b = scratch(&format!("det-b-{name}")).join("deck");
        for out in [&a, &b] {
            let run = crescendo(
                &root(),
                &[
                    "build",
                    path.to_str().unwrap(),
                    "--out",
                    out.to_str().unwrap(),
                ],
            );
            assert!(
                run.status.success(),
                "{}",
                String::from_utf8_lossy(&run.stderr)
            );
        }
        assert_eq!(
            read_dir_files(&a),
            read_dir_files(&b),
            "{name}: two builds differ"
        );
    }
}

#[test]
fn rebuilding_over_a_deck_replaces_it_whole() {
    let (_, path) = stories().into_iter().next().unwrap();
    let out = scratch("rebuild").join("deck");
    for _ in 0..2 {
        let run = crescendo(
            &root(),
            &[
                "build",
                path.to_str().unwrap(),
                "--out",
                out.to_str().unwrap(),
            ],
        );
        assert!(run.status.success());
    }
    let parent = out.parent().unwrap();
    let mut names: Vec<String> = std::fs::read_dir(parent)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    // the deck and its cache folder (see src/incremental.rs), nothing else
    assert_eq!(
        names,
        vec![".crescendo-cache".to_string(), "deck".to_string()],
        "no temporary folders left"
    );
}

#[test]
fn every_demo_frame_is_well_formed_and_has_no_overlapping_text() {
    for (name, path) in stories() {
        let (plan, svgs) = frames_of(&path);
        let (_, lists) = layouts_of(&path);
        for (f, svg) in plan.frames.iter().zip(svgs) {
            // a general-purpose XML parser accepts it
            let doc = roxmltree::Document::parse(&svg)
                .unwrap_or_else(|e| panic!("{name} frame {}: {e}", f.number));
            assert_eq!(doc.root_element().tag_name().name(), "svg");
            let texts: Vec<String> = doc
                .descendants()
                .filter(|n| n.has_tag_name("text"))
                .map(|n| n.text().unwrap_or("").trim().to_string())
                .collect();
            assert!(
                texts.join(" ").contains(&f.headline),
                "{name} frame {}: headline drawn",
                f.number
            );
            let (w, h) = crescendo_render::inspect::canvas_size(&svg).unwrap();
            assert_eq!((w, h), (1280.0, 720.0));
            // the SVG shows the texts of the display list where it put them
            let list = &lists[f.number - 1];
            let texts = list.texts();
            let boxes = crescendo_render::inspect::text_boxes(&svg).unwrap();
            assert_eq!(boxes.len(), texts.len());
            for (t, b) in texts.iter().zip(&boxes) {
                let r = &t.bounds();
                let close = [(r.x0, b.x0), (r.y0, b.y0), (r.x1, b.x1), (r.y1, b.y1)]
                    .iter()
                    .all(|(a, b)| (a - b).abs() <= 1.0);
                assert!(close, "{name} frame {}: {t:?} is drawn at {b:?}", f.number);
            }
            for t in &texts {
                let b = &t.bounds();
                assert!(
                    b.x0 >= 0.0 && b.y0 >= 0.0 && b.x1 <= w && b.y1 <= h,
                    "{name} frame {}: \"{}\" leaves the canvas: {:?}",
                    f.number,
                    t.text,
                    (b.x0, b.y0, b.x1, b.y1)
                );
            }
            for (i, a) in texts.iter().enumerate() {
                for b in &texts[i + 1..] {
                    assert!(
                        !a.bounds().overlaps(&b.bounds(), 0.0),
                        "{name} frame {}: \"{}\" overlaps \"{}\"",
                        f.number,
                        a.text,
                        b.text
                    );
                }
            }
        }
    }
}

/// The measure's axis of a chart and its category slots, where it has them;
/// panels on one common scale (not trimmed) report their shared axis.
fn value_axis(c: &crescendo_plan::Chart) -> Option<(&crescendo_plan::Axis, Vec<&str>)> {
    use crescendo_plan::Chart;
    match c {
        Chart::Line(l) => Some((&l.y, Vec::new())),
        Chart::Bars(b) => Some((&b.value, b.bars.iter().map(|b| b.label.as_str()).collect())),
        Chart::Parts(p) => Some((
            &p.value,
            p.categories.iter().map(|c| c.label.as_str()).collect(),
        )),
        Chart::Dots(d) => Some((&d.value, d.rows.iter().map(|r| r.label.as_str()).collect())),
        Chart::Scatter(s) => Some((&s.y, Vec::new())),
        Chart::Panels(p) if p.common_scale && !p.trimmed => {
            p.panels.first().and_then(|x| value_axis(&x.chart))
        }
        _ => None,
    }
}

#[test]
fn axes_stay_fixed_within_a_build_up_sequence() {
    for (name, path) in stories() {
        let plan = plan_of(&path);
        for pair in plan.frames.windows(2) {
            let (a, b) = (&pair[0], &pair[1]);
            if a.sequence != b.sequence {
                continue;
            }
            if let (crescendo_plan::Chart::Line(x), crescendo_plan::Chart::Line(y)) =
                (&a.chart, &b.chart)
            {
                assert_eq!(x.x.domain, y.x.domain, "{name}: x moves");
            }
            match (value_axis(&a.chart), value_axis(&b.chart)) {
                (Some((x, cx)), Some((y, cy))) => {
                    assert_eq!(
                        x.domain, y.domain,
                        "{name}: frame {} → {}: the axis moves",
                        a.number, b.number
                    );
                    assert_eq!(x.ticks, y.ticks, "{name}: ticks move");
                    if !cx.is_empty() && !cy.is_empty() {
                        assert_eq!(cx, cy, "{name}: category slots move");
                    }
                }
                (None, None) => {}
                _ => panic!(
                    "{name}: frame {} → {} changes to a chart without the same axis",
                    a.number, b.number
                ),
            }
        }
    }
}

#[test]
fn readme_picture_is_the_current_frame() {
    // The README shows frame 3 from the tutorial's pictures, which
    // tests/docs.rs keeps identical to what the build draws.
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let plan = plan_of(&root().join("stories/pools/pools.cresc"));
    let svg = crescendo_render::render_frame(&plan, &plan.frames[2]).expect("render");
    let path = "stories/pools/tutorial/03-westbrook-pulled-away-after-evening-swims-began.svg";
    assert!(readme.contains(&format!("]({path})")), "README's picture");
    let committed = std::fs::read_to_string(root().join(path)).expect("picture");
    assert!(
        committed == svg,
        "{path} is stale: UPDATE_DOCS=1 cargo test --test docs"
    );
}

#[test]
fn readme_story_example_parses() {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let after = readme.split("## A story file").nth(1).expect("section");
    let block = after.split("```").nth(1).expect("code block");
    let src = Source::file("README.md example", block.to_string());
    let (ast, diags) = crescendo_lang::parse(&src);
    assert!(
        diags.is_empty(),
        "{}",
        crescendo_diag::render(&diags, false)
    );
    assert!(ast.items.len() >= 10);
}

#[test]
fn frames_carry_a_text_alternative_generated_from_the_data() {
    let plan = plan_of(&root().join("stories/pools/pools.cresc"));
    let f = &plan.frames[2];
    assert_eq!(
        f.description,
        "Line chart of Visits per month from Jan 2021 to Dec 2024, one line per pool: \
         Alder Park, Westbrook, Millrace, Harrow Lane. Highlighted: Westbrook rose from 3,510 \
         in Jan 2021 to 7,835 in Dec 2024, with a high of 12,589 in Aug 2024. Marked: Closed \
         for repairs (Feb 2022). Marked: Evening swims begin (Apr 2023). Takeaway: \
         Monthly visits at Westbrook are now well above any other pool."
    );
    let svg = crescendo_render::render_frame(&plan, f).unwrap();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let root_el = doc.root_element();
    assert_eq!(root_el.attribute("role"), Some("img"));
    let desc_id = root_el.attribute("aria-describedby").unwrap();
    let desc = doc
        .descendants()
        .find(|n| n.attribute("id") == Some(desc_id))
        .unwrap();
    assert_eq!(desc.tag_name().name(), "desc");
    assert_eq!(desc.text(), Some(f.description.as_str()));
    let title_id = root_el.attribute("aria-labelledby").unwrap();
    let title = doc
        .descendants()
        .find(|n| n.attribute("id") == Some(title_id))
        .unwrap();
    assert_eq!(title.text(), Some(f.headline.as_str()));
    // bars name every visible bar and mark the spotlight
    let bars = &plan.frames[3];
    assert!(bars.description.starts_with("Bar chart of Visits in 2024 by pool, 4 bars: Westbrook 114,161 (highlighted); Alder Park"), "{}", bars.description);
}

/// Data lines of a laid-out frame: polylines drawn 2px or heavier, as segments.
fn data_segments(list: &crescendo_render::DisplayList) -> Vec<((f64, f64), (f64, f64))> {
    let mut out = Vec::new();
    for item in list.flat() {
        if let crescendo_look::Item::Polyline { points, width, .. } = item {
            if *width >= 2 {
                out.extend(points.windows(2).map(|w| (w[0], w[1])));
            }
        }
    }
    out
}

/// Does the segment cross the box (Liang–Barsky clipping, common practice)?
fn crosses(seg: ((f64, f64), (f64, f64)), b: &crescendo_look::Rect) -> bool {
    let ((x0, y0), (x1, y1)) = seg;
    let (dx, dy) = (x1 - x0, y1 - y0);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [
        (-dx, x0 - b.x0),
        (dx, b.x1 - x0),
        (-dy, y0 - b.y0),
        (dy, b.y1 - y0),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return false;
            }
        } else {
            let r = q / p;
            if p < 0.0 {
                t0 = t0.max(r);
            } else {
                t1 = t1.min(r);
            }
        }
    }
    t0 < t1
}

#[test]
fn labels_stay_off_the_data_lines_in_every_demo_frame() {
    // the measure itself can fail
    let b = crescendo_look::Rect {
        x0: 10.0,
        y0: 10.0,
        x1: 20.0,
        y1: 20.0,
    };
    assert!(crosses(((0.0, 15.0), (30.0, 15.0)), &b));
    assert!(!crosses(((0.0, 25.0), (30.0, 25.0)), &b));
    assert!(!crosses(((0.0, 0.0), (5.0, 30.0)), &b));
    let mut crossings = Vec::new();
    let mut labels = 0;
    for (name, path) in stories() {
        let (plan, lists) = layouts_of(&path);
        for (f, list) in plan.frames.iter().zip(lists) {
            let segs = data_segments(&list);
            for t in list.texts() {
                labels += 1;
                // shrink by a pixel: touching is not crossing
                let inner = t.bounds().grow(-1.0);
                if segs.iter().any(|s| crosses(*s, &inner)) {
                    crossings.push(format!("{name} frame {}: \"{}\"", f.number, t.text));
                }
            }
        }
    }
    println!(
        "{} of {labels} text boxes cross a data line",
        crossings.len()
    );
    assert!(
        crossings.is_empty(),
        "text over data lines:\n{}",
        crossings.join("\n")
    );
}

/// The measure axes of a chart (every panel's too), with the values drawn
/// on each.
fn measure_axes(chart: &crescendo_plan::Chart) -> Vec<(&crescendo_plan::Axis, Vec<f64>)> {
    use crescendo_plan::Chart;
    match chart {
        Chart::Line(l) => vec![(
            &l.y,
            l.series
                .iter()
                .flat_map(|s| s.points.iter().filter_map(|p| p.y))
                .collect(),
        )],
        Chart::Bars(b) => vec![(&b.value, b.bars.iter().filter_map(|b| b.value).collect())],
        Chart::Dots(d) => vec![(
            &d.value,
            d.rows
                .iter()
                .flat_map(|r| r.values.iter().flatten().copied())
                .collect(),
        )],
        Chart::Panels(p) => p
            .panels
            .iter()
            .flat_map(|x| measure_axes(&x.chart))
            .collect(),
        _ => Vec::new(),
    }
}

// Every demo frame's measure axis runs from a labelled tick to a labelled
// tick and holds all its data: the top tick at or above the maximum, the
// axis line on a labelled value.
#[test]
fn demo_measure_axes_end_on_labelled_ticks() {
    let mut checked = 0;
    for (name, path) in stories() {
        let planned = planned_of(&path);
        for f in &planned.plan.frames {
            for (axis, values) in measure_axes(&f.chart) {
                let (Some(first), Some(last)) = (axis.ticks.first(), axis.ticks.last()) else {
                    continue;
                };
                checked += 1;
                assert_eq!(
                    axis.domain,
                    [first.value, last.value],
                    "{name} frame {}: the axis ends on labelled ticks",
                    f.number
                );
                for v in values {
                    assert!(
                        v >= first.value && v <= last.value,
                        "{name} frame {}: {v} outside {:?}",
                        f.number,
                        axis.domain
                    );
                }
            }
        }
    }
    assert!(checked >= 15, "only {checked} axes checked");
}

/// The data marks of a frame's chart as boxes and line segments: filled
/// rectangles and dots, and data lines of 2 px or more, inside the chart
/// and outside any tint (the same reading as the marks lint).
struct DataMarks {
    boxes: Vec<crescendo_look::display::Rect>,
    segments: Vec<((f64, f64), (f64, f64))>,
}

fn data_marks(list: &crescendo_render::DisplayList) -> DataMarks {
    use crescendo_look::display::{Item, Part, Rect};
    fn walk(items: &[Item], in_chart: bool, out: &mut DataMarks) {
        for item in items {
            match item {
                Item::Group {
                    part: Part::Tint, ..
                } => {}
                Item::Group { part, items } => walk(items, in_chart || *part == Part::Chart, out),
                _ if !in_chart => {}
                Item::Rect { a, b, .. } => out.boxes.push(Rect {
                    x0: a.0.min(b.0),
                    y0: a.1.min(b.1),
                    x1: a.0.max(b.0),
                    y1: a.1.max(b.1),
                }),
                Item::Dot { at, radius, .. } => {
                    let r = f64::from(*radius);
                    out.boxes.push(Rect {
                        x0: at.0 - r,
                        y0: at.1 - r,
                        x1: at.0 + r,
                        y1: at.1 + r,
                    })
                }
                Item::Polyline { points, width, .. } if *width >= 2 => {
                    for w in points.windows(2) {
                        out.segments.push((w[0], w[1]));
                    }
                }
                _ => {}
            }
        }
    }
    let mut out = DataMarks {
        boxes: Vec::new(),
        segments: Vec::new(),
    };
    walk(&list.items, false, &mut out);
    out
}

/// Labels keep off the data: over every demo frame, read from the display
/// list, no text is crossed by a data line and no text covers a bar,
/// segment or dot (a text may sit inside a mark only when it lies wholly
/// inside it, as a segment's own name does).
#[test]
fn every_demo_label_keeps_off_the_data_marks() {
    let mut found = Vec::new();
    for (name, path) in stories() {
        let (plan, lists) = layouts_of(&path);
        for (f, list) in plan.frames.iter().zip(&lists) {
            let marks = data_marks(list);
            for t in list.texts() {
                // 1 px of slack for the whole-pixel rounding of the writer
                let b = t.bounds().grow(-1.0);
                let crossed = marks.segments.iter().any(|(p, q)| b.hit_by(*p, *q));
                let covered = marks
                    .boxes
                    .iter()
                    .any(|m| b.overlaps(m, 0.0) && !t.bounds().inside(&m.grow(1.0)));
                if crossed || covered {
                    found.push(format!("{name} frame {}: \"{}\"", f.number, t.text));
                }
            }
        }
    }
    assert!(
        found.is_empty(),
        "texts on data marks:\n{}",
        found.join("\n")
    );
}

/// One plot rectangle for a deck: every chart frame with one plot (lines,
/// bars, stacks, dots, scatter) starts and ends its plot at the same left
/// and right edges, whatever its tick labels, category names or direct
/// labels, read from the layout.
#[test]
fn every_chart_frame_of_a_deck_shares_its_plot_edges() {
    use crescendo_look::display::{Part, Rect};
    let mut checked = 0;
    let mut wrong = Vec::new();
    for (name, path) in stories() {
        let (plan, lists) = layouts_of(&path);
        let plots: Vec<(u32, Rect)> = (plan.frames.iter().zip(&lists))
            .filter_map(|(f, list)| {
                // one plot, or the cells of a split scatter together
                let plots = list.groups(|p| matches!(p, Part::Plot(_)));
                let rects = plots.iter().filter_map(|(p, _)| match p {
                    Part::Plot(r) => Some(*r),
                    _ => None,
                });
                let union = rects.reduce(|a, r| Rect {
                    x0: a.x0.min(r.x0),
                    y0: a.y0.min(r.y0),
                    x1: a.x1.max(r.x1),
                    y1: a.y1.max(r.y1),
                })?;
                Some((f.number as u32, union))
            })
            .collect();
        let Some(&(_, deck)) = plots.first() else {
            continue;
        };
        for &(number, r) in &plots {
            let edges = [
                (r.x0, deck.x0),
                (r.y0, deck.y0),
                (r.x1, deck.x1),
                (r.y1, deck.y1),
            ];
            if edges.iter().any(|(a, b)| (a - b).abs() >= 0.01) {
                wrong.push(format!(
                    "{name} frame {number}: plot ({:.1}, {:.1})..({:.1}, {:.1}), \
                     the deck's ({:.1}, {:.1})..({:.1}, {:.1})",
                    r.x0, r.y0, r.x1, r.y1, deck.x0, deck.y0, deck.x1, deck.y1
                ));
            }
        }
        checked += plots.len();
    }
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
    assert!(checked >= 20, "only {checked} chart frames checked");
}
