//! Recognising canonical JSON text without building a value.
//!
//! [`is_canonical`] is true only when `text` is exactly what
//! [`crate::canon::canonical_json`] writes for the value `text` parses to
//! (serde_json with `float_roundtrip`: parsing it and writing it again
//! gives the same bytes). It recognises a strict subset of that form and
//! says false on anything doubtful (a key with an escape, nesting deeper
//! than [`MAX_DEPTH`], `-0`), so a false only costs the caller the slow
//! way (parse, re-write), never a wrong answer. Verify uses it to hash a
//! stored body's bytes as they are instead of parsing and re-writing them.
//!
//! The form, as serde_json writes it (serde_json 1.0.154, `ser.rs`, the
//! `ESCAPE` table and `CompactFormatter`): no whitespace; object keys in
//! byte order without repeats (its maps are `BTreeMap<String, _>`); in
//! strings only `"`, `\` and bytes below 0x20 escaped, as `\"`, `\\`,
//! `\b`, `\t`, `\n`, `\f`, `\r` or `\u00xx` in lowercase hex; integers as
//! plain digits when they fit 64 bits; other numbers in the shortest form
//! that reads back to the same `f64`.

use std::cmp::Ordering;

/// Deepest nesting recognised; serde_json refuses more than 128 levels.
pub const MAX_DEPTH: usize = 64;

/// True when `text` is the canonical JSON text of the value it parses to.
pub fn is_canonical(text: &str) -> bool {
    let mut scan = Scan {
        bytes: text.as_bytes(),
        pos: 0,
    };
    scan.value(0) && scan.pos == scan.bytes.len()
}

struct Scan<'a> {
    bytes: &'a [u8],
    pos: usize,
}

impl<'a> Scan<'a> {
    fn peek(&self) -> Option<u8> {
        self.bytes.get(self.pos).copied()
    }

    fn eat(&mut self, byte: u8) -> bool {
        let found = self.peek() == Some(byte);
        self.pos += usize::from(found);
        found
    }

    fn value(&mut self, depth: usize) -> bool {
        match self.peek() {
            Some(b'{') if depth < MAX_DEPTH => self.object(depth + 1),
            Some(b'[') if depth < MAX_DEPTH => self.array(depth + 1),
            Some(b'"') => self.string(true).is_some(),
            Some(b't') => self.word(b"true"),
            Some(b'f') => self.word(b"false"),
            Some(b'n') => self.word(b"null"),
            Some(b'-' | b'0'..=b'9') => self.number(),
            _ => false,
        }
    }

    fn word(&mut self, word: &[u8]) -> bool {
        let found = self.bytes[self.pos..].starts_with(word);
        self.pos += if found { word.len() } else { 0 };
        found
    }

    fn object(&mut self, depth: usize) -> bool {
        self.pos += 1;
        if self.eat(b'}') {
            return true;
        }
        let mut last: Option<&'a [u8]> = None;
        loop {
            // Keys with escapes would have to be unescaped to be ordered.
            let Some(key) = self.string(false) else {
                return false;
            };
            if last.is_some_and(|last| last.cmp(key) != Ordering::Less) {
                return false;
            }
            last = Some(key);
            if !self.eat(b':') || !self.value(depth) {
                return false;
            }
            if self.eat(b'}') {
                return true;
            }
            if !self.eat(b',') {
                return false;
            }
        }
    }

    fn array(&mut self, depth: usize) -> bool {
        self.pos += 1;
        if self.eat(b']') {
            return true;
        }
        loop {
            if !self.value(depth) {
                return false;
            }
            if self.eat(b']') {
                return true;
            }
            if !self.eat(b',') {
                return false;
            }
        }
    }

    /// A string in canonical form; its raw contents (between the quotes).
    fn string(&mut self, escapes: bool) -> Option<&'a [u8]> {
        if self.peek() != Some(b'"') {
            return None;
        }
        let start = self.pos + 1;
        let mut at = start;
        loop {
            at += plain_len(&self.bytes[at..]);
            match *self.bytes.get(at)? {
                b'"' => break,
                b'\\' if escapes => at += escape_len(&self.bytes[at..])?,
                _ => return None,
            }
        }
        self.pos = at + 1;
        Some(&self.bytes[start..at])
    }

    fn number(&mut self) -> bool {
        let start = self.pos;
        let len = self.bytes[start..]
            .iter()
            .take_while(|b| matches!(b, b'0'..=b'9' | b'-' | b'+' | b'.' | b'e' | b'E'))
            .count();
        self.pos += len;
        // The input is a `str` and the run is ASCII, so this cannot fail.
        std::str::from_utf8(&self.bytes[start..self.pos]).is_ok_and(canonical_number)
    }
}

/// How many leading bytes of `bytes` JSON writes unchanged inside a
/// string: those before the first `"`, `\` or byte below 0x20. Eight
/// bytes are tested at a time with the word tests "has a zero byte" and
/// "has a byte less than n" (Sean Eron Anderson, "Bit Twiddling Hacks",
/// from memory), which never miss such a byte; the word that has one is
/// then read byte by byte.
pub fn plain_len(bytes: &[u8]) -> usize {
    const ONES: u64 = 0x0101_0101_0101_0101;
    const HIGH: u64 = 0x8080_8080_8080_8080;
    let has_zero = |v: u64| v.wrapping_sub(ONES) & !v & HIGH != 0;
    let has_special = |w: u64| {
        let below_space = w.wrapping_sub(ONES * 0x20) & !w & HIGH != 0;
        below_space
            || has_zero(w ^ (ONES * u64::from(b'"')))
            || has_zero(w ^ (ONES * u64::from(b'\\')))
    };
    let mut at = 0;
    for word in bytes.chunks_exact(8) {
        if has_special(u64::from_le_bytes(word.try_into().unwrap_or([0; 8]))) {
            break;
        }
        at += 8;
    }
    let plain = |b: &&u8| **b >= 0x20 && **b != b'"' && **b != b'\\';
    at + bytes[at..].iter().take_while(plain).count()
}

/// The length of the canonical escape at the start of `rest` (which
/// starts with a backslash), or `None` when serde_json would write that
/// character some other way.
fn escape_len(rest: &[u8]) -> Option<usize> {
    match rest.get(1)? {
        b'"' | b'\\' | b'b' | b't' | b'n' | b'f' | b'r' => Some(2),
        b'u' => {
            let hex = rest.get(2..6)?;
            let digit = |b: u8| match b {
                b'0'..=b'9' => Some(b - b'0'),
                b'a'..=b'f' => Some(b - b'a' + 10),
                _ => None,
            };
            let code = (digit(hex[2])? << 4) | digit(hex[3])?;
            // Only control characters without a short escape use `\u`.
            let long_form = hex[..2] == *b"00"
                && code < 0x20
                && !matches!(code, 0x08 | 0x09 | 0x0a | 0x0c | 0x0d);
            long_form.then_some(6)
        }
        _ => None,
    }
}

/// True when serde_json reads `token` as a number and writes it back as
/// the same text.
fn canonical_number(token: &str) -> bool {
    if !token.contains(['.', 'e', 'E']) {
        // An integer: serde_json keeps it as u64 or i64 when it fits, and
        // writes it in plain digits. `-0` reads as a float (-0.0).
        let digits = token.strip_prefix('-').unwrap_or(token);
        let plain = !digits.is_empty()
            && digits.bytes().all(|b| b.is_ascii_digit())
            && (digits == "0" || !digits.starts_with('0'));
        return plain
            && match token.starts_with('-') {
                true => digits != "0" && token.parse::<i64>().is_ok(),
                false => token.parse::<u64>().is_ok(),
            };
    }
    // A float: both parsers round correctly, so one that reads back to
    // the shortest form serde_json writes is that form.
    match token.parse::<f64>() {
        Ok(value) if value.is_finite() => {
            serde_json::to_string(&value).is_ok_and(|written| written == token)
        }
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use serde_json::Value;

    /// The definition: serde_json reads `text` and writes it back unchanged.
    fn round_trips(text: &str) -> bool {
        serde_json::from_str::<Value>(text)
            .ok()
            .and_then(|v| serde_json::to_string(&v).ok())
            .is_some_and(|written| written == text)
    }

    #[test]
    fn hand_written_cases_are_judged_as_serde_json_would() {
        // (text, recognised): every recognised text must round-trip; the
        // ones not recognised either do not round-trip or are left to the
        // slow path on purpose (noted).
        let cases = [
            (r#"{"a":1,"b":[true,false,null],"c":{"d":"e"}}"#, true),
            (r#"{}"#, true),
            (r#"[]"#, true),
            (r#""plain""#, true),
            (r#"{"s":"q\"b\\n\nt\tc\u001f\u0000"}"#, true),
            ("{\"s\":\"ü € 𝄞 \u{7f}\"}", true),
            (
                r#"[0,1,-1,18446744073709551615,-9223372036854775808]"#,
                true,
            ),
            (
                r#"[0.1,1.0,-0.0,1e-7,1e+16,1.7976931348623157e+308,5e-324]"#,
                true,
            ),
            (r#"[1e16]"#, false),
            (r#"{"b":1,"a":2}"#, false),
            (r#"{"a":1,"a":2}"#, false),
            (r#"{"a": 1}"#, false),
            (r#" {"a":1}"#, false),
            (r#"{"a":1}x"#, false),
            (r#"[1,]"#, false),
            (r#"{"a":1,}"#, false),
            (r#"[01]"#, false),
            (r#"[-0]"#, false),
            (r#"[1.50]"#, false),
            (r#"[1E5]"#, false),
            (r#"[1.0e5]"#, false),
            (r#"[100000.0e0]"#, false),
            (r#"[18446744073709551616]"#, false),
            (r#"[-9223372036854775809]"#, false),
            (r#"[1e400]"#, false),
            (r#"["\/"]"#, false),
            (r#"["\u0041"]"#, false),
            (r#"["\u000a"]"#, false),
            (r#"["\u001F"]"#, false),
            (r#"["\u00e9"]"#, false),
            ("[\"a\u{1}\"]", false),
            (r#"["\x"]"#, false),
            (r#"["open"#, false),
            (r#"tru"#, false),
            ("", false),
            // Round-trips, but a key with an escape is left to the slow path.
            (r#"{"a\"b":1}"#, false),
        ];
        for (text, want) in cases {
            assert_eq!(is_canonical(text), want, "{text}");
            if want {
                assert!(round_trips(text), "{text}");
            }
        }
        assert!(!round_trips(r#"{"b":1,"a":2}"#) && !round_trips("[1.50]"));
    }

    #[test]
    fn plain_runs_end_at_the_first_byte_json_escapes() {
        let cases: [(&[u8], usize); 9] = [
            (b"", 0),
            (b"abc", 3),
            (b"0123456789abcdef0123", 20),
            (b"01234567\"9", 8),
            (b"0123456789\\x", 10),
            (b"012345678901234\x1f", 15),
            (b"\x00", 0),
            (b"\x7f\x80\xff !#[]~", 9),
            (b"ab\x20\x21\x19", 4),
        ];
        for (bytes, want) in cases {
            assert_eq!(plain_len(bytes), want, "{bytes:?}");
        }
    }

    proptest! {
        #[test]
        fn plain_runs_match_a_byte_by_byte_reading(bytes in prop::collection::vec(any::<u8>(), 0..40)) {
            let naive = bytes.iter().take_while(|&&b| b >= 0x20 && b != b'"' && b != b'\\').count();
            prop_assert_eq!(plain_len(&bytes), naive);
        }

        #[test]
        fn plain_runs_of_mostly_plain_bytes_match_too(
            plain in "[ -~]{0,40}",
            special in prop::sample::select(vec![0u8, 0x1f, b'"', b'\\', 0x0a]),
            at in any::<prop::sample::Index>(),
        ) {
            let mut bytes = plain.into_bytes();
            let i = at.index(bytes.len() + 1);
            bytes.insert(i, special);
            let naive = bytes.iter().take_while(|&&b| b >= 0x20 && b != b'"' && b != b'\\').count();
            prop_assert_eq!(plain_len(&bytes), naive);
        }
    }

    #[test]
    fn nesting_is_recognised_up_to_the_limit() {
        let nested = |n: usize| format!("{}{}", "[".repeat(n), "]".repeat(n));
        assert!(is_canonical(&nested(MAX_DEPTH)));
        assert!(!is_canonical(&nested(MAX_DEPTH + 1)));
        assert!(round_trips(&nested(MAX_DEPTH)));
    }

    fn json_value() -> impl Strategy<Value = Value> {
        crate::canon::strategies::json_value(
            (4, 40, 6),
            any::<String>().boxed(),
            "[a-z_ü]{0,6}".boxed(),
        )
    }

    proptest! {
        #[test]
        fn serde_json_output_is_recognised(value in json_value()) {
            let text = serde_json::to_string(&value).unwrap();
            prop_assert!(is_canonical(&text), "{}", text);
        }

        #[test]
        fn whatever_is_recognised_round_trips(
            value in json_value(),
            at in any::<prop::sample::Index>(),
            edit in prop::sample::select(vec![
                "", " ", ",", "0", "1", "-", ".", "e", "E", "+", "\"", "\\", "\\u0000",
                "\\/", "{", "}", "[", "]", ":", "a", "ü", "\u{1}", "null",
            ]),
            remove in 0usize..3,
        ) {
            let text = serde_json::to_string(&value).unwrap();
            let bounds: Vec<usize> =
                text.char_indices().map(|(i, _)| i).chain([text.len()]).collect();
            let i = at.index(bounds.len());
            let (start, end) = (bounds[i], bounds[(i + remove).min(bounds.len() - 1)]);
            let edited = format!("{}{}{}", &text[..start], edit, &text[end..]);
            if is_canonical(&edited) {
                prop_assert!(round_trips(&edited), "{}", edited);
            }
        }
    }
}
