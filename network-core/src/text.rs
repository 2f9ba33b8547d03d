//! Positions in input text, for error messages that name a line.

/// The 1-based line holding byte `offset` of `text` (offsets past the end
/// count as the end).
pub fn line_at(text: &str, offset: usize) -> usize {
    1 + text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
}

#[cfg(test)]
mod tests {
    use super::line_at;

    #[test]
    fn counts_newlines_before_the_offset() {
        let t = "a = 1\nb = 2\n\nc = 3";
        assert_eq!(line_at(t, 0), 1);
        assert_eq!(line_at(t, 6), 2);
        assert_eq!(line_at(t, 13), 4);
        assert_eq!(line_at(t, 10_000), 4);
    }
}
