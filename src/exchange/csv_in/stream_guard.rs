//! Stream guards: readers that stop a file whose line is too long or whose quote is left open,
//! before memory grows with it. They must not know columns or rows.

use std::io::Read;

/// The longest line read; a longer one is not a CSV file of sumpbook's (and would otherwise
/// make memory grow with the file).
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Raised by [`LineGuard`] when a line is longer than [`MAX_LINE_BYTES`].
#[derive(Debug)]
pub(super) struct LineTooLong {
    pub(super) line: u64,
}

impl std::fmt::Display for LineTooLong {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "line {} is longer than {MAX_LINE_BYTES} bytes (1 MiB); is this a CSV file of checks, samples, events or units?",
            self.line
        )
    }
}

impl std::error::Error for LineTooLong {}

/// Passes bytes through and fails on a line longer than [`MAX_LINE_BYTES`].
pub(super) struct LineGuard<R> {
    pub(super) inner: R,
    /// Line breaks seen so far.
    pub(super) breaks: u64,
    /// Bytes since the last line break.
    pub(super) run: usize,
}

impl<R: Read> Read for LineGuard<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        let chunk = &buf[..n];
        match chunk.iter().rposition(|&b| b == b'\n') {
            Some(last) => {
                self.breaks += chunk.iter().filter(|&&b| b == b'\n').count() as u64;
                self.run = n - last - 1;
            }
            None => self.run += n,
        }
        if self.run > MAX_LINE_BYTES {
            return Err(std::io::Error::new(
                std::io::ErrorKind::InvalidData,
                LineTooLong {
                    line: self.breaks + 1,
                },
            ));
        }
        Ok(n)
    }
}

/// The line of a [`LineTooLong`] inside an I/O error, if that is what it is.
pub(super) fn too_long(e: &std::io::Error) -> Option<&LineTooLong> {
    e.get_ref()
        .and_then(|inner| inner.downcast_ref::<LineTooLong>())
}

/// The longest record read, in bytes, however many lines its quoted cells span; beyond it a
/// quote is taken to be left open (memory would otherwise grow with the rest of the file).
pub const MAX_RECORD_BYTES: usize = 1 << 20;

/// Where a quoted cell that never closes was opened.
#[derive(Debug)]
pub(super) struct QuoteLeftOpen {
    pub(super) line: u64,
    pub(super) field: usize,
    /// Whether the file ended inside it (otherwise it ran on beyond [`MAX_RECORD_BYTES`]).
    pub(super) at_end: bool,
}

impl std::fmt::Display for QuoteLeftOpen {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if self.at_end {
            f.write_str("a quote (\") opened in this cell is never closed: the file ends inside it; close the quote")
        } else {
            write!(
                f,
                "a quote (\") opened in this cell runs on for more than {MAX_RECORD_BYTES} bytes (1 MiB) without \
                 closing; close the quote"
            )
        }
    }
}

impl std::error::Error for QuoteLeftOpen {}

/// RFC 4180 quoting, as the `csv` reader applies it: a cell is quoted when it starts with `"`;
/// inside, `""` is a quote and `"` then anything ends the quoted part.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Quoting {
    /// At the start of a cell.
    CellStart,
    Unquoted,
    Quoted,
    /// A `"` inside a quoted cell: either the first of `""` or its end.
    QuoteInQuoted,
}

/// Follows the quoting of the stream after the header line and fails when a quoted cell never
/// closes (the `csv` reader would silently take the rest of the file into it) or runs on past
/// [`MAX_RECORD_BYTES`].
pub(super) struct QuoteGuard<R> {
    inner: R,
    delimiter: u8,
    state: Quoting,
    line: u64,
    field: usize,
    record_bytes: usize,
    open: (u64, usize),
    /// A quoted cell ran on past [`MAX_RECORD_BYTES`].
    overrun: bool,
}

impl<R> QuoteGuard<R> {
    /// Starts after `first_line` (the header line, which may itself open a quote), which is
    /// line 1.
    pub(super) fn new(inner: R, delimiter: u8, first_line: &[u8]) -> Self {
        let mut g = QuoteGuard {
            inner,
            delimiter,
            state: Quoting::CellStart,
            line: 1,
            field: 0,
            record_bytes: 0,
            open: (1, 0),
            overrun: false,
        };
        g.advance(first_line);
        g
    }

    /// Follows `bytes`: quoted runs and plain runs are skipped to their next `"` at once, and
    /// only quotes are looked at one by one (a per-byte walk costs as much as the CSV parse).
    fn advance(&mut self, mut bytes: &[u8]) {
        while !bytes.is_empty() {
            let next_quote = bytes.iter().position(|&b| b == b'"');
            if self.state == Quoting::Quoted {
                // Everything up to the next quote belongs to the cell, line breaks too.
                let run = next_quote.map_or(bytes.len(), |i| i + 1);
                self.line += count(&bytes[..run], b'\n');
                self.record_bytes += run;
                if self.record_bytes > MAX_RECORD_BYTES {
                    self.overrun = true;
                    return;
                }
                if next_quote.is_some() {
                    self.state = Quoting::QuoteInQuoted;
                }
                bytes = &bytes[run..];
                continue;
            }
            let run = next_quote.unwrap_or(bytes.len());
            if run > 0 {
                self.plain(&bytes[..run]);
                bytes = &bytes[run..];
            }
            if !bytes.is_empty() {
                // A quote outside a quoted run.
                self.record_bytes += 1;
                self.state = match self.state {
                    Quoting::CellStart => {
                        self.open = (self.line, self.field);
                        Quoting::Quoted
                    }
                    // `""` inside a quoted cell: a quote, and the cell goes on.
                    Quoting::QuoteInQuoted => Quoting::Quoted,
                    // Inside an unquoted cell a quote is just a character.
                    other => other,
                };
                bytes = &bytes[1..];
            }
        }
    }

    /// A run without quotes, outside a quoted run (or just after one ended).
    pub(super) fn plain(&mut self, run: &[u8]) {
        self.line += count(run, b'\n');
        match run.iter().rposition(|&b| b == b'\n' || b == b'\r') {
            Some(end) => {
                self.field = count(&run[end + 1..], self.delimiter) as usize;
                self.record_bytes = run.len() - end - 1;
            }
            None => {
                self.field += count(run, self.delimiter) as usize;
                self.record_bytes += run.len();
            }
        }
        let last = run[run.len() - 1];
        self.state = if last == self.delimiter || last == b'\n' || last == b'\r' {
            Quoting::CellStart
        } else {
            Quoting::Unquoted
        };
    }

    fn left_open(&self, at_end: bool) -> std::io::Error {
        std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            QuoteLeftOpen {
                line: self.open.0,
                field: self.open.1,
                at_end,
            },
        )
    }
}

impl<R: Read> Read for QuoteGuard<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        if n == 0 {
            if self.state == Quoting::Quoted {
                return Err(self.left_open(true));
            }
            return Ok(0);
        }
        self.advance(&buf[..n]);
        if self.overrun {
            return Err(self.left_open(false));
        }
        Ok(n)
    }
}

/// At most `max` characters of `s`, marked when cut (a header cell can be a whole file).
pub(super) fn clip(s: &str, max: usize) -> String {
    match s.char_indices().nth(max) {
        Some((i, _)) => format!("{}…", &s[..i]),
        None => s.to_string(),
    }
}

/// How many times `b` occurs in `bytes`.
fn count(bytes: &[u8], b: u8) -> u64 {
    bytes.iter().filter(|&&x| x == b).count() as u64
}

/// The place of a [`QuoteLeftOpen`] inside an I/O error, if that is what it is.
pub(super) fn quote_left_open(e: &std::io::Error) -> Option<&QuoteLeftOpen> {
    e.get_ref()
        .and_then(|inner| inner.downcast_ref::<QuoteLeftOpen>())
}
