//! The generic part: [`Html`], markup whose constructors escape every
//! piece of text, [`escape`] itself, and [`Page`], a document of titled
//! sections with a table of contents and the style sheet.

use std::fmt::Write as _;

/// Markup safe to insert into a page (see the [module docs](super)).
///
/// The string is open to the builders of [`crate::html`] only, which write
/// markup directly; everyone else goes through the escaping constructors.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Html(pub(super) String);

impl Html {
    /// Empty markup.
    pub fn new() -> Html {
        Html(String::new())
    }

    /// Text, escaped, with `_{…}` drawn as a subscript ([`rich_text`]).
    pub fn text(text: &str) -> Html {
        Html(rich_text(text))
    }

    /// `<tag class="class">inner</tag>`; `tag` and `class` are fixed names
    /// of the caller (letters, digits and `-` only; anything else is
    /// dropped).
    pub fn element(tag: &str, class: Option<&str>, inner: Html) -> Html {
        let tag = name_only(tag);
        let mut s = format!("<{tag}");
        if let Some(c) = class {
            let _ = write!(s, " class=\"{}\"", name_only(c));
        }
        let _ = write!(s, ">{}</{tag}>", inner.0);
        Html(s)
    }

    /// Appends `other`.
    pub fn push(&mut self, other: Html) {
        self.0.push_str(&other.0);
    }

    /// Appends escaped text, with `_{…}` drawn as a subscript.
    pub fn push_text(&mut self, text: &str) {
        self.0.push_str(&rich_text(text));
    }

    /// The markup.
    pub fn as_str(&self) -> &str {
        &self.0
    }

    /// The markup, owned.
    pub fn into_string(self) -> String {
        self.0
    }
}

impl FromIterator<Html> for Html {
    fn from_iter<I: IntoIterator<Item = Html>>(iter: I) -> Html {
        let mut out = Html::new();
        for h in iter {
            out.push(h);
        }
        out
    }
}

/// Escapes text for HTML and XML content and attribute values: `&`, `<`,
/// `>`, `"` and `'` become character references; control characters other
/// than tab, line feed and carriage return (forbidden in XML) become U+FFFD.
pub fn escape(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => s.push_str("&amp;"),
            '<' => s.push_str("&lt;"),
            '>' => s.push_str("&gt;"),
            '"' => s.push_str("&quot;"),
            '\'' => s.push_str("&#39;"),
            '\t' | '\n' | '\r' => s.push(c),
            c if c.is_control() => s.push('\u{FFFD}'),
            c => s.push(c),
        }
    }
    s
}

/// Escapes `text` like [`escape`] and draws the chart markup `_{…}` (see
/// [`crate::plot`]) as `<sub>…</sub>`: `S_{nr}` reads S<sub>nr</sub>.
pub fn rich_text(text: &str) -> String {
    let mut s = String::with_capacity(text.len() + 16);
    let mut rest = text;
    while let Some(at) = rest.find("_{") {
        let Some(close) = rest[at + 2..].find('}') else {
            break;
        };
        s.push_str(&escape(&rest[..at]));
        s.push_str("<sub>");
        s.push_str(&escape(&rest[at + 2..at + 2 + close]));
        s.push_str("</sub>");
        rest = &rest[at + 3 + close..];
    }
    s.push_str(&escape(rest));
    s
}

fn name_only(s: &str) -> String {
    s.chars()
        .filter(|c| c.is_ascii_alphanumeric() || *c == '-')
        .collect()
}

/// A document of titled sections.
#[derive(Clone, Debug, Default)]
pub struct Page {
    title: String,
    subtitle: Option<String>,
    lead: Html,
    sections: Vec<(String, Html)>,
    footer: Option<String>,
}

impl Page {
    /// An empty page with a title (shown as the heading and in the
    /// browser tab).
    pub fn new(title: &str) -> Page {
        Page {
            title: title.to_string(),
            ..Page::default()
        }
    }

    /// A line under the title.
    pub fn subtitle(&mut self, text: &str) -> &mut Page {
        self.subtitle = Some(text.to_string());
        self
    }

    /// Markup shown between the title and the table of contents (e.g. the
    /// [`caution`](super::caution) box); called again, appends.
    pub fn lead(&mut self, html: Html) -> &mut Page {
        self.lead.push(html);
        self
    }

    /// Appends a section with a heading, listed in the table of contents.
    pub fn section(&mut self, title: &str, html: Html) -> &mut Page {
        self.sections.push((title.to_string(), html));
        self
    }

    /// Small print at the end of the page.
    pub fn footer(&mut self, text: &str) -> &mut Page {
        self.footer = Some(text.to_string());
        self
    }

    /// The complete HTML document.
    pub fn render(&self) -> String {
        let mut s = String::with_capacity(
            4096 + self
                .sections
                .iter()
                .map(|(_, h)| h.as_str().len())
                .sum::<usize>(),
        );
        s.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n");
        s.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n");
        let _ = writeln!(
            s,
            "<title>{}</title>",
            escape(&crate::plot::plain(&self.title))
        );
        let _ = writeln!(s, "<style>{CSS}</style>\n</head>\n<body>\n<main>");
        let _ = writeln!(s, "<header>\n<h1>{}</h1>", rich_text(&self.title));
        if let Some(sub) = &self.subtitle {
            let _ = writeln!(s, "<p class=\"subtitle\">{}</p>", rich_text(sub));
        }
        s.push_str("</header>\n");
        s.push_str(self.lead.as_str());
        if !self.sections.is_empty() {
            s.push_str("\n<nav><h2>Contents</h2>\n<ol>\n");
            for (i, (t, _)) in self.sections.iter().enumerate() {
                let _ = writeln!(
                    s,
                    "<li><a href=\"#section-{}\">{}</a></li>",
                    i + 1,
                    rich_text(t)
                );
            }
            s.push_str("</ol>\n</nav>\n");
        }
        for (i, (t, h)) in self.sections.iter().enumerate() {
            let _ = writeln!(
                s,
                "<section id=\"section-{}\">\n<h2>{}</h2>\n{}\n</section>",
                i + 1,
                rich_text(t),
                h.as_str()
            );
        }
        if let Some(f) = &self.footer {
            let _ = writeln!(s, "<footer>{}</footer>", rich_text(f));
        }
        s.push_str("</main>\n</body>\n</html>\n");
        s
    }
}

/// Our own plain style (see the [module docs](super)). No `<` or `&`, so the
/// style sheet is also valid XML text.
const CSS: &str = "
:root { color-scheme: light; }
body { margin: 0; background: #ffffff; color: #1f2328;
  font-family: system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif;
  font-size: 15px; line-height: 1.45; }
main { max-width: 980px; margin: 0 auto; padding: 24px 28px 48px; }
header h1 { font-size: 26px; margin: 8px 0 2px; font-weight: 600; }
.subtitle { margin: 0 0 16px; color: #59636e; font-size: 14px; }
h2 { font-size: 19px; font-weight: 600; margin: 32px 0 10px; padding-bottom: 4px;
  border-bottom: 1px solid #d6dbe0; }
h3 { font-size: 15px; font-weight: 600; margin: 18px 0 6px; }
nav h2 { font-size: 15px; border: none; margin: 18px 0 4px; }
nav ol { margin: 0; padding-left: 22px; columns: 2; }
nav a { color: #1f4f82; text-decoration: none; }
nav a:hover { text-decoration: underline; }
.table-wrap { overflow-x: auto; margin: 6px 0 12px; }
table { border-collapse: collapse; font-size: 14px; }
th, td { padding: 4px 12px 4px 0; text-align: left; vertical-align: top;
  border-bottom: 1px solid #e3e7eb; }
thead th { border-bottom: 1.5px solid #9aa4ae; font-weight: 600; }
table.kv th { font-weight: normal; color: #3d454d; padding-right: 28px; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tbody tr:nth-child(even) td, tbody tr:nth-child(even) th { background: #f7f8fa; }
table.kv td { text-align: left; }
figure { margin: 18px 0 26px; break-inside: avoid; }
figure svg { display: block; width: 100%; height: auto;
  border: 1px solid #e3e7eb; }
figcaption { font-size: 13px; color: #3d454d; margin-top: 4px; }
.note { font-size: 13px; color: #59636e; }
.caution { margin: 14px 0 10px; padding: 10px 16px 10px 14px; background: #fff6e5;
  border-left: 6px solid #a85b00; border-radius: 2px; }
.caution-title { margin: 0 0 4px; font-weight: 700; color: #6b3900; }
.caution ul { margin: 0; padding-left: 20px; }
.key-results { margin: 10px 0 14px; padding: 8px 16px 6px 14px; background: #f1f6fb;
  border-left: 6px solid #1f4f82; border-radius: 2px; }
.key-results h2 { font-size: 16px; border: none; margin: 0 0 2px; padding: 0; }
.key-results table.kv { background: transparent; }
.key-results tbody tr:nth-child(even) td, .key-results tbody tr:nth-child(even) th { background: transparent; }
.warnings li { color: #7a2e0e; }
footer { margin-top: 40px; padding-top: 8px; border-top: 1px solid #d6dbe0;
  font-size: 12px; color: #59636e; }
@media print { nav { display: none; } main { max-width: none; } }
";
