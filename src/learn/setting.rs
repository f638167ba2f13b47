//! Setting values of a candidate and the schema a learner declares for them.

use std::collections::BTreeMap;

use serde::Serialize;

/// One setting's value. Serialised as a bare JSON number or string.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(untagged)]
pub enum SettingValue {
    Int(i64),
    Float(f64),
    Text(String),
}

impl SettingValue {
    /// The value as a float, when it is a number.
    pub fn as_f64(&self) -> Option<f64> {
        match self {
            SettingValue::Int(i) => Some(*i as f64),
            SettingValue::Float(f) => Some(*f),
            SettingValue::Text(_) => None,
        }
    }

    /// The value as an integer, when it is one.
    pub fn as_i64(&self) -> Option<i64> {
        match self {
            SettingValue::Int(i) => Some(*i),
            _ => None,
        }
    }

    /// The value as text, when it is text.
    pub fn as_str(&self) -> Option<&str> {
        match self {
            SettingValue::Text(s) => Some(s),
            _ => None,
        }
    }
}

/// A candidate's settings by name (sorted, so canonical).
pub type Settings = BTreeMap<String, SettingValue>;

/// What kind of value a setting takes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SettingKind {
    /// A whole number at least `min`.
    Int { min: i64 },
    /// A real number at least `min` (integers are accepted and widened).
    Float { min: f64 },
    /// One of the listed words.
    Choice(&'static [&'static str]),
}

/// A setting's default.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SettingDefault {
    Int(i64),
    Float(f64),
    Text(&'static str),
}

impl SettingDefault {
    /// The default as a value.
    pub fn value(&self) -> SettingValue {
        match self {
            SettingDefault::Int(i) => SettingValue::Int(*i),
            SettingDefault::Float(f) => SettingValue::Float(*f),
            SettingDefault::Text(s) => SettingValue::Text((*s).to_string()),
        }
    }
}

/// One setting a learner takes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SettingSpec {
    /// Name in plans (kebab-case).
    pub name: &'static str,
    pub kind: SettingKind,
    pub default: SettingDefault,
    /// One line for `holdfast learners` and the docs.
    pub help: &'static str,
}
