//! Entry ids as people type them: a sequence number, a hash prefix, or
//! `latest`.
//!
//! A run of decimal digits is read both ways when it is long enough to be a
//! hash prefix (4 characters or more): `1234` may be entry 1234 or the
//! entry whose hash starts with `1234`. When both exist the id is
//! ambiguous and the caller is told so, rather than one reading winning
//! silently. Hex is matched case-insensitively; hashes are stored in
//! lowercase.

use super::error::LedgerError;

/// The fewest hex characters accepted as a hash prefix.
pub const MIN_PREFIX: usize = 4;

/// Length of a full entry hash in hex characters.
pub const HASH_LEN: usize = 64;

/// A parsed entry id.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum EntrySpec {
    /// The last entry.
    Latest,
    /// A sequence number, a hash prefix, or both readings of one text.
    Id {
        seq: Option<u64>,
        prefix: Option<String>,
    },
}

impl EntrySpec {
    /// Parse `text`, or say what shape an id must have.
    pub fn parse(text: &str) -> Result<EntrySpec, LedgerError> {
        let bad = || LedgerError::BadEntrySpec {
            spec: text.to_string(),
        };
        let text = text.trim();
        if text == "latest" {
            return Ok(EntrySpec::Latest);
        }
        if text.is_empty() || text.len() > HASH_LEN || !text.bytes().all(|b| b.is_ascii_hexdigit())
        {
            return Err(bad());
        }
        let digits = text.bytes().all(|b| b.is_ascii_digit());
        // Too many digits for a number can still be a hash prefix.
        let seq = digits.then(|| text.parse::<u64>().ok()).flatten();
        let prefix = (text.len() >= MIN_PREFIX).then(|| text.to_ascii_lowercase());
        if seq.is_none() && prefix.is_none() {
            return Err(bad());
        }
        Ok(EntrySpec::Id { seq, prefix })
    }
}

/// The upper bound of hashes starting with `prefix`: hex digits sort
/// below `g`, so `[prefix, prefix + "g")` is exactly the prefix's range.
pub fn prefix_end(prefix: &str) -> String {
    format!("{prefix}g")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn id(seq: Option<u64>, prefix: Option<&str>) -> EntrySpec {
        EntrySpec::Id {
            seq,
            prefix: prefix.map(str::to_string),
        }
    }

    #[test]
    fn ids_parse_as_documented() {
        let cases = [
            ("latest", Some(EntrySpec::Latest)),
            ("7", Some(id(Some(7), None))),
            (" 12 ", Some(id(Some(12), None))),
            ("1234", Some(id(Some(1234), Some("1234")))),
            ("abCD", Some(id(None, Some("abcd")))),
            ("0", Some(id(Some(0), None))),
            ("abc", None),
            ("", None),
            ("Latest", None),
            ("12g4", None),
            ("-3", None),
            (
                "99999999999999999999",
                Some(id(None, Some("99999999999999999999"))),
            ),
        ];
        for (text, want) in cases {
            let got = EntrySpec::parse(text).ok();
            assert_eq!(got, want, "{text:?}");
        }
        assert!(EntrySpec::parse(&"a".repeat(65)).is_err());
    }

    #[test]
    fn bad_ids_say_what_is_expected() {
        let err = EntrySpec::parse("abc").unwrap_err();
        assert!(
            err.to_string().contains("at least 4 hex characters"),
            "{err}"
        );
        assert_eq!(err.exit_code(), crate::exit::USER);
    }

    #[test]
    fn prefix_range_holds_exactly_the_prefixed_hashes() {
        let end = prefix_end("ab12");
        for inside in ["ab12", "ab120000", "ab12ffff"] {
            assert!(inside >= "ab12" && inside < end.as_str(), "{inside}");
        }
        for outside in ["ab11ffff", "ab13", "ab2"] {
            assert!(!(outside >= "ab12" && outside < end.as_str()), "{outside}");
        }
    }
}
