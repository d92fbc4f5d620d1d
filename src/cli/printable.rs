//! Text for a terminal: control characters in what users typed (a tag, a note, a cell quoted
//! in a refusal) are shown escaped, so that a stored escape sequence cannot move the cursor,
//! recolour or retitle the terminal of whoever lists the shop. Every text output of the
//! command line (standard output and the message on standard error) goes through `printable`;
//! CSV export to standard output is data and is left as it is. No rules here.

use std::borrow::Cow;
use std::io::Write;

/// Whether `c` is shown escaped: C0 controls except line feed and tab, DEL, and C1 controls.
fn is_escaped(c: char) -> bool {
    (c.is_control() && c != '\n' && c != '\t') || ('\u{80}'..='\u{9f}').contains(&c)
}

/// Whether `s` has a character [`is_escaped`] holds for, by its UTF-8 bytes (every line of
/// output passes here): a C0 control or DEL is one byte, a C1 control is 0xC2 then 0x80 to
/// 0x9F.
fn has_escaped(s: &str) -> bool {
    let b = s.as_bytes();
    // First one pass over every byte without stopping early, which the compiler can turn into
    // wide compares: no byte that could begin an escaped character, the usual case.
    let may = b.iter().fold(false, |may, &c| {
        may | ((c < 0x20) & (c != b'\n') & (c != b'\t')) | (c == 0x7f) | (c == 0xc2)
    });
    may && b.iter().enumerate().any(|(i, &c)| {
        (c < 0x20 && c != b'\n' && c != b'\t')
            || c == 0x7f
            || (c == 0xc2 && b.get(i + 1).is_some_and(|n| (0x80..=0x9f).contains(n)))
    })
}

/// `s` with each control character written as `\u{1b}` (line feed and tab kept).
pub fn printable(s: &str) -> Cow<'_, str> {
    if !has_escaped(s) {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        if is_escaped(c) {
            out.push_str(&format!("\\u{{{:x}}}", c as u32));
        } else {
            out.push(c);
        }
    }
    Cow::Owned(out)
}

/// A writer that passes text through `printable`; bytes that are not UTF-8 are shown as `\xNN`.
pub struct Escaping<'w>(pub &'w mut dyn Write);

impl Write for Escaping<'_> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        // Plain ASCII text, most of what is written, passes as it is.
        let plain = buf.iter().fold(true, |plain, &c| {
            plain & (((0x20..0x7f).contains(&c)) | (c == b'\n') | (c == b'\t'))
        });
        if plain {
            self.0.write_all(buf)?;
            return Ok(buf.len());
        }
        let mut rest = buf;
        while !rest.is_empty() {
            match std::str::from_utf8(rest) {
                Ok(s) => {
                    self.0.write_all(printable(s).as_bytes())?;
                    break;
                }
                Err(e) => {
                    let (good, bad) = rest.split_at(e.valid_up_to());
                    // The prefix is valid UTF-8 by the error's own account.
                    let good = std::str::from_utf8(good).unwrap_or_default();
                    self.0.write_all(printable(good).as_bytes())?;
                    let n = e.error_len().unwrap_or(bad.len()).max(1);
                    for b in &bad[..n] {
                        write!(self.0, "\\x{b:02x}")?;
                    }
                    rest = &bad[n..];
                }
            }
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.0.flush()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn controls_are_escaped_and_text_is_kept() {
        assert_eq!(printable("PR-07 °C ≥ 5\tok\n"), "PR-07 °C ≥ 5\tok\n");
        assert_eq!(
            printable("PR\u{1b}[2J\u{7}\r\u{9b}x\u{7f}"),
            "PR\\u{1b}[2J\\u{7}\\u{d}\\u{9b}x\\u{7f}"
        );
        let mut v = Vec::new();
        Escaping(&mut v).write_all(b"PR-07\tok\n").unwrap();
        assert_eq!(v, b"PR-07\tok\n");
        v.clear();
        Escaping(&mut v).write_all(b"a\x1b]0;t\x07 \xff b").unwrap();
        assert_eq!(String::from_utf8(v).unwrap(), "a\\u{1b}]0;t\\u{7} \\xff b");
    }

    #[test]
    fn the_byte_scan_finds_what_the_character_rule_escapes() {
        // Every character up to U+00FF and a few beyond (two-byte forms beside the C1
        // controls' 0xC2 lead byte), alone and between others.
        let chars = (0u32..=0x1ff)
            .chain([0x2014, 0xd7, 0xb0, 0x2265])
            .filter_map(char::from_u32);
        for c in chars {
            for s in [c.to_string(), format!("a{c}b"), format!("\u{a0}{c}")] {
                assert_eq!(has_escaped(&s), s.chars().any(is_escaped), "{s:?}");
            }
        }
    }
}
