//! One self-contained HTML report of a study run, and the small page
//! builder it is made with.
//!
//! ## The report ([`run_report`])
//! A single file: inline CSS, every figure as inline SVG, no scripts, no
//! web fonts, no images or style sheets fetched from anywhere (the only
//! links are `#section` anchors inside the page). It opens with a caution
//! box and holds, in order: inputs, network, process results, end points
//! and fitted models, wettability indices, trapped ganglia, figures and
//! warnings. Missing values (`None`, NaN) read "n/a".
//!
//! ## The builder ([`Page`], [`Html`])
//! [`Html`] is markup that is safe to insert: its constructors escape every
//! piece of text (`& < > " '`, and control characters that XML forbids), so
//! names such as `a<b & c` print as written. [`Page`] collects titled
//! sections and writes the document with a table of contents; [`table`],
//! [`key_values`], [`figure`], [`paragraph`], [`list`] and [`caution`] make
//! the usual blocks. A sweep report can reuse all of it, with figures whose
//! series carry uncertainty bands ([`crate::plot::Series::with_band`]).
//!
//! The markup is also well-formed XML (void elements are self-closed, no
//! named entities other than XML's five), so an XML parser can check it.
//!
//! ## Style
//! Our own plain style: system sans-serif text on white, a narrow column,
//! thin rules under headings, tables with light row separators and
//! right-aligned numbers, the caution box on a pale amber ground with a
//! dark amber rule on the left.
//!
//! ## Files
//! - `page`: [`Html`], [`escape`] and [`Page`] with its style sheet.
//! - `blocks`: tables, name–value lists, paragraphs, lists, figures.
//! - `caution`: the caution box.
//! - `numbers`: how numbers are printed ([`number`], [`input_number`]).
//! - `run_report`: [`run_report`] and its sections.

pub use self::blocks::{figure, key_values, list, note, paragraph, subheading, table};
pub use self::caution::{CAUTION_TEXT, caution};
pub use self::numbers::{input_number, number};
pub use self::page::{Html, Page, escape, rich_text};
pub use self::run_report::run_report;

mod blocks;
mod caution;
mod numbers;
mod page;
mod run_report;

#[cfg(test)]
mod tests;
