//! The HTML deck: one self-contained file with every frame's SVG inline,
//! keyboard, click and URL-hash navigation, a frame counter and speaker notes.
//! No network access: no external scripts, styles, fonts or images.

use crescendo_plan::{DeckPlan, FramePlan};
use std::fmt::Write;

/// Escapes text for HTML element content and attribute values.
pub(crate) fn escape(text: &str) -> String {
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

const STYLE: &str = "\
*{box-sizing:border-box}
html,body{margin:0;height:100%;background:#FFFFFF;color:#1F1F1F;font-family:\"DejaVu Sans\",Helvetica,Arial,sans-serif}
body{overflow:hidden}
.frame{position:fixed;inset:0;display:none;align-items:center;justify-content:center;padding:2vmin}
.frame.current{display:flex}
.frame svg{display:block;width:100%;height:100%}
.count{position:fixed;right:1.2em;bottom:0.8em;font-size:13px;color:#5A5A5A;user-select:none}
.notes{display:none;position:fixed;left:0;right:0;bottom:0;max-height:40vh;overflow:auto;margin:0;padding:1em 1.5em;background:#F4F4F4;border-top:1px solid #C8C8C8;font-size:18px;line-height:1.45;color:#1F1F1F;white-space:pre-wrap}
body.show-notes .frame.current .notes{display:block}
";

const SCRIPT: &str = "\
(function(){
var frames=document.querySelectorAll('.frame');
var count=document.getElementById('count');
var n=frames.length,cur=0;
function show(i,push){
if(n===0)return;
cur=Math.max(0,Math.min(n-1,i));
for(var k=0;k<n;k++){frames[k].classList.toggle('current',k===cur);frames[k].setAttribute('aria-hidden',k===cur?'false':'true');}
count.textContent=(cur+1)+' / '+n;
if(push!==false&&location.hash!=='#'+(cur+1)){history.replaceState(null,'','#'+(cur+1));}
}
function fromHash(){var m=/^#(\\d+)$/.exec(location.hash);return m?parseInt(m[1],10)-1:0;}
document.addEventListener('keydown',function(e){
if(e.altKey||e.ctrlKey||e.metaKey)return;
switch(e.key){
case 'ArrowRight':case 'PageDown':case ' ':show(cur+1);break;
case 'ArrowLeft':case 'PageUp':show(cur-1);break;
case 'Home':show(0);break;
case 'End':show(n-1);break;
case 'n':case 'N':document.body.classList.toggle('show-notes');break;
default:return;}
e.preventDefault();
});
document.addEventListener('click',function(e){
if(e.target.closest&&e.target.closest('.notes'))return;
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
/// speaker notes. A click on the right half goes forward, on the left half
/// back. The URL hash (`#3`) follows the current frame. The SVG strings are
/// trusted output of [`crate::render_frame`]; every other text is escaped.
pub fn render_deck_html(deck: &DeckPlan, frames: &[(&FramePlan, &str)]) -> String {
    let mut out = String::new();
    out.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    out.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    let _ = writeln!(out, "<title>{}</title>", escape(&deck.title));
    let _ = write!(out, "<style>\n{STYLE}</style>\n</head>\n<body>\n");
    let _ = writeln!(
        out,
        "<main aria-roledescription=\"slide deck\" aria-label=\"{}\">",
        escape(&deck.title)
    );
    let total = frames.len();
    for (i, (frame, svg)) in frames.iter().enumerate() {
        let current = if i == 0 { " current" } else { "" };
        let _ = writeln!(
            out,
            "<section class=\"frame{current}\" id=\"frame-{}\" aria-roledescription=\"slide\" aria-label=\"{}\" aria-hidden=\"{}\">",
            i + 1,
            escape(&frame.headline),
            if i == 0 { "false" } else { "true" }
        );
        out.push_str(strip_xml_prolog(svg).trim());
        out.push('\n');
        if let Some(notes) = frame.notes.as_deref().filter(|n| !n.trim().is_empty()) {
            let _ = writeln!(
                out,
                "<aside class=\"notes\" aria-label=\"Speaker notes\">{}</aside>",
                escape(notes.trim())
            );
        }
        out.push_str("</section>\n");
    }
    out.push_str("</main>\n");
    let _ = writeln!(
        out,
        "<div class=\"count\" id=\"count\" aria-live=\"polite\">{} / {}</div>",
        total.min(1),
        total
    );
    let _ = write!(out, "<script>\n{SCRIPT}</script>\n</body>\n</html>\n");
    out
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
