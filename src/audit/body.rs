//! The few fields of an entry's body that the audit shows, read straight
//! from the stored text without building a `serde_json::Value`.
//!
//! Invariant: for any text serde_json parses, every field holds what the
//! `Value` accessor the full read uses would give (see `report.rs`): a text
//! field is `Some` only for a string (`Value::as_str`), `score` a number
//! as `f64` (`Value::as_f64`), `sealed_rows` a non-negative integer
//! (`Value::as_u64`), `candidates` an array (`Value::as_array`); a body or
//! candidate that is not an object has none of its fields
//! (`Value::get`); and of a repeated key the last one counts, as it does
//! in a `Value`. Strings without escapes are borrowed from the text.

use std::borrow::Cow;
use std::fmt;
use std::marker::PhantomData;

use serde::de::{self, Deserialize, Deserializer, IgnoredAny, MapAccess, SeqAccess, Visitor};

/// The fields the audit reads of a selection or an opening.
#[derive(Debug, Default, PartialEq)]
pub struct Body<'a> {
    pub candidate: Option<Cow<'a, str>>,
    pub candidate_label: Option<Cow<'a, str>>,
    pub metric: Option<Cow<'a, str>>,
    pub reason: Option<Cow<'a, str>>,
    pub chosen_label: Option<Cow<'a, str>>,
    pub score: Option<f64>,
    pub sealed_rows: Option<u64>,
    pub candidates: Option<Vec<Candidate<'a>>>,
}

/// One element of a selection's `candidates`.
#[derive(Debug, Default, PartialEq)]
pub struct Candidate<'a> {
    pub id: Option<Cow<'a, str>>,
    /// `reference` is `true` (the baseline, not counted as compared).
    pub reference: bool,
}

impl<'a> Body<'a> {
    /// Read the fields of `text`; an error only for text that is not JSON.
    /// Compact text (as holdfast stores it) is read without serde.
    pub fn read(text: &'a str) -> Result<Body<'a>, serde_json::Error> {
        match super::body_text::read_compact(text) {
            Some(body) => Ok(body),
            None => read_with_serde(text),
        }
    }
}

/// [`Body::read`] through serde_json, for any JSON text.
pub fn read_with_serde(text: &str) -> Result<Body<'_>, serde_json::Error> {
    let taken: Taken<Body<'_>> = serde_json::from_str(text)?;
    Ok(taken.0.unwrap_or_default())
}

/// A text field as the report shows it: the string, or empty.
pub fn text(field: &Option<Cow<'_, str>>) -> String {
    field.as_deref().unwrap_or_default().to_string()
}

/// What a field keeps of a JSON value of any type; any other value is
/// read through and dropped.
trait Take<'de>: Sized {
    fn string(_: Cow<'de, str>) -> Option<Self> {
        None
    }
    fn boolean(_: bool) -> Option<Self> {
        None
    }
    fn unsigned(_: u64) -> Option<Self> {
        None
    }
    fn signed(_: i64) -> Option<Self> {
        None
    }
    fn float(_: f64) -> Option<Self> {
        None
    }
    fn seq<A: SeqAccess<'de>>(mut seq: A) -> Result<Option<Self>, A::Error> {
        while seq.next_element::<IgnoredAny>()?.is_some() {}
        Ok(None)
    }
    fn map<A: MapAccess<'de>>(mut map: A) -> Result<Option<Self>, A::Error> {
        while map.next_entry::<IgnoredAny, IgnoredAny>()?.is_some() {}
        Ok(None)
    }
}

/// `Some` when the value was of the kind `T` keeps.
struct Taken<T>(Option<T>);

impl<'de, T: Take<'de>> Deserialize<'de> for Taken<T> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(TakeVisitor(PhantomData))
    }
}

struct TakeVisitor<T>(PhantomData<T>);

impl<'de, T: Take<'de>> Visitor<'de> for TakeVisitor<T> {
    type Value = Taken<T>;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("any JSON value")
    }
    fn visit_bool<E: de::Error>(self, v: bool) -> Result<Self::Value, E> {
        Ok(Taken(T::boolean(v)))
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Self::Value, E> {
        Ok(Taken(T::signed(v)))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Self::Value, E> {
        Ok(Taken(T::unsigned(v)))
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Self::Value, E> {
        Ok(Taken(T::float(v)))
    }
    fn visit_borrowed_str<E: de::Error>(self, v: &'de str) -> Result<Self::Value, E> {
        Ok(Taken(T::string(Cow::Borrowed(v))))
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Self::Value, E> {
        Ok(Taken(T::string(Cow::Owned(v.to_string()))))
    }
    fn visit_string<E: de::Error>(self, v: String) -> Result<Self::Value, E> {
        Ok(Taken(T::string(Cow::Owned(v))))
    }
    fn visit_unit<E: de::Error>(self) -> Result<Self::Value, E> {
        Ok(Taken(None))
    }
    fn visit_none<E: de::Error>(self) -> Result<Self::Value, E> {
        Ok(Taken(None))
    }
    fn visit_seq<A: SeqAccess<'de>>(self, seq: A) -> Result<Self::Value, A::Error> {
        T::seq(seq).map(Taken)
    }
    fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<Self::Value, A::Error> {
        T::map(map).map(Taken)
    }
}

impl<'de> Take<'de> for Cow<'de, str> {
    fn string(v: Cow<'de, str>) -> Option<Self> {
        Some(v)
    }
}

impl Take<'_> for bool {
    fn boolean(v: bool) -> Option<Self> {
        Some(v)
    }
}

/// `Value::as_f64`: any number; a float serde_json cannot hold as a
/// number (not finite) is a `null` in a `Value`.
impl Take<'_> for f64 {
    fn unsigned(v: u64) -> Option<Self> {
        Some(v as f64)
    }
    fn signed(v: i64) -> Option<Self> {
        Some(v as f64)
    }
    fn float(v: f64) -> Option<Self> {
        v.is_finite().then_some(v)
    }
}

/// `Value::as_u64`: a non-negative integer.
impl Take<'_> for u64 {
    fn unsigned(v: u64) -> Option<Self> {
        Some(v)
    }
    fn signed(v: i64) -> Option<Self> {
        u64::try_from(v).ok()
    }
}

impl<'de> Take<'de> for Vec<Candidate<'de>> {
    fn seq<A: SeqAccess<'de>>(mut seq: A) -> Result<Option<Self>, A::Error> {
        // Selections compare tens of candidates.
        let mut out = Vec::with_capacity(32);
        while let Some(c) = seq.next_element::<Taken<Candidate<'de>>>()? {
            out.push(c.0.unwrap_or_default());
        }
        Ok(Some(out))
    }
}

impl<'de> Take<'de> for Candidate<'de> {
    fn map<A: MapAccess<'de>>(mut map: A) -> Result<Option<Self>, A::Error> {
        let mut c = Candidate::default();
        while let Some(key) = map.next_key::<Key>()? {
            match &*key.0 {
                "id" => c.id = map.next_value::<Taken<_>>()?.0,
                "reference" => c.reference = map.next_value::<Taken<bool>>()?.0 == Some(true),
                _ => drop(map.next_value::<IgnoredAny>()?),
            }
        }
        Ok(Some(c))
    }
}

impl<'de> Take<'de> for Body<'de> {
    fn map<A: MapAccess<'de>>(mut map: A) -> Result<Option<Self>, A::Error> {
        let mut b = Body::default();
        while let Some(key) = map.next_key::<Key>()? {
            match &*key.0 {
                "candidate" => b.candidate = map.next_value::<Taken<_>>()?.0,
                "candidate_label" => b.candidate_label = map.next_value::<Taken<_>>()?.0,
                "metric" => b.metric = map.next_value::<Taken<_>>()?.0,
                "reason" => b.reason = map.next_value::<Taken<_>>()?.0,
                "chosen_label" => b.chosen_label = map.next_value::<Taken<_>>()?.0,
                "score" => b.score = map.next_value::<Taken<_>>()?.0,
                "sealed_rows" => b.sealed_rows = map.next_value::<Taken<_>>()?.0,
                "candidates" => b.candidates = map.next_value::<Taken<_>>()?.0,
                _ => drop(map.next_value::<IgnoredAny>()?),
            }
        }
        Ok(Some(b))
    }
}

/// An object key, unescaped; only the few keys read are compared, so an
/// owned copy is made only for keys with escapes.
struct Key<'de>(Cow<'de, str>);

impl<'de> Deserialize<'de> for Key<'de> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let key: Taken<Cow<'de, str>> = Taken::deserialize(d)?;
        // serde_json keys are always strings.
        Ok(Key(key.0.unwrap_or_default()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use serde_json::{Value, json};

    /// The fields as the full read takes them from a `Value`.
    fn from_value(v: &Value) -> Body<'static> {
        let s = |k: &str| {
            v.get(k)
                .and_then(Value::as_str)
                .map(|s| Cow::Owned(s.to_string()))
        };
        Body {
            candidate: s("candidate"),
            candidate_label: s("candidate_label"),
            metric: s("metric"),
            reason: s("reason"),
            chosen_label: s("chosen_label"),
            score: v.get("score").and_then(Value::as_f64),
            sealed_rows: v.get("sealed_rows").and_then(Value::as_u64),
            candidates: v.get("candidates").and_then(Value::as_array).map(|cs| {
                cs.iter()
                    .map(|c| Candidate {
                        id: c
                            .get("id")
                            .and_then(Value::as_str)
                            .map(|s| Cow::Owned(s.to_string())),
                        reference: c.get("reference") == Some(&Value::Bool(true)),
                    })
                    .collect()
            }),
        }
    }

    fn same_as_value(text: &str) {
        let value: Value = serde_json::from_str(text).unwrap();
        assert_eq!(read_with_serde(text).unwrap(), from_value(&value), "{text}");
        assert_eq!(Body::read(text).unwrap(), from_value(&value), "{text}");
    }

    #[test]
    fn fields_read_as_the_value_accessors_give_them() {
        let cases = [
            r#"{"candidate":"c1","candidate_label":"tree depth=3","metric":"auc","score":0.7,"reason":"look"}"#,
            r#"{"candidates":[{"id":"a","reference":false},{"id":"b","reference":true},{"id":"c"}],"chosen_label":"x","sealed_rows":500}"#,
            r#"{"candidate":7,"metric":null,"reason":["r"],"chosen_label":{"a":1},"score":"0.5","sealed_rows":-3}"#,
            r#"{"score":3,"sealed_rows":2.0}"#,
            r#"{"score":-4,"sealed_rows":18446744073709551615}"#,
            r#"{"sealed_rows":18446744073709551616,"score":1e300}"#,
            r#"{"candidates":"none"}"#,
            r#"{"candidates":[1,"two",null,[{"id":"x"}],{"id":3,"reference":"true"},{"reference":true}]}"#,
            r#"{"score":0.5,"score":"late","reason":"a","reason":"b"}"#,
            r#"{"candidates":[{"id":"a","id":"b","reference":true,"reference":false}]}"#,
            r#"{ "reason" : "spaced \"quoted\" \u00e9" , "sc\u006fre" : 1.5 }"#,
            r#"{"other":{"deep":[[[{"candidate":"no"}]]]},"candidate":"yes"}"#,
            r#"[{"candidate":"in an array"}]"#,
            r#""just text""#,
            "null",
            "12",
            "{}",
        ];
        for text in cases {
            same_as_value(text);
        }
        assert!(Body::read("not json").is_err());
        assert!(Body::read(r#"{"a":1}x"#).is_err());
    }

    #[test]
    fn plain_strings_are_borrowed() {
        let text = r#"{"candidate":"c1","reason":"a \"b\""}"#;
        let body = Body::read(text).unwrap();
        assert!(matches!(body.candidate, Some(Cow::Borrowed("c1"))));
        assert!(matches!(body.reason, Some(Cow::Owned(ref s)) if s == "a \"b\""));
    }

    proptest! {
        #[test]
        fn any_body_reads_as_its_value(
            fields in crate::canon::strategies::body_fields("\\PC{0,4}".boxed())
        ) {
            let text = serde_json::to_string(&fields).unwrap();
            same_as_value(&text);
            same_as_value(&serde_json::to_string_pretty(&json!(fields)).unwrap());
        }
    }
}
