//! Positions in a text for error messages: a byte offset as a 1-based line
//! and column (columns count characters, not bytes).

/// Line and column (1-based) of byte `offset` of `text`; an offset inside a
/// multi-byte character or past the end is moved back to a boundary.
pub(crate) fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let mut end = offset.min(text.len());
    while !text.is_char_boundary(end) {
        end -= 1;
    }
    let before = &text[..end];
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    (line, before[line_start..].chars().count() + 1)
}

#[cfg(test)]
mod tests {
    use super::line_column;

    #[test]
    fn lines_and_character_columns() {
        let text = "a = 1\nbé = 2\n";
        assert_eq!(line_column(text, 0), (1, 1));
        assert_eq!(line_column(text, 6), (2, 1));
        // 'é' is two bytes: the '=' after "bé " is the 4th character.
        assert_eq!(line_column(text, text.find("= 2").unwrap()), (2, 4));
        assert_eq!(line_column(text, 1000), (3, 1));
    }
}
