//! Canonical JSON and content hashes.
//!
//! Everything holdfast hashes goes through [`canonical_json`]: the value is
//! first turned into a `serde_json::Value`, whose maps are `BTreeMap`s (the
//! `preserve_order` feature of serde_json is never enabled), so object keys
//! come out sorted; there is no whitespace; floats use serde_json's
//! shortest round-trip formatting. serde_json writes NaN and infinities as
//! `null`; producers of hashed values therefore keep such numbers out (an
//! undefined score is an explicit `None` with a reason, never a NaN).

use serde::Serialize;

/// A BLAKE3 digest written as 64 lowercase hex characters.
pub type HashHex = String;

/// Errors from canonical serialisation.
#[derive(Debug, thiserror::Error)]
pub enum CanonError {
    /// The value could not be represented as JSON.
    #[error("cannot write canonical JSON: {0}")]
    Json(#[from] serde_json::Error),
}

/// Serialise `value` to canonical JSON: sorted keys, no whitespace,
/// shortest round-trip floats.
pub fn canonical_json<T: Serialize + ?Sized>(value: &T) -> Result<String, CanonError> {
    let tree = serde_json::to_value(value)?;
    Ok(serde_json::to_string(&tree)?)
}

/// BLAKE3 of `bytes`, as lowercase hex.
pub fn hash_bytes(bytes: &[u8]) -> HashHex {
    blake3::hash(bytes).to_hex().to_string()
}

/// BLAKE3 of the canonical JSON of `value`, as lowercase hex.
pub fn hash_canonical<T: Serialize + ?Sized>(value: &T) -> Result<HashHex, CanonError> {
    Ok(hash_bytes(canonical_json(value)?.as_bytes()))
}

/// BLAKE3 of a list of row indices, in the order given, as lowercase hex.
/// Each index is written as 4 little-endian bytes so that the hash does not
/// depend on any text formatting.
pub fn hash_rows(rows: &[u32]) -> HashHex {
    let mut hasher = blake3::Hasher::new();
    hasher.update(&(rows.len() as u64).to_le_bytes());
    for row in rows {
        hasher.update(&row.to_le_bytes());
    }
    hasher.finalize().to_hex().to_string()
}

/// Generators of JSON values for the property tests of the modules that
/// read canonical text (the ledger's canonical check, the audit's body
/// readers).
#[cfg(test)]
pub(crate) mod strategies {
    use proptest::prelude::*;
    use serde_json::Value;

    /// JSON values nested up to `depth` levels, about `size` nodes in all
    /// and at most `width` items per array or object; strings drawn from
    /// `strings` and object keys from `keys`.
    pub fn json_value(
        (depth, size, width): (u32, u32, u32),
        strings: BoxedStrategy<String>,
        keys: BoxedStrategy<String>,
    ) -> impl Strategy<Value = Value> {
        let leaf = prop_oneof![
            Just(Value::Null),
            any::<bool>().prop_map(Value::Bool),
            any::<i64>().prop_map(Value::from),
            any::<u64>().prop_map(Value::from),
            any::<f64>()
                .prop_filter("finite", |f| f.is_finite())
                .prop_map(Value::from),
            strings.prop_map(Value::String),
        ];
        let items = 0..width as usize;
        leaf.prop_recursive(depth, size, width, move |inner| {
            prop_oneof![
                prop::collection::vec(inner.clone(), items.clone()).prop_map(Value::Array),
                prop::collection::btree_map(keys.clone(), inner, items.clone())
                    .prop_map(|m| Value::Object(m.into_iter().collect())),
            ]
        })
    }

    /// Entry bodies: up to five of the fields the audit reads (and one it
    /// does not), each with any [`field_value`].
    pub fn body_fields(
        strings: BoxedStrategy<String>,
    ) -> impl Strategy<Value = std::collections::BTreeMap<&'static str, Value>> {
        let names = vec![
            "candidate",
            "candidate_label",
            "metric",
            "reason",
            "chosen_label",
            "score",
            "sealed_rows",
            "candidates",
            "other",
        ];
        prop::collection::btree_map(prop::sample::select(names), field_value(strings), 0..6)
    }

    /// The field values of an entry body: a few known keys as objects' keys.
    pub fn field_value(strings: BoxedStrategy<String>) -> impl Strategy<Value = Value> {
        let keys = prop::sample::select(vec!["id", "reference", "score", "x"])
            .prop_map(str::to_string)
            .boxed();
        json_value((3, 24, 4), strings, keys)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::BTreeMap;

    #[test]
    fn keys_are_sorted_and_floats_round_trip() {
        #[derive(Serialize)]
        struct S {
            zeta: f64,
            alpha: u32,
        }
        let text = canonical_json(&S {
            zeta: 0.1,
            alpha: 2,
        })
        .unwrap();
        assert_eq!(text, r#"{"alpha":2,"zeta":0.1}"#);
    }

    #[test]
    fn nested_maps_are_sorted() {
        let mut m = BTreeMap::new();
        m.insert("b", vec![1.5, 2.0]);
        m.insert("a", vec![]);
        assert_eq!(canonical_json(&m).unwrap(), r#"{"a":[],"b":[1.5,2.0]}"#);
    }

    #[test]
    fn blake3_of_empty_input_matches_the_published_vector() {
        // BLAKE3 test vectors (official repository, test_vectors.json), input length 0.
        assert_eq!(
            hash_bytes(b""),
            "af1349b9f5f9a1a6a0404dea36dcc9499bcb25c9adc112b7cc9a93cae41f3262"
        );
    }

    #[test]
    fn row_hash_depends_on_order_and_length() {
        assert_ne!(hash_rows(&[1, 2]), hash_rows(&[2, 1]));
        assert_ne!(hash_rows(&[]), hash_rows(&[0]));
    }
}
