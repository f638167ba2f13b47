//! The audit's body fields read straight off compact JSON text, the form
//! holdfast stores (no whitespace), without serde.
//!
//! Invariant: when [`read_compact`] gives fields, they are those
//! [`super::body::Body::read`] gives through serde_json for the same text,
//! which are those the `Value` accessors give (see `body.rs`). It gives
//! `None` for any text it does not take in full (whitespace, a number
//! outside JSON's grammar or too large for an `f64`, a string serde_json
//! would not decode, nesting deeper than [`MAX_DEPTH`]); the caller then
//! reads it through serde_json. Strings with escapes, keys too, are decoded
//! by serde_json itself.

use std::borrow::Cow;

use super::body::{Body, Candidate};
use crate::ledger::plain_len;

/// Deepest nesting read here; serde_json refuses more than 128 levels.
const MAX_DEPTH: usize = 64;

/// The fields of `text`, or `None` when it is not in the form read here.
pub fn read_compact(text: &str) -> Option<Body<'_>> {
    let mut cur = Cursor { text, pos: 0 };
    let body = match cur.peek()? {
        b'{' => cur.body()?,
        _ => {
            cur.skip(0)?;
            Body::default()
        }
    };
    (cur.pos == text.len()).then_some(body)
}

struct Cursor<'a> {
    text: &'a str,
    pos: usize,
}

impl<'a> Cursor<'a> {
    fn bytes(&self) -> &'a [u8] {
        self.text.as_bytes()
    }

    fn peek(&self) -> Option<u8> {
        self.bytes().get(self.pos).copied()
    }

    fn eat(&mut self, byte: u8) -> bool {
        let found = self.peek() == Some(byte);
        self.pos += usize::from(found);
        found
    }

    /// The members of an object, each handed to `member` with its key;
    /// `member` must read the value.
    fn object(&mut self, mut member: impl FnMut(&mut Self, &str) -> Option<()>) -> Option<()> {
        self.pos += 1;
        if self.eat(b'}') {
            return Some(());
        }
        loop {
            let key = self.string()?;
            if !self.eat(b':') {
                return None;
            }
            member(self, &key)?;
            if self.eat(b'}') {
                return Some(());
            }
            if !self.eat(b',') {
                return None;
            }
        }
    }

    /// The elements of an array, each handed to `element`, which must
    /// read it.
    fn array(&mut self, mut element: impl FnMut(&mut Self) -> Option<()>) -> Option<()> {
        self.pos += 1;
        if self.eat(b']') {
            return Some(());
        }
        loop {
            element(self)?;
            if self.eat(b']') {
                return Some(());
            }
            if !self.eat(b',') {
                return None;
            }
        }
    }

    fn body(&mut self) -> Option<Body<'a>> {
        let mut b = Body::default();
        self.object(|cur, key| {
            match key {
                "candidate" => b.candidate = cur.text_field()?,
                "candidate_label" => b.candidate_label = cur.text_field()?,
                "metric" => b.metric = cur.text_field()?,
                "reason" => b.reason = cur.text_field()?,
                "chosen_label" => b.chosen_label = cur.text_field()?,
                "score" => b.score = cur.number_field()?.and_then(as_f64),
                "sealed_rows" => b.sealed_rows = cur.number_field()?.and_then(as_u64),
                "candidates" => b.candidates = cur.candidates()?,
                _ => cur.skip(1)?,
            }
            Some(())
        })?;
        Some(b)
    }

    fn candidates(&mut self) -> Option<Option<Vec<Candidate<'a>>>> {
        if self.peek()? != b'[' {
            self.skip(1)?;
            return Some(None);
        }
        let mut out = Vec::with_capacity(32);
        self.array(|cur| {
            let mut c = Candidate::default();
            if cur.peek()? == b'{' {
                cur.object(|cur, key| {
                    match key {
                        "id" => c.id = cur.text_field()?,
                        "reference" => c.reference = cur.is_true()?,
                        _ => cur.skip(3)?,
                    }
                    Some(())
                })?;
            } else {
                cur.skip(2)?;
            }
            out.push(c);
            Some(())
        })?;
        Some(Some(out))
    }

    /// A value that is kept when it is a string.
    fn text_field(&mut self) -> Option<Option<Cow<'a, str>>> {
        match self.peek()? {
            b'"' => self.string().map(Some),
            _ => self.skip(1).map(|()| None),
        }
    }

    /// A value that is kept when it is a number: its text.
    fn number_field(&mut self) -> Option<Option<&'a str>> {
        match self.peek()? {
            b'-' | b'0'..=b'9' => self.number().map(Some),
            _ => self.skip(1).map(|()| None),
        }
    }

    /// A value that counts when it is `true`.
    fn is_true(&mut self) -> Option<bool> {
        match self.skip_word(b"true") {
            true => Some(true),
            false => self.skip(3).map(|()| false),
        }
    }

    fn skip_word(&mut self, word: &[u8]) -> bool {
        let found = self.bytes()[self.pos..].starts_with(word);
        self.pos += if found { word.len() } else { 0 };
        found
    }

    /// Read past one value, `depth` levels down.
    fn skip(&mut self, depth: usize) -> Option<()> {
        match self.peek()? {
            b'{' if depth < MAX_DEPTH => self.object(|cur, _| cur.skip(depth + 1)),
            b'[' if depth < MAX_DEPTH => self.array(|cur| cur.skip(depth + 1)),
            b'"' => self.string().map(drop),
            b't' => self.skip_word(b"true").then_some(()),
            b'f' => self.skip_word(b"false").then_some(()),
            b'n' => self.skip_word(b"null").then_some(()),
            b'-' | b'0'..=b'9' => self.number().map(drop),
            _ => None,
        }
    }

    /// A string, borrowed when it has no escape, else decoded by
    /// serde_json.
    fn string(&mut self) -> Option<Cow<'a, str>> {
        if !self.eat(b'"') {
            return None;
        }
        let start = self.pos;
        let mut at = start;
        let mut escaped = false;
        loop {
            at += plain_len(&self.bytes()[at..]);
            match *self.bytes().get(at)? {
                b'"' => break,
                // The character after a backslash is never the end.
                b'\\' if at + 1 < self.bytes().len() => {
                    escaped = true;
                    at += 2;
                }
                _ => return None,
            }
        }
        self.pos = at + 1;
        match escaped {
            false => Some(Cow::Borrowed(&self.text[start..at])),
            true => serde_json::from_str(&self.text[start - 1..at + 1])
                .ok()
                .map(Cow::Owned),
        }
    }

    /// A number in JSON's grammar (RFC 8259, section 6, from memory): its
    /// text. One too large for an `f64` is left to serde_json, which
    /// refuses it.
    fn number(&mut self) -> Option<&'a str> {
        let start = self.pos;
        self.eat(b'-');
        match self.peek()? {
            b'0' => self.pos += 1,
            b'1'..=b'9' => self.digits(),
            _ => return None,
        }
        if self.eat(b'.') && !self.some_digits() {
            return None;
        }
        if self.eat(b'e') || self.eat(b'E') {
            let _ = self.eat(b'+') || self.eat(b'-');
            if !self.some_digits() {
                return None;
            }
        }
        let token = &self.text[start..self.pos];
        token
            .parse::<f64>()
            .is_ok_and(f64::is_finite)
            .then_some(token)
    }

    fn digits(&mut self) {
        let run = self.bytes()[self.pos..]
            .iter()
            .take_while(|b| b.is_ascii_digit());
        self.pos += run.count();
    }

    fn some_digits(&mut self) -> bool {
        let start = self.pos;
        self.digits();
        self.pos > start
    }
}

/// `Value::as_f64` of the number serde_json reads from `token`: every
/// number as the nearest `f64` (an integer as u64 or i64 converted, which
/// rounds as reading its digits does; one beyond 64 bits and any other read
/// as a float, correctly rounded with `float_roundtrip`). serde_json
/// refuses a number too large for an `f64`, so none is taken here.
fn as_f64(token: &str) -> Option<f64> {
    token.parse::<f64>().ok()
}

/// `Value::as_u64`: only a plain non-negative integer that fits 64 bits
/// (serde_json reads `-0` and anything longer as a float).
fn as_u64(token: &str) -> Option<u64> {
    match token.bytes().all(|b| b.is_ascii_digit()) {
        true => token.parse().ok(),
        false => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use serde_json::Value;

    /// The reference: the serde_json reading of `body.rs`.
    fn through_serde(text: &str) -> Option<Body<'_>> {
        serde_json::from_str::<Value>(text).ok()?;
        super::super::body::read_with_serde(text).ok()
    }

    #[test]
    fn compact_text_reads_as_serde_reads_it() {
        let cases = [
            r#"{"candidate":"c1","candidate_label":"tree depth=3","metric":"auc","reason":"look","score":0.7}"#,
            r#"{"candidates":[{"id":"a","reference":false},{"id":"b","reference":true},{"id":"c"}],"chosen_label":"x","sealed_rows":500}"#,
            r#"{"candidate":7,"chosen_label":{"a":1},"metric":null,"reason":["r"],"score":"0.5","sealed_rows":-3}"#,
            r#"{"score":3,"sealed_rows":2.0}"#,
            r#"{"score":-0,"sealed_rows":-0}"#,
            r#"{"score":-4,"sealed_rows":18446744073709551615}"#,
            r#"{"score":1e300,"sealed_rows":18446744073709551616}"#,
            r#"{"score":12345678901234567890123,"sealed_rows":1E2}"#,
            r#"{"candidates":"none"}"#,
            r#"{"candidates":[1,"two",null,[{"id":"x"}],{"id":3,"reference":"true"},{"reference":true}]}"#,
            r#"{"candidates":[{"reference":{"a":[true]},"id":"q"},{"reference":truex}]}"#,
            r#"{"score":0.5,"score":"late","reason":"a","reason":"b"}"#,
            r#"{"reason":"q \"b\" \u00e9 \ud83d\ude00 \/","x":"\\"}"#,
            r#"{"other":{"deep":[[[{"candidate":"no"}]]]},"candidate":"yes"}"#,
            r#"[{"candidate":"in an array"}]"#,
            r#""just text""#,
            "null",
            "-12.5e-3",
            "{}",
        ];
        for text in cases {
            let fast = read_compact(text);
            assert_eq!(fast, through_serde(text), "{text}");
        }
        // Not taken here: serde_json decides.
        for text in [
            r#"{ "score": 1 }"#,
            r#"{"sc\u006fre":1}"#,
            r#"{"score":01}"#,
            r#"{"score":1.}"#,
            r#"{"score":.5}"#,
            r#"{"score":1e400}"#,
            r#"{"score":1}x"#,
            r#"{"reason":"a
b"}"#,
            r#"{"reason":"\x"}"#,
            r#"{"a":1,}"#,
            "",
        ] {
            let fast = read_compact(text);
            assert!(fast.is_none() || fast == through_serde(text), "{text}");
        }
        assert_eq!(read_compact(r#"{"score":1e400}"#), None);
    }

    fn field_value() -> impl Strategy<Value = Value> {
        crate::canon::strategies::field_value(any::<String>().boxed())
    }

    proptest! {
        #[test]
        fn any_compact_body_reads_as_serde_reads_it(
            fields in crate::canon::strategies::body_fields(any::<String>().boxed())
        ) {
            let text = serde_json::to_string(&fields).unwrap();
            let fast = read_compact(&text);
            prop_assert!(fast.is_some(), "{}", text);
            prop_assert_eq!(fast, through_serde(&text));
        }

        #[test]
        fn edited_text_is_read_as_serde_reads_it_or_left_to_it(
            fields in prop::collection::btree_map(
                prop::sample::select(vec!["candidates", "score", "sealed_rows", "reason"]),
                field_value(),
                0..4,
            ),
            at in any::<prop::sample::Index>(),
            edit in prop::sample::select(vec![
                "", " ", ",", "0", "-", ".", "e", "+", "\"", "\\", "{", "}", "[", "]", ":",
                "true", "null", "\"id\":", "\"reference\":true",
            ]),
        ) {
            let text = serde_json::to_string(&fields).unwrap();
            let bounds: Vec<usize> =
                text.char_indices().map(|(i, _)| i).chain([text.len()]).collect();
            let cut = bounds[at.index(bounds.len())];
            let edited = format!("{}{}{}", &text[..cut], edit, &text[cut..]);
            if let Some(fast) = read_compact(&edited) {
                prop_assert_eq!(Some(fast), through_serde(&edited), "{}", edited);
            }
        }
    }
}
