//! The usual blocks of a page: tables, name–value lists, paragraphs,
//! notes, subheadings, lists and inline SVG figures, each escaping its text
//! and drawing the markup `_{…}` as a subscript.

use std::fmt::Write as _;

use super::page::{Html, escape, rich_text};

/// A table with a header row; every cell is text (escaped). Cells that
/// read as numbers (or "n/a") are right-aligned.
pub fn table(headers: &[&str], rows: &[Vec<String>]) -> Html {
    let mut s = String::from("<div class=\"table-wrap\"><table>\n<thead><tr>");
    for h in headers {
        let _ = write!(s, "<th>{}</th>", rich_text(h));
    }
    s.push_str("</tr></thead>\n<tbody>\n");
    for row in rows {
        s.push_str("<tr>");
        for cell in row {
            if looks_numeric(cell) {
                let _ = write!(s, "<td class=\"num\">{}</td>", rich_text(cell));
            } else {
                let _ = write!(s, "<td>{}</td>", rich_text(cell));
            }
        }
        s.push_str("</tr>\n");
    }
    s.push_str("</tbody>\n</table></div>");
    Html(s)
}

/// A two-column table of names and values (text, escaped), all
/// left-aligned.
pub fn key_values(rows: &[(&str, String)]) -> Html {
    let mut s = String::from("<div class=\"table-wrap\"><table class=\"kv\">\n<tbody>\n");
    for (k, v) in rows {
        let _ = writeln!(
            s,
            "<tr><th scope=\"row\">{}</th><td>{}</td></tr>",
            rich_text(k),
            rich_text(v)
        );
    }
    s.push_str("</tbody>\n</table></div>");
    Html(s)
}

/// A paragraph of text.
pub fn paragraph(text: &str) -> Html {
    Html(format!("<p>{}</p>", rich_text(text)))
}

/// A paragraph in small grey type.
pub fn note(text: &str) -> Html {
    Html(format!("<p class=\"note\">{}</p>", rich_text(text)))
}

/// A heading inside a section.
pub fn subheading(text: &str) -> Html {
    Html(format!("<h3>{}</h3>", rich_text(text)))
}

/// A bulleted list of text items.
pub fn list(items: &[String]) -> Html {
    let mut s = String::from("<ul>\n");
    for i in items {
        let _ = writeln!(s, "<li>{}</li>", rich_text(i));
    }
    s.push_str("</ul>");
    Html(s)
}

/// A figure: an SVG document (as returned by [`crate::plot::render_svg`],
/// whose text is escaped by the renderer) inlined with a caption.
///
/// An XML declaration and the SVG namespace attribute are removed (HTML
/// places `<svg>` in that namespace by itself), and the element is made to
/// scale with the page through its `viewBox`. `svg` must be a single
/// well-formed `<svg>` element from a trusted renderer: it is inserted as
/// markup, not escaped.
pub fn figure(svg: &str, caption: &str) -> Html {
    let mut body = svg.trim();
    if body.starts_with("<?xml")
        && let Some(end) = body.find("?>")
    {
        body = body[end + 2..].trim_start();
    }
    let body = body.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
    let body = match body.strip_prefix("<svg ") {
        Some(rest) => format!(
            "<svg role=\"img\" aria-label=\"{}\" {rest}",
            escape(&crate::plot::plain(caption))
        ),
        None => body,
    };
    Html(format!(
        "<figure>\n{body}\n<figcaption>{}</figcaption>\n</figure>",
        rich_text(caption)
    ))
}

fn looks_numeric(s: &str) -> bool {
    let t = s.trim();
    t == "n/a"
        || (!t.is_empty()
            && t.chars().all(|c| {
                c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E' | '−' | ' ' | '%')
            })
            && t.chars().any(|c| c.is_ascii_digit()))
}
