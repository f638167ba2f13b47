//! Reading typed values out of a parsed TOML document while collecting
//! problems: unknown keys (with the closest valid key suggested), wrong value
//! types and out-of-range values, each with its line and column.

use std::collections::BTreeMap;

use toml_edit::{Item, TableLike, Value};

use super::problem::{Place, Problem};

/// A walker over one plan's text that remembers where every key was.
pub struct Reader<'t> {
    text: &'t str,
    pub problems: Vec<Problem>,
    /// Dotted key path (`data.group`) to the place of its value.
    pub places: BTreeMap<String, Place>,
}

/// The closest of `valid` to `word`, when it is close enough to suggest.
pub fn suggest<'a>(word: &str, valid: &[&'a str]) -> Option<&'a str> {
    valid
        .iter()
        .map(|v| (strsim::jaro_winkler(word, v), *v))
        .filter(|(score, _)| *score >= 0.8)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, v)| v)
}

fn did_you_mean(word: &str, valid: &[&str]) -> String {
    match suggest(word, valid) {
        Some(v) => format!("; did you mean `{v}`?"),
        None => String::new(),
    }
}

impl<'t> Reader<'t> {
    pub fn new(text: &'t str) -> Reader<'t> {
        Reader {
            text,
            problems: Vec::new(),
            places: BTreeMap::new(),
        }
    }

    /// The place of a span's start.
    pub fn place(&self, span: Option<std::ops::Range<usize>>) -> Option<Place> {
        span.map(|s| Place::of_offset(self.text, s.start))
    }

    /// The place recorded for a dotted key path.
    pub fn place_of(&self, path: &str) -> Option<Place> {
        self.places.get(path).copied()
    }

    pub fn problem(&mut self, place: Option<Place>, message: impl Into<String>) {
        self.problems.push(Problem::at(place, message));
    }

    /// Report every key of `table` not in `valid`.
    pub fn check_keys(&mut self, table: &dyn TableLike, path: &str, valid: &[&str]) {
        for (key, _) in table.iter() {
            if valid.contains(&key) {
                continue;
            }
            let place = table
                .get_key_value(key)
                .and_then(|(k, _)| self.place(k.span()));
            let hint = did_you_mean(key, valid);
            let expected = valid
                .iter()
                .map(|v| format!("`{v}`"))
                .collect::<Vec<_>>()
                .join(", ");
            let message = if path.is_empty() {
                format!("unknown table `{key}`{hint} (valid tables: {expected})")
            } else {
                format!("unknown key `{key}` in [{path}]{hint} (valid keys: {expected})")
            };
            self.problem(place, message);
        }
    }

    /// The item at `key`, recording its place under `path.key`.
    pub fn item<'a>(
        &mut self,
        table: &'a dyn TableLike,
        path: &str,
        key: &str,
    ) -> Option<&'a Item> {
        let (_, item) = table.get_key_value(key)?;
        let place = self.place(item_span(item)).or_else(|| {
            table
                .get_key_value(key)
                .and_then(|(k, _)| self.place(k.span()))
        });
        if let Some(p) = place {
            self.places.insert(join(path, key), p);
        }
        Some(item)
    }

    fn wrong_type(&mut self, path: &str, key: &str, expected: &str, item: &Item) {
        let place = self.place_of(&join(path, key));
        let found = item.type_name();
        self.problem(
            place,
            format!("[{path}] {key} must be {expected}, found {found}"),
        );
    }

    /// A string value.
    pub fn string(&mut self, table: &dyn TableLike, path: &str, key: &str) -> Option<String> {
        let item = self.item(table, path, key)?;
        match item.as_value().and_then(Value::as_str) {
            Some(s) => Some(s.to_string()),
            None => {
                self.wrong_type(path, key, "a string in quotes", item);
                None
            }
        }
    }

    /// A boolean value.
    pub fn boolean(&mut self, table: &dyn TableLike, path: &str, key: &str) -> Option<bool> {
        let item = self.item(table, path, key)?;
        match item.as_value().and_then(Value::as_bool) {
            Some(b) => Some(b),
            None => {
                self.wrong_type(path, key, "true or false", item);
                None
            }
        }
    }

    /// An integer value.
    pub fn integer(&mut self, table: &dyn TableLike, path: &str, key: &str) -> Option<i64> {
        let item = self.item(table, path, key)?;
        match item.as_value().and_then(Value::as_integer) {
            Some(i) => Some(i),
            None => {
                self.wrong_type(path, key, "a whole number", item);
                None
            }
        }
    }

    /// A whole number at least `min`.
    pub fn count(
        &mut self,
        table: &dyn TableLike,
        path: &str,
        key: &str,
        min: i64,
    ) -> Option<usize> {
        let value = self.integer(table, path, key)?;
        if value < min {
            let place = self.place_of(&join(path, key));
            self.problem(
                place,
                format!("[{path}] {key} must be at least {min}, found {value}"),
            );
            return None;
        }
        usize::try_from(value).ok()
    }

    /// A number (an integer is widened).
    pub fn number(&mut self, table: &dyn TableLike, path: &str, key: &str) -> Option<f64> {
        let item = self.item(table, path, key)?;
        match item.as_value().and_then(number_of) {
            Some(f) if f.is_finite() => Some(f),
            Some(_) => {
                let place = self.place_of(&join(path, key));
                self.problem(place, format!("[{path}] {key} must be a finite number"));
                None
            }
            None => {
                self.wrong_type(path, key, "a number", item);
                None
            }
        }
    }

    /// A list of strings.
    pub fn strings(&mut self, table: &dyn TableLike, path: &str, key: &str) -> Option<Vec<String>> {
        let item = self.item(table, path, key)?;
        let list = item.as_value().and_then(Value::as_array);
        let words: Option<Vec<String>> =
            list.and_then(|a| a.iter().map(|v| v.as_str().map(str::to_string)).collect());
        if words.is_none() {
            self.wrong_type(path, key, "a list of strings, like [\"a\", \"b\"]", item);
        }
        words
    }

    /// One word out of `choices`.
    pub fn choice(
        &mut self,
        table: &dyn TableLike,
        path: &str,
        key: &str,
        choices: &[&str],
    ) -> Option<String> {
        let word = self.string(table, path, key)?;
        if choices.contains(&word.as_str()) {
            return Some(word);
        }
        let place = self.place_of(&join(path, key));
        let hint = did_you_mean(&word, choices);
        let all = choices
            .iter()
            .map(|c| format!("\"{c}\""))
            .collect::<Vec<_>>()
            .join(", ");
        self.problem(
            place,
            format!("[{path}] {key} = \"{word}\" is not one of {all}{hint}"),
        );
        None
    }
}

/// `a.b` from a table path and a key.
pub fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// A TOML number as f64, accepting integers.
pub fn number_of(value: &Value) -> Option<f64> {
    value
        .as_float()
        .or_else(|| value.as_integer().map(|i| i as f64))
}

/// The span of an item's value or table.
pub fn item_span(item: &Item) -> Option<std::ops::Range<usize>> {
    match item {
        Item::Value(v) => v.span(),
        Item::Table(t) => t.span(),
        Item::ArrayOfTables(a) => a.span(),
        Item::None => None,
    }
}
