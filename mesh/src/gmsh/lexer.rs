//! Whitespace-separated tokens of an MSH file, with their line numbers.

#[derive(Clone, Copy, Debug)]
pub(super) struct Token<'a> {
    pub(super) text: &'a str,
    pub(super) line: usize,
    pub(super) quoted: bool,
}

/// Whitespace-separated tokens with their line numbers; a double-quoted string (as in
/// `$PhysicalNames`) is one token.
pub(super) struct Lexer<'a> {
    pub(super) lines: std::iter::Enumerate<std::str::Lines<'a>>,
    pub(super) rest: &'a str,
    pub(super) line: usize,
}

impl<'a> Lexer<'a> {
    pub(super) fn new(text: &'a str) -> Self {
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        Lexer {
            lines: text.lines().enumerate(),
            rest: "",
            line: 0,
        }
    }

    pub(super) fn next_token(&mut self) -> Option<Token<'a>> {
        loop {
            let trimmed = self.rest.trim_start();
            if trimmed.is_empty() {
                let (i, l) = self.lines.next()?;
                self.line = i + 1;
                self.rest = l;
                continue;
            }
            if let Some(after) = trimmed.strip_prefix('"') {
                // An unclosed quote runs to the end of the line.
                let end = after.find('"').unwrap_or(after.len());
                self.rest = after.get(end + 1..).unwrap_or("");
                return Some(Token {
                    text: &after[..end],
                    line: self.line,
                    quoted: true,
                });
            }
            let end = trimmed.find(char::is_whitespace).unwrap_or(trimmed.len());
            self.rest = &trimmed[end..];
            return Some(Token {
                text: &trimmed[..end],
                line: self.line,
                quoted: false,
            });
        }
    }

    pub(super) fn skip_rest_of_line(&mut self) {
        self.rest = "";
    }
}
