use super::*;

#[test]
fn escape_covers_markup_quotes_and_control_characters() {
    assert_eq!(
        escape("a<b & \"c\" 'd'>"),
        "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;"
    );
    // Tab and line breaks stay; other C0 controls (invalid in XML) go.
    assert_eq!(escape("x\ty\nz\u{1}\u{7f}"), "x\ty\nz\u{FFFD}\u{FFFD}");
}

#[test]
fn rich_text_draws_subscripts_and_escapes_everything_else() {
    assert_eq!(
        rich_text("S_{nr} < 1 & k_{r,<o>}"),
        "S<sub>nr</sub> &lt; 1 &amp; k<sub>r,&lt;o&gt;</sub>"
    );
    // An unclosed or lone underscore is text.
    assert_eq!(rich_text("a_b c_{d"), "a_b c_{d");
}

#[test]
fn page_lists_sections_with_matching_anchors_and_escapes_titles() {
    let mut p = Page::new("Run <1>");
    p.subtitle("a & b")
        .lead(caution())
        .section("First & only", paragraph("x < y"))
        .section(
            "Second",
            table(&["k", "v"], &[vec!["a".into(), "1.5".into()]]),
        )
        .footer("end");
    let html = p.render();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert!(html.contains("<title>Run &lt;1&gt;</title>"));
    assert!(html.contains("<a href=\"#section-1\">First &amp; only</a>"));
    assert!(html.contains("<section id=\"section-2\">"));
    assert!(html.contains("<p>x &lt; y</p>"));
    // Numbers are right-aligned, text is not.
    assert!(html.contains("<td>a</td><td class=\"num\">1.5</td>"));
    assert!(html.contains("class=\"caution\""));
    assert_eq!(html.matches("<main>").count(), 1);
    assert!(html.trim_end().ends_with("</html>"));
}

#[test]
fn figure_inlines_svg_without_declaration_or_namespace_address() {
    let svg = "<?xml version=\"1.0\"?>\n<svg width=\"10\" height=\"10\" viewBox=\"0 0 10 10\" xmlns=\"http://www.w3.org/2000/svg\"><rect/></svg>";
    let h = figure(svg, "A & B");
    let s = h.as_str();
    assert!(!s.contains("<?xml") && !s.contains("http"));
    assert!(s.contains("<svg role=\"img\" aria-label=\"A &amp; B\" width=\"10\""));
    assert!(s.contains("<figcaption>A &amp; B</figcaption>"));
}

#[test]
fn element_names_are_restricted_to_safe_characters() {
    let h = Html::element("p onclick=\"x\"", Some("a\"b"), Html::text("<t>"));
    assert_eq!(h.as_str(), "<ponclickx class=\"ab\">&lt;t&gt;</ponclickx>");
}

#[test]
fn numbers_print_with_significant_digits_and_inputs_as_written() {
    assert_eq!(number(0.006113, 4), "0.006113");
    assert_eq!(number(115.23, 4), "115.2");
    assert_eq!(number(-100.0, 4), "-100.0");
    assert_eq!(number(f64::INFINITY, 4), "∞");
    assert_eq!(input_number(0.03), "0.03");
    assert_eq!(input_number(1e-9), "1e-9");
    assert_eq!(input_number(f64::NAN), "n/a");
}
