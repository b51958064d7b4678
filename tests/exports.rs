//! PDF and PNG exports end to end: `build --format svg,html,pdf,png` over the
//! pools story; the PDF has one page per frame whose text (read back through
//! the fonts' ToUnicode maps) holds the frame's headline; PNGs have the
//! requested size and show the accent only where a series is in focus; both
//! are byte-identical across builds; a dark theme paints its page.

mod common;

use std::collections::BTreeMap;
use std::fs;
use std::path::Path;

use common::{crescendo, root, scratch};
use lopdf::content::Content;
use lopdf::{Document, Object, ObjectId};
use resvg::tiny_skia::Pixmap;

fn build(out: &Path, story: &Path, args: &[&str]) {
    let mut all = vec![
        "build",
        story.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    all.extend_from_slice(args);
    let o = crescendo(&root(), &all);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

fn manifest(out: &Path) -> serde_json::Value {
    serde_json::from_slice(&fs::read(out.join("deck.json")).unwrap()).unwrap()
}

fn pools() -> std::path::PathBuf {
    root().join("stories/pools/pools.cresc")
}

// --- reading text back out of the PDF -------------------------------------

fn deref<'a>(doc: &'a Document, o: &'a Object) -> &'a Object {
    match o {
        Object::Reference(id) => doc.get_object(*id).expect("dangling reference"),
        o => o,
    }
}

fn dict_get<'a>(doc: &'a Document, o: &'a Object, key: &[u8]) -> Option<&'a Object> {
    let d = match deref(doc, o) {
        Object::Dictionary(d) => d,
        Object::Stream(s) => &s.dict,
        _ => return None,
    };
    d.get(key).ok().map(|v| deref(doc, v))
}

fn hex_bytes(s: &str) -> Vec<u8> {
    (0..s.len() / 2)
        .filter_map(|i| u8::from_str_radix(&s[2 * i..2 * i + 2], 16).ok())
        .collect()
}

fn utf16(bytes: &[u8]) -> String {
    let units: Vec<u16> = bytes
        .chunks(2)
        .map(|c| u16::from_be_bytes([c[0], *c.get(1).unwrap_or(&0)]))
        .collect();
    String::from_utf16_lossy(&units)
}

/// A ToUnicode CMap (`bfchar` and `bfrange` sections, ISO 32000-1 §9.10.3)
/// as code → text.
fn parse_cmap(text: &str) -> BTreeMap<Vec<u8>, String> {
    let mut map = BTreeMap::new();
    let tokens: Vec<&str> = text
        .split(|c: char| c.is_whitespace() || c == '<' || c == '>')
        .filter(|t| !t.is_empty())
        .collect();
    let mut i = 0;
    while i < tokens.len() {
        match tokens[i] {
            "beginbfchar" => {
                i += 1;
                while i + 1 < tokens.len() && tokens[i] != "endbfchar" {
                    map.insert(hex_bytes(tokens[i]), utf16(&hex_bytes(tokens[i + 1])));
                    i += 2;
                }
            }
            "beginbfrange" => {
                i += 1;
                while i + 2 < tokens.len() && tokens[i] != "endbfrange" {
                    let lo = hex_bytes(tokens[i]);
                    let hi = hex_bytes(tokens[i + 1]);
                    let first = hex_bytes(tokens[i + 2]);
                    let as_int = |b: &[u8]| b.iter().fold(0u32, |a, &x| a * 256 + u32::from(x));
                    let (lo_n, hi_n) = (as_int(&lo), as_int(&hi));
                    let start = u16::from_be_bytes([first[0], first[1]]);
                    for (k, code) in (lo_n..=hi_n).enumerate() {
                        let key: Vec<u8> = (0..lo.len())
                            .rev()
                            .map(|s| (code >> (8 * s)) as u8)
                            .collect();
                        let unit = start + k as u16;
                        map.insert(key, String::from_utf16_lossy(&[unit]));
                    }
                    i += 3;
                }
            }
            _ => i += 1,
        }
    }
    map
}

/// The text shown by a content stream and its form XObjects, in order.
fn stream_text(doc: &Document, resources: Option<&Object>, content: &[u8], out: &mut String) {
    let fonts = resources.and_then(|r| dict_get(doc, r, b"Font"));
    let xobjects = resources.and_then(|r| dict_get(doc, r, b"XObject"));
    let mut cmap: BTreeMap<Vec<u8>, String> = BTreeMap::new();
    let ops = Content::decode(content).expect("content stream").operations;
    for op in ops {
        match op.operator.as_str() {
            "Tf" => {
                let name = match op.operands.first() {
                    Some(Object::Name(n)) => n.clone(),
                    _ => continue,
                };
                cmap = fonts
                    .and_then(|f| dict_get(doc, f, &name))
                    .and_then(|font| dict_get(doc, font, b"ToUnicode"))
                    .and_then(|s| match s {
                        Object::Stream(s) => s.decompressed_content().ok(),
                        _ => None,
                    })
                    .map(|bytes| parse_cmap(&String::from_utf8_lossy(&bytes)))
                    .unwrap_or_default();
            }
            "Tj" | "TJ" | "'" | "\"" => {
                let mut strings = Vec::new();
                for o in &op.operands {
                    match o {
                        Object::String(b, _) => strings.push(b.clone()),
                        Object::Array(a) => strings.extend(a.iter().filter_map(|x| match x {
                            Object::String(b, _) => Some(b.clone()),
                            _ => None,
                        })),
                        _ => {}
                    }
                }
                for s in strings {
                    // codes of one or two bytes, as the CMap says
                    let mut k = 0;
                    while k < s.len() {
                        if let Some(t) = s.get(k..k + 2).and_then(|c| cmap.get(c)) {
                            out.push_str(t);
                            k += 2;
                        } else if let Some(t) = cmap.get(&s[k..k + 1]) {
                            out.push_str(t);
                            k += 1;
                        } else {
                            k += 1;
                        }
                    }
                }
            }
            "ET" => out.push(' '),
            "Do" => {
                let Some(Object::Name(n)) = op.operands.first() else {
                    continue;
                };
                if let Some(Object::Stream(form)) = xobjects.and_then(|x| dict_get(doc, x, n)) {
                    let inner = form.dict.get(b"Resources").ok().map(|r| deref(doc, r));
                    if let Ok(bytes) = form.decompressed_content() {
                        stream_text(doc, inner, &bytes, out);
                    } else {
                        stream_text(doc, inner, &form.content, out);
                    }
                }
            }
            _ => {}
        }
    }
}

fn page_texts(pdf: &Path) -> Vec<String> {
    let doc = Document::load(pdf).expect("a readable PDF");
    let pages: Vec<ObjectId> = doc.get_pages().into_values().collect();
    pages
        .into_iter()
        .map(|id| {
            let page = doc.get_object(id).unwrap();
            let resources = dict_get(&doc, page, b"Resources");
            let content = doc.get_page_content(id);
            let mut text = String::new();
            stream_text(&doc, resources, &content, &mut text);
            text
        })
        .collect()
}

fn squash(s: &str) -> String {
    s.chars().filter(|c| !c.is_whitespace()).collect()
}

// --- the tests -------------------------------------------------------------

#[test]
fn pdf_has_a_page_per_frame_with_its_headline_as_text() {
    let dir = scratch("exports-pdf");
    let out = dir.join("deck");
    build(&out, &pools(), &["--format", "pdf"]);
    let m = manifest(&out);
    let frames = m["frames"].as_array().unwrap();
    assert_eq!(m["pdf"], "deck.pdf");
    // only what was asked for, and the manifest
    let mut names: Vec<String> = fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["deck.json", "deck.pdf"]);

    let texts = page_texts(&out.join("deck.pdf"));
    assert_eq!(texts.len(), frames.len(), "one page per frame");
    for (f, text) in frames.iter().zip(&texts) {
        let headline = f["headline"].as_str().unwrap();
        assert!(
            squash(text).contains(&squash(headline)),
            "page {} lacks its headline {headline:?}; it reads {text:?}",
            f["number"]
        );
    }
    // and the pages differ: page 1 does not carry page 3's headline
    let third = squash(frames[2]["headline"].as_str().unwrap());
    assert!(!squash(&texts[0]).contains(&third));

    let bytes = fs::read(out.join("deck.pdf")).unwrap();
    let raw = String::from_utf8_lossy(&bytes);
    assert!(raw.contains("/FontFile2"), "fonts are embedded");
    assert!(!raw.contains("/CreationDate") && !raw.contains("/ModDate"));
    // the page is 1280×720 px at 96 px per inch
    assert!(raw.contains("/MediaBox [0 0 960 540]"), "page size");
}

#[test]
fn exports_are_byte_identical_across_builds() {
    let dir = scratch("exports-twice");
    let (a, b) = (dir.join("a"), dir.join("b"));
    for out in [&a, &b] {
        build(
            out,
            &pools(),
            &["--format", "svg,html,pdf,png", "--scale", "1"],
        );
    }
    let files = common::read_dir_files(&a);
    let again = common::read_dir_files(&b);
    let names = |f: &[(String, Vec<u8>)]| f.iter().map(|(n, _)| n.clone()).collect::<Vec<_>>();
    assert_eq!(names(&files), names(&again));
    for ((name, x), (_, y)) in files.iter().zip(&again) {
        assert!(x == y, "{name} differs between two builds");
    }
    let pngs = files.iter().filter(|(n, _)| n.ends_with(".png")).count();
    assert_eq!(pngs, manifest(&a)["frames"].as_array().unwrap().len());
    assert!(files.iter().any(|(n, _)| n == "deck.pdf"));
    assert!(files.iter().any(|(n, _)| n == "index.html"));
}

fn pixels(path: &Path) -> Pixmap {
    Pixmap::decode_png(&fs::read(path).unwrap()).expect("a PNG")
}

fn count(img: &Pixmap, pred: impl Fn(u8, u8, u8) -> bool) -> usize {
    img.pixels()
        .iter()
        .filter(|p| p.alpha() == 255 && pred(p.red(), p.green(), p.blue()))
        .count()
}

/// Near the `clear` accent #8E3005: antialiased edges mix it with the page.
fn accentish(r: u8, g: u8, b: u8) -> bool {
    let d = |x: u8, y: u8| (i32::from(x) - i32::from(y)).abs();
    d(r, 0x8E) + d(g, 0x30) + d(b, 0x05) < 60
}

#[test]
fn pngs_have_the_scaled_size_and_the_accent_only_on_the_focus() {
    let dir = scratch("exports-png");
    let out = dir.join("deck");
    build(&out, &pools(), &["--format", "png"]); // default scale 2
    let m = manifest(&out);
    let frames = m["frames"].as_array().unwrap();
    let png = |i: usize| out.join(frames[i]["png"].as_str().unwrap());
    for i in 0..frames.len() {
        let img = pixels(&png(i));
        assert_eq!((img.width(), img.height()), (2560, 1440), "frame {}", i + 1);
    }
    // Frame 3 spotlights Westbrook: accent pixels exist, exactly the accent
    // in the middle of the 8 px line.
    let three = pixels(&png(2));
    assert!(count(&three, |r, g, b| (r, g, b) == (0x8E, 0x30, 0x05)) > 1000);
    // Frame 2 shows three context series and no spotlight: grey lines
    // (#848484 exactly in their middle) and nothing near the accent.
    let two = pixels(&png(1));
    assert!(count(&two, |r, g, b| (r, g, b) == (0x84, 0x84, 0x84)) > 1000);
    assert_eq!(count(&two, accentish), 0);
    // the page is white (the light theme's page colour fills the PNG)
    let corner = two.pixel(0, 0).unwrap();
    assert_eq!(
        (corner.red(), corner.green(), corner.blue()),
        (255, 255, 255)
    );

    // --scale 1 halves each side
    let small = dir.join("small");
    build(&small, &pools(), &["--format", "png", "--scale", "1"]);
    let first = manifest(&small)["frames"][0]["png"]
        .as_str()
        .unwrap()
        .to_string();
    let img = pixels(&small.join(first));
    assert_eq!((img.width(), img.height()), (1280, 720));
}

#[test]
fn the_dark_theme_paints_its_page_in_svg_and_png() {
    let dir = scratch("exports-dark");
    let story = fs::read_to_string(pools()).unwrap();
    assert!(story.contains("\ntheme clear\n"));
    let story = story.replace("\ntheme clear\n", "\ntheme evening\n");
    fs::write(dir.join("pools.cresc"), story).unwrap();
    let data = dir.join("data");
    fs::create_dir_all(&data).unwrap();
    for e in fs::read_dir(root().join("stories/pools/data")).unwrap() {
        let p = e.unwrap().path();
        fs::copy(&p, data.join(p.file_name().unwrap())).unwrap();
    }
    let out = dir.join("deck");
    build(
        &out,
        &dir.join("pools.cresc"),
        &["--format", "svg,html,png", "--scale", "1"],
    );
    let m = manifest(&out);
    assert_eq!(m["theme"], "evening");
    let f = &m["frames"][2];
    let svg = fs::read_to_string(out.join(f["file"].as_str().unwrap())).unwrap();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let first = doc
        .root_element()
        .children()
        .find(|n| n.is_element() && !matches!(n.tag_name().name(), "title" | "desc"))
        .unwrap();
    assert_eq!(
        first.tag_name().name(),
        "rect",
        "the background comes first"
    );
    assert_eq!(first.attribute("fill"), Some("#171A1F"));
    let img = pixels(&out.join(f["png"].as_str().unwrap()));
    let corner = img.pixel(3, 3).unwrap();
    assert_eq!(
        (corner.red(), corner.green(), corner.blue()),
        (0x17, 0x1A, 0x1F)
    );
    // the evening accent (#F0A04B) marks the spotlight
    assert!(count(&img, |r, g, b| (r, g, b) == (0xF0, 0xA0, 0x4B)) > 100);
    // the HTML deck takes the page colour too
    let html = fs::read_to_string(out.join("index.html")).unwrap();
    assert!(html.contains("background:#171A1F"));
}

#[test]
fn unknown_formats_and_scales_are_command_line_errors() {
    let dir = scratch("exports-bad");
    let story = pools();
    let s = story.to_str().unwrap();
    let o = dir.to_str().unwrap();
    let bad = crescendo(&root(), &["build", s, "--out", o, "--format", "svg,gif"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("gif"));
    let bad = crescendo(&root(), &["build", s, "--out", o, "--scale", "0"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(
        fs::read_dir(&dir).unwrap().next().is_none(),
        "nothing written"
    );
}
