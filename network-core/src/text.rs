//! Positions in input text, for error messages that name a line.

/// The 1-based line holding byte `offset` of `text` (offsets past the end
/// count as the end).
pub fn line_at(text: &str, offset: usize) -> usize {
    1 + text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
}

/// The key assigned on 1-based `line` of `text` (`name = value` or
/// `"name" = value`, the table prefix not included), if the line holds one.
pub fn key_on_line(text: &str, line: usize) -> Option<String> {
    let l = text.lines().nth(line.checked_sub(1)?)?;
    let (k, _) = l.split_once('=')?;
    let k = k.trim().trim_matches('"');
    let plain = !k.is_empty()
        && k.chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '_' | '-' | '.' | '[' | ']'));
    plain.then(|| k.to_string())
}

/// A parser message in the words of the file, not of the program: the
/// names of the program's types (`struct WeibullRange`, `f64`, …) become
/// the form the file must take. `forms` maps a type name to that form
/// (`("WeibullRange", "a table {min_m, max_m, shape, scale}")`); any other
/// `struct X` becomes "a table".
pub fn plain_message(message: &str, forms: &[(&str, &str)]) -> String {
    let mut m = message.trim().to_string();
    // "invalid length 3, expected struct X with 4 elements": the positional
    // form of a table; name the table form only.
    if let Some(rest) = m.strip_prefix("invalid length ")
        && let Some((_, tail)) = rest.split_once(", expected ")
    {
        m = format!("wrong number of values, expected {tail}");
    }
    for (name, form) in forms {
        m = m.replace(&format!("struct {name}"), form);
        m = m.replace(&format!("enum {name}"), form);
    }
    // Generic leftovers: `struct Xyz` → "a table".
    while let Some(i) = m.find("struct ") {
        let end = m[i + 7..]
            .find(|c: char| !c.is_ascii_alphanumeric() && c != '_')
            .map_or(m.len(), |e| i + 7 + e);
        m.replace_range(i..end, "a table");
    }
    if let Some(i) = m.find(" with ")
        && m[i..].contains(" elements")
    {
        let end = m[i..]
            .find(" elements")
            .map(|e| i + e + 9)
            .unwrap_or(m.len());
        m.replace_range(i..end, "");
    }
    for (rust, plain) in [
        ("expected f64", "expected a number"),
        ("expected f32", "expected a number"),
        ("expected usize", "expected a whole number"),
        ("expected u64", "expected a whole number"),
        ("expected u32", "expected a whole number"),
        ("expected i64", "expected a whole number"),
        ("expected a sequence", "expected a list [..]"),
        ("expected a map", "expected a table"),
    ] {
        m = m.replace(rust, plain);
    }
    m
}

#[cfg(test)]
mod tests {
    use super::{key_on_line, line_at, plain_message};

    #[test]
    fn rust_type_names_become_the_form_of_the_file() {
        let m = plain_message(
            "invalid length 3, expected struct WeibullRange with 4 elements",
            &[("WeibullRange", "a table {min_m, max_m, shape, scale}")],
        );
        assert_eq!(
            m,
            "wrong number of values, expected a table {min_m, max_m, shape, scale}"
        );
        let m = plain_message("invalid type: string \"a\", expected struct RawFluids", &[]);
        assert_eq!(m, "invalid type: string \"a\", expected a table");
        let m = plain_message("invalid type: string \"a\", expected f64", &[]);
        assert!(!m.contains("f64"), "{m}");
        assert_eq!(
            key_on_line("a = 1\n pore_radius = [1]\n", 2).as_deref(),
            Some("pore_radius")
        );
        assert_eq!(key_on_line("[fluids]\n", 1), None);
    }

    #[test]
    fn counts_newlines_before_the_offset() {
        let t = "a = 1\nb = 2\n\nc = 3";
        assert_eq!(line_at(t, 0), 1);
        assert_eq!(line_at(t, 6), 2);
        assert_eq!(line_at(t, 13), 4);
        assert_eq!(line_at(t, 10_000), 4);
    }
}
