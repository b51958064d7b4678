//! PDF and PNG exports of the rendered SVG frames.
//!
//! Both read the SVG with usvg, with a font database holding only the
//! bundled DejaVu Sans regular and bold (never system fonts), so a machine
//! without fonts produces the same bytes. The PDF (svg2pdf, one page per
//! frame) keeps the drawing as vectors and the text as real text with the
//! fonts embedded; it carries no dates and no random identifiers. PNGs are
//! rasterised with resvg at a chosen scale on the theme's page colour.

use std::collections::BTreeMap;
use std::sync::{Arc, OnceLock};

use crescendo_render::canvas::{HEIGHT, WIDTH};
use crescendo_render::Rgb;
use pdf_writer::{Content, Finish, Name, Pdf, Rect, Ref, TextStr};
use resvg::tiny_skia;
use svg2pdf::usvg;

/// The family every SVG names first; also the fallback for any other name.
const FAMILY: &str = "DejaVu Sans";

/// A font database with the bundled DejaVu Sans regular and bold only.
fn fonts() -> Arc<usvg::fontdb::Database> {
    static DB: OnceLock<Arc<usvg::fontdb::Database>> = OnceLock::new();
    DB.get_or_init(|| {
        let mut db = usvg::fontdb::Database::new();
        db.load_font_data(dejavu::sans::regular().to_vec());
        db.load_font_data(dejavu::sans::bold().to_vec());
        // Every generic family resolves to the bundled font, so a house
        // style's stack (`'Some Face', sans-serif`) still finds it.
        db.set_sans_serif_family(FAMILY);
        db.set_serif_family(FAMILY);
        db.set_monospace_family(FAMILY);
        db.set_cursive_family(FAMILY);
        db.set_fantasy_family(FAMILY);
        Arc::new(db)
    })
    .clone()
}

fn options() -> usvg::Options<'static> {
    usvg::Options {
        font_family: FAMILY.to_string(),
        fontdb: fonts(),
        ..usvg::Options::default()
    }
}

fn tree(svg: &str) -> Result<usvg::Tree, String> {
    usvg::Tree::from_str(svg, &options()).map_err(|e| format!("cannot read the SVG: {e}"))
}

/// Page size in PDF points for a 1280×720 px frame (96 px = 72 pt).
fn page_size() -> (f32, f32) {
    (WIDTH as f32 * 0.75, HEIGHT as f32 * 0.75)
}

/// One PDF with a page per SVG, in order. `title` goes into the document
/// information; nothing else (no dates, no ids) that could differ between
/// two builds.
pub fn pdf(title: &str, svgs: &[&str]) -> Result<Vec<u8>, String> {
    let mut alloc = Ref::new(1);
    let catalog = alloc.bump();
    let page_tree = alloc.bump();
    let info = alloc.bump();
    let (w, h) = page_size();
    let mut pages = Vec::new();
    let mut chunks = Vec::new();
    for (i, svg) in svgs.iter().enumerate() {
        let tree = tree(svg).map_err(|e| format!("frame {}: {e}", i + 1))?;
        let (chunk, root) = svg2pdf::to_chunk(&tree, svg2pdf::ConversionOptions::default())
            .map_err(|e| format!("frame {}: cannot convert to PDF: {e}", i + 1))?;
        let mut map = BTreeMap::new();
        let chunk = chunk.renumber(|old| *map.entry(old).or_insert_with(|| alloc.bump()));
        let root = *map
            .get(&root)
            .ok_or_else(|| format!("frame {}: the converted drawing is missing", i + 1))?;
        pages.push((alloc.bump(), alloc.bump(), root));
        chunks.push(chunk);
    }

    let mut doc = Pdf::new();
    doc.catalog(catalog).pages(page_tree);
    doc.pages(page_tree)
        .kids(pages.iter().map(|p| p.0))
        .count(pages.len() as i32);
    doc.document_info(info)
        .title(TextStr(title))
        .producer(TextStr("crescendo"));
    let name = Name(b"F");
    for &(page_id, content_id, drawing) in &pages {
        let mut page = doc.page(page_id);
        page.media_box(Rect::new(0.0, 0.0, w, h));
        page.parent(page_tree);
        page.contents(content_id);
        page.resources().x_objects().pair(name, drawing);
        page.finish();
        let mut content = Content::new();
        // The drawing is a 1×1 pt form: scale it to the page.
        content.transform([w, 0.0, 0.0, h, 0.0, 0.0]).x_object(name);
        doc.stream(content_id, &content.finish());
    }
    for chunk in &chunks {
        doc.extend(chunk);
    }
    canonical(&doc.finish())
}

/// One indirect object of a PDF written by pdf-writer: its dictionary (or
/// other body) as text and, for a stream, its raw data.
struct Object {
    body: String,
    stream: Option<Vec<u8>>,
}

/// Rewrites a PDF written by pdf-writer into a canonical form: svg2pdf
/// writes the fonts of a frame in hash-map order, so object numbers and
/// order differ from run to run. Here resource entries are sorted by name,
/// objects are numbered in the order a walk from the catalog first meets
/// them, and written in that order with a fresh cross-reference table.
fn canonical(pdf: &[u8]) -> Result<Vec<u8>, String> {
    let bad = |what: &str| format!("unexpected PDF structure ({what})");
    let first = find(pdf, b"\n1 0 obj\n", 0).ok_or_else(|| bad("no first object"))? + 1;
    let header = &pdf[..first];
    let mut objects: BTreeMap<u32, Object> = BTreeMap::new();
    let mut at = first;
    while at < pdf.len() && !pdf[at..].starts_with(b"xref") {
        let line_end = find(pdf, b"\n", at).ok_or_else(|| bad("object header"))?;
        let head = std::str::from_utf8(&pdf[at..line_end]).map_err(|_| bad("object header"))?;
        let id: u32 = head
            .strip_suffix(" 0 obj")
            .and_then(|n| n.parse().ok())
            .ok_or_else(|| bad("object number"))?;
        let start = line_end + 1;
        let end_obj = find(pdf, b"\nendobj\n", start).ok_or_else(|| bad("endobj"))?;
        let stream_at = find(pdf, b"\nstream\n", start).filter(|&s| s < end_obj);
        let (body, stream, next) = match stream_at {
            None => (&pdf[start..end_obj], None, end_obj + 8),
            Some(s) => {
                let dict = std::str::from_utf8(&pdf[start..s]).map_err(|_| bad("stream dict"))?;
                let len: usize = dict
                    .lines()
                    .find_map(|l| l.trim().strip_prefix("/Length ")?.parse().ok())
                    .ok_or_else(|| bad("stream length"))?;
                let data_start = s + 8;
                let data_end = data_start + len;
                let tail = b"\nendstream\nendobj\n";
                if pdf.get(data_end..data_end + tail.len()) != Some(&tail[..]) {
                    return Err(bad("endstream"));
                }
                (
                    &pdf[start..s],
                    Some(pdf[data_start..data_end].to_vec()),
                    data_end + tail.len(),
                )
            }
        };
        let body = String::from_utf8(body.to_vec()).map_err(|_| bad("object body"))?;
        objects.insert(
            id,
            Object {
                body: sort_reference_runs(&body),
                stream,
            },
        );
        at = next;
        while pdf.get(at) == Some(&b'\n') {
            at += 1;
        }
    }
    let trailer = std::str::from_utf8(&pdf[at..]).map_err(|_| bad("trailer"))?;
    let trailer_ref = |key: &str| -> Option<u32> {
        trailer.lines().find_map(|l| {
            l.trim()
                .strip_prefix(key)?
                .strip_suffix(" 0 R")?
                .parse()
                .ok()
        })
    };
    let root = trailer_ref("/Root ").ok_or_else(|| bad("no root"))?;
    let info = trailer_ref("/Info ");

    // Number objects in the order a walk from the root (then the info)
    // first reaches them.
    let mut order: Vec<u32> = Vec::new();
    let mut renumber: BTreeMap<u32, u32> = BTreeMap::new();
    let mut queue: std::collections::VecDeque<u32> =
        [Some(root), info].into_iter().flatten().collect();
    while let Some(id) = queue.pop_front() {
        if renumber.contains_key(&id) || !objects.contains_key(&id) {
            continue;
        }
        renumber.insert(id, order.len() as u32 + 1);
        order.push(id);
        for r in references(&objects[&id].body) {
            queue.push_back(r);
        }
    }
    let mut out = header.to_vec();
    let mut offsets = Vec::new();
    for old in &order {
        let o = &objects[old];
        offsets.push(out.len());
        out.extend_from_slice(format!("{} 0 obj\n", renumber[old]).as_bytes());
        out.extend_from_slice(rewrite_references(&o.body, &renumber).as_bytes());
        if let Some(data) = &o.stream {
            out.extend_from_slice(b"\nstream\n");
            out.extend_from_slice(data);
            out.extend_from_slice(b"\nendstream");
        }
        out.extend_from_slice(b"\nendobj\n\n");
    }
    let xref = out.len();
    out.extend_from_slice(
        format!("xref\n0 {}\n0000000000 65535 f\r\n", order.len() + 1).as_bytes(),
    );
    for off in offsets {
        out.extend_from_slice(format!("{off:010} 00000 n\r\n").as_bytes());
    }
    out.extend_from_slice(
        format!(
            "trailer\n<<\n  /Size {}\n  /Root {} 0 R\n",
            order.len() + 1,
            renumber[&root]
        )
        .as_bytes(),
    );
    if let Some(i) = info.and_then(|i| renumber.get(&i)) {
        out.extend_from_slice(format!("  /Info {i} 0 R\n").as_bytes());
    }
    out.extend_from_slice(format!(">>\nstartxref\n{xref}\n%%EOF").as_bytes());
    Ok(out)
}

fn find(hay: &[u8], needle: &[u8], from: usize) -> Option<usize> {
    hay.get(from..)?
        .windows(needle.len())
        .position(|w| w == needle)
        .map(|i| i + from)
}

/// Runs of consecutive `/Name N 0 R` lines at one indentation (entries of
/// one dictionary, such as a resource dictionary) sorted by name.
fn sort_reference_runs(body: &str) -> String {
    let is_entry = |l: &str| {
        let t = l.trim_start();
        t.starts_with('/') && t.ends_with(" 0 R") && t.split(' ').count() == 4
    };
    let indent = |l: &str| l.len() - l.trim_start().len();
    let lines: Vec<&str> = body.split('\n').collect();
    let mut out: Vec<&str> = Vec::with_capacity(lines.len());
    let mut i = 0;
    while i < lines.len() {
        if is_entry(lines[i]) {
            let mut j = i;
            while j < lines.len() && is_entry(lines[j]) && indent(lines[j]) == indent(lines[i]) {
                j += 1;
            }
            let mut run = lines[i..j].to_vec();
            run.sort_by_key(|l| l.trim_start().split(' ').next().unwrap_or("").to_string());
            out.extend(run);
            i = j;
        } else {
            out.push(lines[i]);
            i += 1;
        }
    }
    out.join("\n")
}

/// Splits a body into pieces, marking `N 0 R` references outside strings.
fn scan_references(body: &str, mut on_ref: impl FnMut(u32), mut on_text: impl FnMut(&str)) {
    let b = body.as_bytes();
    let mut i = 0;
    let mut plain = 0;
    let mut depth = 0usize;
    while i < b.len() {
        match b[i] {
            b'\\' if depth > 0 => i += 2,
            b'(' => {
                depth += 1;
                i += 1;
            }
            b')' if depth > 0 => {
                depth -= 1;
                i += 1;
            }
            c if depth == 0
                && c.is_ascii_digit()
                && (i == 0 || !b[i - 1].is_ascii_alphanumeric()) =>
            {
                let mut j = i;
                while j < b.len() && b[j].is_ascii_digit() {
                    j += 1;
                }
                if body[j..].starts_with(" 0 R")
                    && !body[j + 4..].starts_with(|c: char| c.is_ascii_alphanumeric())
                {
                    if let Ok(n) = body[i..j].parse() {
                        on_text(&body[plain..i]);
                        on_ref(n);
                        i = j + 4;
                        plain = i;
                        continue;
                    }
                }
                i = j;
            }
            _ => i += 1,
        }
    }
    on_text(&body[plain.min(body.len())..]);
}

fn references(body: &str) -> Vec<u32> {
    let mut refs = Vec::new();
    scan_references(body, |r| refs.push(r), |_| {});
    refs
}

fn rewrite_references(body: &str, map: &BTreeMap<u32, u32>) -> String {
    let out = std::cell::RefCell::new(String::with_capacity(body.len()));
    scan_references(
        body,
        |r| {
            let n = map.get(&r).copied().unwrap_or(r);
            out.borrow_mut().push_str(&format!("{n} 0 R"));
        },
        |t| out.borrow_mut().push_str(t),
    );
    out.into_inner()
}

/// One PNG of `svg` at `scale` (1280·scale × 720·scale px) on `page`, or
/// transparent where nothing is drawn when `page` is `None`.
pub fn png(svg: &str, scale: u32, page: Option<Rgb>) -> Result<Vec<u8>, String> {
    let tree = tree(svg)?;
    let mut pixmap = tiny_skia::Pixmap::new(WIDTH * scale, HEIGHT * scale)
        .ok_or_else(|| format!("cannot make a {}×{} image", WIDTH * scale, HEIGHT * scale))?;
    if let Some(page) = page {
        pixmap.fill(tiny_skia::Color::from_rgba8(page.0, page.1, page.2, 255));
    }
    let s = scale as f32;
    resvg::render(
        &tree,
        tiny_skia::Transform::from_scale(s, s),
        &mut pixmap.as_mut(),
    );
    pixmap
        .encode_png()
        .map_err(|e| format!("cannot encode the PNG: {e}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    const SVG: &str = r##"<svg xmlns="http://www.w3.org/2000/svg" width="1280" height="720" viewBox="0 0 1280 720"><text x="10" y="50" font-family="Nowhere Sans, sans-serif" font-size="32">Hello</text><rect x="100" y="100" width="50" height="50" fill="#B4400A"/></svg>"##;

    #[test]
    fn only_the_bundled_fonts_are_known() {
        let db = fonts();
        let families: Vec<String> = db
            .faces()
            .flat_map(|f| f.families.iter().map(|(n, _)| n.clone()))
            .collect();
        assert!(!families.is_empty());
        assert!(families.iter().all(|f| f == FAMILY), "{families:?}");
        assert_eq!(db.len(), 2);
    }

    #[test]
    fn pdf_has_text_and_no_dates() {
        let a = pdf("Deck", &[SVG, SVG]).unwrap();
        assert_eq!(a, pdf("Deck", &[SVG, SVG]).unwrap());
        let text = String::from_utf8_lossy(&a);
        assert!(text.starts_with("%PDF-"));
        assert!(!text.contains("/CreationDate") && !text.contains("/ModDate"));
        assert!(text.contains("/Count 2"));
        assert!(text.contains("DejaVu"), "the font is embedded");
    }

    #[test]
    fn png_has_the_requested_size() {
        let bytes = png(SVG, 2, Some(Rgb(255, 255, 255))).unwrap();
        let img = tiny_skia::Pixmap::decode_png(&bytes).unwrap();
        // painted: the corner is the page, opaque
        assert_eq!(img.pixel(0, 0).map(|p| p.alpha()), Some(255));
        let clear = png(SVG, 1, None).unwrap();
        let clear = tiny_skia::Pixmap::decode_png(&clear).unwrap();
        assert_eq!(clear.pixel(0, 0).map(|p| p.alpha()), Some(0));
        assert_eq!((img.width(), img.height()), (2560, 1440));
        // the accent square, scaled
        let p = img.pixel(250, 250).unwrap();
        assert_eq!((p.red(), p.green(), p.blue()), (0xB4, 0x40, 0x0A));
        assert_eq!(bytes, png(SVG, 2, Some(Rgb(255, 255, 255))).unwrap());
    }
}
