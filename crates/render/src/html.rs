//! The HTML deck: one self-contained file with every frame's SVG inline,
//! keyboard, click and URL-hash navigation, a frame counter and speaker notes.
//! No network access: no external scripts, styles, fonts or images.

use crate::theme::{self, Rgb, Theme};
use crescendo_frame::{DeckPlan, FramePlan};
use std::fmt::Write;

/// Escapes text for HTML element content and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// The deck's stylesheet, coloured by the effective theme: `page` and
/// `text` colour the page, `muted` the counter and the buttons, `panel`
/// and `rule` the notes panel. Shown notes take the bottom third of the
/// window and the frame shrinks above them, so notes never cover the
/// frame. The speaker's desk (`body.desk-shown`) splits the window: the
/// current frame on the left, the next frame, the elapsed time and the
/// notes in a column on the right. Controls are sized to the window.
/// `@media print` lays out one frame per page, without the controls;
/// speaker notes print below their frame only when they were shown (`n`)
/// before printing.
fn style(theme: &Theme) -> String {
    let page = theme.page.hex();
    let text = theme.headline.hex();
    let muted = theme.muted.hex();
    let panel = mix(theme.page, theme.headline, 0.05).hex();
    let rule = theme.baseline.hex();
    format!(
        "\
*{{box-sizing:border-box}}
html,body{{margin:0;height:100%;background:{page};color:{text};font-family:\"DejaVu Sans\",Helvetica,Arial,sans-serif}}
body{{overflow:hidden}}
.frame{{position:fixed;inset:0;display:none;align-items:center;justify-content:center;padding:2vmin}}
.frame.current{{display:flex}}
.frame svg{{display:block;width:100%;height:100%}}
.where{{position:fixed;right:1.2em;bottom:0.5em;font-size:clamp(13px,2.2vmin,30px);color:{muted};user-select:none}}
.controls{{position:fixed;right:1.2em;top:0.6em;z-index:2;display:flex;gap:0.5em}}
.talk-switch,.desk-switch{{font:inherit;font-size:clamp(13px,2.2vmin,30px);color:{muted};background:{page};border:1px solid {rule};border-radius:4px;padding:0.25em 0.7em;cursor:pointer}}
.talk-switch:focus-visible,.desk-switch:focus-visible{{outline:2px solid {text};outline-offset:2px}}
.talk{{display:none;position:fixed;left:0;right:0;bottom:0;height:34vh;overflow:auto;margin:0;padding:1em 1.5em;background:{panel};border-top:1px solid {rule};font-size:clamp(16px,2.6vmin,34px);line-height:1.45;color:{text};white-space:pre-wrap}}
body.talk-shown .frame.current{{bottom:34vh}}
body.talk-shown .frame.current .talk{{display:block}}
.clock{{display:none}}
.bookend{{flex-direction:column;align-items:flex-start;justify-content:center;padding:8vmin 10vmin}}
.opening-title{{margin:0 0 0.5em;font-size:clamp(28px,7vmin,96px);line-height:1.15}}
.closing-line{{margin:0 0 1em;font-size:clamp(24px,5.5vmin,72px);font-weight:bold;line-height:1.25;max-width:28em}}
.byline,.origin{{margin:0.2em 0;font-size:clamp(16px,3vmin,40px);color:{muted}}}
body.desk-shown .frame.current{{top:3.2em;right:36vw;bottom:0;left:0}}
body.desk-shown .frame.coming{{display:flex;top:3.2em;left:64vw;right:0;bottom:auto;height:calc(36vw * 9 / 16);padding:1vmin;opacity:0.85}}
body.desk-shown .frame.coming .talk{{display:none}}
body.desk-shown .frame.current .talk{{display:block;top:calc(3.2em + 36vw * 9 / 16 + 1em);left:64vw;right:0;bottom:0;height:auto;border-top:0;border-left:1px solid {rule}}}
body.desk-shown .clock{{display:block;position:fixed;left:1.2em;top:0.5em;font-size:clamp(16px,2.6vmin,34px);color:{text};font-variant-numeric:tabular-nums}}
body.desk-shown .where{{left:1.2em;right:auto;bottom:auto;top:0.5em;margin-left:6em}}
@media print{{
@page{{size:landscape;margin:8mm}}
html,body{{height:auto;overflow:visible}}
.frame,.frame.current{{position:static;display:block;padding:0;break-after:page;page-break-after:always;break-inside:avoid}}
.frame:last-child{{break-after:auto;page-break-after:auto}}
.frame svg{{width:100%;height:auto;max-height:100vh}}
.where,.controls,.clock{{display:none}}
.bookend{{flex-direction:column;align-items:flex-start;justify-content:center;padding:8vmin 10vmin}}
.opening-title{{margin:0 0 0.5em;font-size:clamp(28px,7vmin,96px);line-height:1.15}}
.closing-line{{margin:0 0 1em;font-size:clamp(24px,5.5vmin,72px);font-weight:bold;line-height:1.25;max-width:28em}}
.byline,.origin{{margin:0.2em 0;font-size:clamp(16px,3vmin,40px);color:{muted}}}
.talk,body.talk-shown .frame.current .talk{{display:none}}
body.talk-shown .frame .talk{{display:block;position:static;max-height:none;border:0;padding:0.5em 0;background:none;font-size:12pt}}
}}
"
    )
}

/// `a` moved `share` of the way towards `b`, per channel.
fn mix(a: Rgb, b: Rgb, share: f64) -> Rgb {
    let ch = |x: u8, y: u8| (f64::from(x) + (f64::from(y) - f64::from(x)) * share).round() as u8;
    Rgb(ch(a.0, b.0), ch(a.1, b.1), ch(a.2, b.2))
}

const SCRIPT: &str = "\
(function(){
var frames=document.querySelectorAll('.frame');
var count=document.getElementById('where');
var toggle=document.getElementById('talk-switch');
var desk=document.getElementById('desk-switch');
var clock=document.getElementById('clock');
var started=0,ticking=0;
function tick(){var s=Math.floor((Date.now()-started)/1000);var m=Math.floor(s/60);s=s%60;clock.textContent=m+':'+(s<10?'0':'')+s;}
function notes(){var on=document.body.classList.toggle('talk-shown');if(toggle){toggle.setAttribute('aria-pressed',on?'true':'false');}}
function room(){var on=document.body.classList.toggle('desk-shown');if(desk){desk.setAttribute('aria-pressed',on?'true':'false');}
if(on&&!ticking){started=Date.now();tick();ticking=setInterval(tick,1000);}}
if(toggle){toggle.addEventListener('click',function(e){e.stopPropagation();notes();});}
if(desk){desk.addEventListener('click',function(e){e.stopPropagation();room();});}
var n=frames.length,cur=0;
function show(i,push){
if(n===0)return;
cur=Math.max(0,Math.min(n-1,i));
for(var k=0;k<n;k++){frames[k].classList.toggle('current',k===cur);frames[k].classList.toggle('coming',k===cur+1);frames[k].setAttribute('aria-hidden',k===cur?'false':'true');}
count.textContent=(cur+1)+' / '+n;
if(push!==false&&location.hash!=='#'+(cur+1)){history.replaceState(null,'','#'+(cur+1));}
}
function fromHash(){var m=/^#(\\d+)$/.exec(location.hash);return m?parseInt(m[1],10)-1:0;}
document.addEventListener('keydown',function(e){
if(e.altKey||e.ctrlKey||e.metaKey)return;
if((e.target===toggle||e.target===desk)&&(e.key===' '||e.key==='Enter'))return;
switch(e.key){
case 'ArrowRight':case 'PageDown':case ' ':show(cur+1);break;
case 'ArrowLeft':case 'PageUp':show(cur-1);break;
case 'Home':show(0);break;
case 'End':show(n-1);break;
case 'n':case 'N':notes();break;
case 'd':case 'D':room();break;
default:return;}
e.preventDefault();
});
document.addEventListener('click',function(e){
if(e.target.closest&&e.target.closest('.talk,.controls'))return;
show(e.clientX>=window.innerWidth/2?cur+1:cur-1);
});
window.addEventListener('hashchange',function(){show(fromHash(),false);});
show(fromHash(),false);
})();
";

/// Assembles the deck: one `<section>` per frame, in the given order, each
/// holding its SVG inline and its speaker notes. Only the current frame is
/// visible; the first one is current when scripts are off.
///
/// Keys: ArrowRight, PageDown and Space go forward; ArrowLeft and PageUp go
/// back; Home and End jump to the first and last frame; `n` toggles the
/// speaker notes, `d` the speaker's desk (current frame, next frame, notes
/// and the time since the desk opened, side by side in the one window). A
/// click on the right half goes forward, on the left half back. The URL hash (`#3`) follows the current frame. A button (when any
/// frame has notes) toggles the notes without the keyboard. Colours follow
/// the deck's effective theme; a print stylesheet puts one frame on each
/// page. The SVG strings are trusted output of [`crate::render_frame`];
/// every other text is escaped.
pub fn render_deck_html(deck: &DeckPlan, frames: &[(&FramePlan, &str)]) -> String {
    render_deck_html_with(deck, frames, false)
}

/// The opening frame's content: the story's title, byline and source.
fn opening_page(deck: &DeckPlan) -> String {
    let mut page = format!("<h1 class=\"opening-title\">{}</h1>\n", escape(&deck.title));
    for (class, text) in [("byline", &deck.byline), ("origin", &deck.source)] {
        if let Some(t) = text.as_deref().filter(|t| !t.trim().is_empty()) {
            let _ = writeln!(page, "<p class=\"{class}\">{}</p>", escape(t.trim()));
        }
    }
    page
}

/// The closing frame's content: the story's conclusion, when it states one.
fn closing_page(deck: &DeckPlan) -> Option<String> {
    let conclusion = deck
        .conclusion
        .as_deref()
        .filter(|c| !c.trim().is_empty())?;
    Some(format!(
        "<p class=\"closing-line\">{}</p>\n<p class=\"origin\">{}</p>\n",
        escape(conclusion.trim()),
        escape(&deck.title)
    ))
}

/// [`render_deck_html`], with an opening frame (title, byline, source)
/// before the frames and a closing frame (the conclusion) after them when
/// `bookends` is set: sections like the others, counted and numbered with
/// them.
pub fn render_deck_html_with(
    deck: &DeckPlan,
    frames: &[(&FramePlan, &str)],
    bookends: bool,
) -> String {
    let mut out = String::new();
    // the audience's language: the story's locale, else English
    let lang = deck.locale.as_deref().unwrap_or("en");
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"{}\">\n<head>\n<meta charset=\"utf-8\">\n",
        escape(lang)
    );
    out.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    let _ = writeln!(out, "<title>{}</title>", escape(&deck.title));
    let theme = theme::effective(deck).unwrap_or_else(|_| theme::CLEAR.clone());
    let css = format!("\n{}", style(&theme));
    let script = format!("\n{SCRIPT}");
    let _ = writeln!(
        out,
        "<meta http-equiv=\"Content-Security-Policy\" content=\"{}\">",
        policy(&[&script], &css)
    );
    let _ = write!(out, "<style>{css}</style>\n</head>\n<body>\n");
    let (words, own) = crate::deck_words::of_locale(deck.locale.as_deref());
    // English standing in for a language without words says it is English
    let en = if own { "" } else { " lang=\"en\"" };
    let _ = writeln!(
        out,
        "<main aria-roledescription=\"{}\" aria-label=\"{}\">",
        escape(words.deck),
        escape(&deck.title)
    );
    let opening = bookends.then(|| opening_page(deck));
    let closing = if bookends { closing_page(deck) } else { None };
    let total = frames.len() + usize::from(opening.is_some()) + usize::from(closing.is_some());
    let mut i = 0;
    let mut open = |out: &mut String, kind: &str, label: &str| {
        let current = if i == 0 { " current" } else { "" };
        let _ = writeln!(
            out,
            "<section class=\"frame{kind}{current}\" id=\"frame-{}\" aria-roledescription=\"{}\" aria-label=\"{}\" aria-hidden=\"{}\">",
            i + 1,
            escape(words.frame),
            escape(label),
            if i == 0 { "false" } else { "true" }
        );
        i += 1;
    };
    if let Some(page) = &opening {
        open(&mut out, " bookend", &deck.title);
        out.push_str(page);
        out.push_str("</section>\n");
    }
    for (frame, svg) in frames {
        open(&mut out, "", &frame.headline);
        out.push_str(strip_xml_prolog(svg).trim());
        out.push('\n');
        if let Some(notes) = frame.notes.as_deref().filter(|n| !n.trim().is_empty()) {
            let _ = writeln!(
                out,
                "<aside class=\"talk\" aria-label=\"{}\">{}</aside>",
                escape(words.notes),
                escape(notes.trim())
            );
        }
        out.push_str("</section>\n");
    }
    if let Some(page) = &closing {
        open(&mut out, " bookend", words.conclusion);
        out.push_str(page);
        out.push_str("</section>\n");
    }
    out.push_str("</main>\n");
    let any_notes = frames
        .iter()
        .any(|(f, _)| f.notes.as_deref().is_some_and(|n| !n.trim().is_empty()));
    let _ = write!(out, "<div class=\"controls\"{en}>");
    if any_notes {
        let _ = write!(
            out,
            "<button type=\"button\" class=\"talk-switch\" id=\"talk-switch\" aria-pressed=\"false\" title=\"{}\">{}</button>",
            escape(words.notes_tip),
            escape(words.notes_button)
        );
    }
    let _ = write!(
        out,
        "<button type=\"button\" class=\"desk-switch\" id=\"desk-switch\" aria-pressed=\"false\" title=\"{}\">{}</button>",
        escape(words.desk_tip),
        escape(words.desk_button)
    );
    let _ = writeln!(
        out,
        "</div>\n<div class=\"clock\" id=\"clock\" aria-hidden=\"true\" title=\"{}\"{en}>0:00</div>",
        escape(words.clock)
    );
    let _ = writeln!(
        out,
        "<div class=\"where\" id=\"where\" aria-live=\"polite\">{} / {}</div>",
        total.min(1),
        total
    );
    let _ = write!(out, "<script>{script}</script>\n</body>\n</html>\n");
    out
}

/// A CSP source expression for an inline element's text:
/// `'sha256-<base64 of its SHA-256>'`.
fn hash_source(text: &str) -> String {
    use base64::Engine as _;
    use sha2::Digest as _;
    let digest = sha2::Sha256::digest(text.as_bytes());
    format!(
        "'sha256-{}'",
        base64::engine::general_purpose::STANDARD.encode(digest)
    )
}

/// The deck's Content-Security-Policy: nothing may be loaded from anywhere
/// (`default-src 'none'`), only the deck's own inline script and stylesheet
/// run (by hash), images only from `data:` URLs; no forms, no `<base>`.
/// So text from a story or its data that slipped past escaping still could
/// neither run nor call out.
fn policy(scripts: &[&str], style: &str) -> String {
    let scripts: Vec<String> = scripts.iter().map(|s| hash_source(s)).collect();
    format!(
        "default-src 'none'; script-src {}; style-src {}; img-src data:; font-src data:; base-uri 'none'; form-action 'none'",
        scripts.join(" "),
        hash_source(style)
    )
}

/// The same policy for a page without scripts (the review page): only
/// its inline stylesheet `style` applies, images come from `data:` URLs.
pub fn policy_without_scripts(style: &str) -> String {
    format!(
        "default-src 'none'; script-src 'none'; style-src {}; img-src data:; font-src data:; base-uri 'none'; form-action 'none'",
        hash_source(style)
    )
}

/// `html` (a deck from [`render_deck_html`]) with one more inline script
/// before `</body>`, allowed by adding its hash to the policy, and with
/// `connect-src 'self'` so it may ask its own server (for `watch --serve`).
pub fn with_extra_script(html: &str, script: &str) -> String {
    let allowed = html.replacen(
        "script-src ",
        &format!("script-src {} ", hash_source(script)),
        1,
    );
    let allowed = allowed.replacen(
        "; base-uri 'none'",
        "; connect-src 'self'; base-uri 'none'",
        1,
    );
    let tag = format!("<script>{script}</script>\n");
    match allowed.rfind("</body>") {
        Some(i) => format!("{}{tag}{}", &allowed[..i], &allowed[i..]),
        None => allowed + &tag,
    }
}

/// Drops an `<?xml …?>` declaration, which is not allowed inside HTML.
fn strip_xml_prolog(svg: &str) -> &str {
    let s = svg.trim_start();
    if s.starts_with("<?xml") {
        if let Some(end) = s.find("?>") {
            return &s[end + 2..];
        }
    }
    s
}
