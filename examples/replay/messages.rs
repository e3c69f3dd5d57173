//! Bounded messages: what the tool echoes of the input is cut short and escaped, numbers
//! are printed short, and the list of bad rows keeps its first entries and counts the
//! rest. Whatever the log holds, a message stays within a few hundred bytes and the list
//! within [`Messages::LIMIT`] of them.

/// Characters of a cell echoed in a message; longer cells are cut with `...` and their
/// length in bytes.
pub(crate) const ECHO_CHARS: usize = 40;

/// A cell (or any text from the input) as a message shows it: its [`start`], and the
/// length in bytes of a text that was cut.
pub(crate) fn echo(text: &str) -> String {
    let shown = start(text);
    if text.chars().nth(ECHO_CHARS).is_some() {
        format!("{shown} ({} bytes)", text.len())
    } else {
        shown
    }
}

/// The first [`ECHO_CHARS`] characters of `text` in quotes, with `...` if there are
/// more; control and other non-printable characters escaped as Rust escapes them in
/// debug text (`\t`, `\0`, `\u{1b}`), a backslash doubled so that an escape cannot be
/// confused with the text. Bytes that are not UTF-8 were read as U+FFFD and stay so.
pub(crate) fn start(text: &str) -> String {
    let mut shown = String::from("'");
    let mut chars = text.chars();
    for c in chars.by_ref().take(ECHO_CHARS) {
        if c == '"' || c == '\'' {
            shown.push(c);
        } else {
            shown.extend(c.escape_debug());
        }
    }
    if chars.next().is_some() {
        shown.push_str("...");
    }
    shown.push('\'');
    shown
}

/// A number as a message shows it: the shortest text that reads back to it, or its
/// exponent form when that is long (a 301-digit time prints as `1e300`).
pub(crate) fn number<T: std::fmt::Display + std::fmt::LowerExp>(v: T) -> String {
    let plain = v.to_string();
    if plain.len() <= 24 {
        plain
    } else {
        format!("{v:e}")
    }
}

/// A list of messages (about bad rows, or about dropped channels): the first
/// [`Messages::LIMIT`] are kept, the rest only counted.
#[derive(Debug, Default, Clone)]
pub(crate) struct Messages {
    kept: Vec<String>,
    total: usize,
}

impl Messages {
    /// Messages kept; a run with more bad rows lists these and the count of the rest.
    pub(crate) const LIMIT: usize = 100;

    /// Count a message; keep it (written by `message`) if there is room.
    pub(crate) fn push_with(&mut self, message: impl FnOnce() -> String) {
        self.total += 1;
        if self.kept.len() < Self::LIMIT {
            self.kept.push(message());
        }
    }

    /// The next message would be kept.
    pub(crate) fn wants_more(&self) -> bool {
        self.kept.len() < Self::LIMIT
    }

    /// The kept messages, in the order of the file.
    pub(crate) fn kept(&self) -> &[String] {
        &self.kept
    }

    /// Messages counted but not kept.
    pub(crate) fn left_off(&self) -> usize {
        self.total - self.kept.len()
    }

    /// The first `n` kept messages as lines starting with `indent`, then a line with the
    /// count of the others, if any, called `what` (e.g. "bad rows") and followed by
    /// `rest_note` (e.g. " (listed in x.txt)").
    pub(crate) fn lines(&self, n: usize, indent: &str, what: &str, rest_note: &str) -> String {
        let mut text = String::new();
        for m in self.kept.iter().take(n) {
            text.push_str(&format!("{indent}{m}\n"));
        }
        let more = self.total - self.kept.len().min(n);
        if more > 0 {
            text.push_str(&format!("{indent}... {more} more {what}{rest_note}\n"));
        }
        text
    }

    /// Move the kept messages out, with the count of those left off.
    #[allow(dead_code)] // for the whole-run helper of the tests
    pub(crate) fn into_parts(self) -> (Vec<String>, usize) {
        let left_off = self.left_off();
        (self.kept, left_off)
    }
}
