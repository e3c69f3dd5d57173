//! The input read line by line, with the line's number, in bounded memory.
//!
//! Lines and fields are split here rather than by a CSV crate: the contract is one row
//! per line with messages that name the line, and a general CSV reader counts lines its
//! own way around comments and CRLF endings, and lets an unclosed quote run on over the
//! rows after it (both seen with the `csv` crate).

use std::borrow::Cow;
use std::io::{self, BufRead};

/// Longest line kept, bytes. A longer line is no row of this tool's logs (a row of all
/// nine columns at full precision is under 300 bytes): it is rejected whole, and only
/// its first bytes are kept for the message, so that one runaway line (a file without
/// line ends, a binary blob) cannot take the memory.
pub(crate) const MAX_LINE_BYTES: usize = 1 << 20;

/// Bytes of a too-long line kept for its message.
const TOO_LONG_KEPT: usize = 256;

/// One line of the input.
pub(crate) struct Line<'a> {
    /// Line number from 1; every line counts, comments and blank ones included.
    pub(crate) number: u64,
    /// The text (bytes that are not UTF-8 read as U+FFFD); of a line longer than
    /// [`MAX_LINE_BYTES`], its first bytes only.
    pub(crate) text: Cow<'a, str>,
    /// Length of the whole line, bytes, without its end.
    pub(crate) bytes: u64,
}

impl Line<'_> {
    /// Longer than [`MAX_LINE_BYTES`]: `text` holds only its start.
    pub(crate) fn too_long(&self) -> bool {
        self.bytes > MAX_LINE_BYTES as u64
    }
}

/// The lines of a byte stream: a line ends at `\n`, `\r\n` or a lone `\r`; a UTF-8 byte
/// order mark at the start is dropped.
pub(crate) struct Lines<R> {
    input: R,
    buffer: Vec<u8>,
    number: u64,
    /// The last line ended with `\r`: a `\n` right after it belongs to that end.
    after_cr: bool,
    /// Bytes consumed so far (for a progress indicator).
    position: u64,
}

impl<R: BufRead> Lines<R> {
    pub(crate) fn new(input: R) -> Self {
        Self {
            input,
            buffer: Vec::new(),
            number: 0,
            after_cr: false,
            position: 0,
        }
    }

    /// Bytes of the input read so far.
    pub(crate) fn position(&self) -> u64 {
        self.position
    }

    /// The next line, `None` at the end of the input.
    pub(crate) fn next_line(&mut self) -> io::Result<Option<Line<'_>>> {
        let Some(bytes) = self.fill_line()? else {
            return Ok(None);
        };
        self.number += 1;
        if self.number == 1 && self.buffer.starts_with(b"\xef\xbb\xbf") {
            self.buffer.drain(..3);
        }
        let text = match std::str::from_utf8(&self.buffer) {
            Ok(t) => Cow::Borrowed(t),
            Err(_) => String::from_utf8_lossy(&self.buffer),
        };
        Ok(Some(Line {
            number: self.number,
            text,
            bytes,
        }))
    }

    /// Read the next line into `buffer` (up to the limit); its full length, or `None`
    /// at the end of the input.
    fn fill_line(&mut self) -> io::Result<Option<u64>> {
        self.buffer.clear();
        let mut length = 0u64;
        let mut started = false;
        loop {
            let available = self.input.fill_buf()?;
            if available.is_empty() {
                return Ok(started.then_some(length));
            }
            if std::mem::take(&mut self.after_cr) && available.first() == Some(&b'\n') {
                self.consume(1);
                continue;
            }
            started = true;
            let end = available.iter().position(|&b| b == b'\n' || b == b'\r');
            let piece = available
                .get(..end.unwrap_or(available.len()))
                .unwrap_or(&[]);
            let room = MAX_LINE_BYTES.saturating_sub(self.buffer.len());
            self.buffer
                .extend_from_slice(piece.get(..piece.len().min(room)).unwrap_or(&[]));
            length += piece.len() as u64;
            let used = piece.len();
            match end {
                Some(i) => {
                    self.after_cr = available.get(i) == Some(&b'\r');
                    self.consume(used + 1);
                    break;
                }
                None => self.consume(used),
            }
        }
        if length > MAX_LINE_BYTES as u64 {
            self.buffer.truncate(TOO_LONG_KEPT);
        }
        Ok(Some(length))
    }

    fn consume(&mut self, n: usize) {
        self.input.consume(n);
        self.position += n as u64;
    }
}

/// `text` without blanks (Unicode white space) at either end; a field that starts and
/// ends with a visible ASCII character, as nearly every one does, is returned as it is
/// without a look at its characters.
pub(crate) fn trim(text: &str) -> &str {
    match (text.as_bytes().first(), text.as_bytes().last()) {
        (Some(a), Some(b)) if a.is_ascii_graphic() && b.is_ascii_graphic() => text,
        _ => text.trim(),
    }
}

/// A line that holds no row: blank, or a comment (`#` after any blanks).
pub(crate) fn is_comment_or_blank(line: &str) -> bool {
    let t = line.trim();
    t.is_empty() || t.starts_with('#')
}

/// The fields of one line, trimmed, without an allocation per line: ranges into the
/// line, or into an unquoted copy when the line has quotes.
#[derive(Debug, Default)]
pub(crate) struct Fields {
    ranges: Vec<(usize, usize)>,
    unquoted: Option<String>,
}

impl Fields {
    /// Split `line` (see [`split_fields`] for the quoting rules).
    pub(crate) fn split(&mut self, line: &str) -> Result<(), String> {
        self.ranges.clear();
        self.unquoted = None;
        if line.contains('"') {
            let mut joined = String::new();
            for field in split_fields(line)? {
                self.ranges.push((joined.len(), joined.len() + field.len()));
                joined.push_str(&field);
            }
            self.unquoted = Some(joined);
            return Ok(());
        }
        let mut start = 0;
        for piece in line.split(',') {
            let trimmed = trim(piece);
            let offset = trimmed.as_ptr() as usize - piece.as_ptr() as usize;
            self.ranges
                .push((start + offset, start + offset + trimmed.len()));
            start += piece.len() + 1;
        }
        Ok(())
    }

    /// Number of fields.
    pub(crate) fn len(&self) -> usize {
        self.ranges.len()
    }

    /// Field `i` of `line` (the line given to [`Fields::split`]).
    pub(crate) fn get<'a>(&'a self, line: &'a str, i: usize) -> Option<&'a str> {
        let (a, b) = *self.ranges.get(i)?;
        self.unquoted.as_deref().unwrap_or(line).get(a..b)
    }
}

/// Split one line into its fields, trimmed. Quoting as in RFC 4180 (`"a, b"`, `""` for a
/// quote inside), but within the line: a quoted field that is not closed on its line is
/// an error, so that it cannot swallow the rows after it.
pub(crate) fn split_fields(line: &str) -> Result<Vec<String>, String> {
    let mut fields = Vec::new();
    let mut chars = line.chars().peekable();
    loop {
        let mut field = String::new();
        while chars.peek().is_some_and(|c| *c == ' ' || *c == '\t') {
            chars.next();
        }
        if chars.peek() == Some(&'"') {
            chars.next();
            let mut closed = false;
            while let Some(c) = chars.next() {
                if c != '"' {
                    field.push(c);
                } else if chars.peek() == Some(&'"') {
                    chars.next();
                    field.push('"');
                } else {
                    closed = true;
                    break;
                }
            }
            if !closed {
                return Err(format!(
                    "field {} opens a quote that is not closed on this line",
                    fields.len() + 1
                ));
            }
        }
        let mut more = false;
        for c in chars.by_ref() {
            if c == ',' {
                more = true;
                break;
            }
            field.push(c);
        }
        fields.push(field.trim().to_string());
        if !more {
            return Ok(fields);
        }
    }
}
