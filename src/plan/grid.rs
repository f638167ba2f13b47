//! Expanding a `[[candidates]]` block into candidates.
//!
//! Order (documented in the README): blocks in plan order; within a block,
//! the cartesian product of the learner's settings in the learner's declared
//! setting order, the first setting varying slowest (like nested loops), each
//! list in the order written and each range from `from` to `to`. Settings the
//! block does not write take the learner's default.

use crate::learn::{Learner, SettingKind, SettingSpec, SettingValue, Settings};

use super::problem::Problem;
use super::raw::{RawCandidates, Scalar, SettingInput};

/// The values of a range, computed as `from + i * (to - from) / (steps - 1)`
/// (never by repeated addition), or on a log scale by the same formula in
/// natural logarithms. `libm` is used so the values are the same bits on
/// every platform.
pub fn range_values(from: f64, to: f64, steps: usize, log: bool) -> Vec<f64> {
    if steps == 1 {
        return vec![from];
    }
    let last = (steps - 1) as f64;
    (0..steps)
        .map(|i| {
            if i == steps - 1 {
                return to;
            }
            if log {
                let (a, b) = (libm::log(from), libm::log(to));
                round_significant(libm::exp(a + i as f64 * (b - a) / last))
            } else {
                from + i as f64 * (to - from) / last
            }
        })
        .collect()
}

/// `v` rounded to 12 significant digits, so that a log-scale range from
/// 0.001 to 100 gives 0.001, 0.01, ..., 100 rather than 0.0010000000000000002.
/// Rust's float formatting and parsing are exact and platform-independent.
fn round_significant(v: f64) -> f64 {
    format!("{v:.11e}").parse().unwrap_or(v)
}

fn convert(spec: &SettingSpec, learner: &str, value: &Scalar) -> Result<SettingValue, String> {
    let name = spec.name;
    match (spec.kind, value) {
        (SettingKind::Int { min }, Scalar::Int(i)) if *i >= min => Ok(SettingValue::Int(*i)),
        (SettingKind::Int { min }, Scalar::Float(f))
            if f.fract() == 0.0 && *f >= min as f64 && f.abs() < 1e15 =>
        {
            Ok(SettingValue::Int(*f as i64))
        }
        (SettingKind::Int { min }, _) => Err(format!(
            "{learner}: {name} must be a whole number at least {min}"
        )),
        (SettingKind::Float { min }, Scalar::Int(i)) if *i as f64 >= min => {
            Ok(SettingValue::Float(*i as f64))
        }
        (SettingKind::Float { min }, Scalar::Float(f)) if *f >= min => Ok(SettingValue::Float(*f)),
        (SettingKind::Float { min }, _) => {
            Err(format!("{learner}: {name} must be a number at least {min}"))
        }
        (SettingKind::Choice(words), Scalar::Text(t)) if words.contains(&t.as_str()) => {
            Ok(SettingValue::Text(t.clone()))
        }
        (SettingKind::Choice(words), _) => {
            let all = words
                .iter()
                .map(|w| format!("\"{w}\""))
                .collect::<Vec<_>>()
                .join(", ");
            let hint = match value {
                Scalar::Text(t) => super::reader::suggest(t, words)
                    .map(|w| format!("; did you mean `{w}`?"))
                    .unwrap_or_default(),
                _ => String::new(),
            };
            Err(format!("{learner}: {name} must be one of {all}{hint}"))
        }
    }
}

fn values_of(
    spec: &SettingSpec,
    learner: &str,
    input: &SettingInput,
) -> Result<Vec<SettingValue>, String> {
    let scalars: Vec<Scalar> = match input {
        SettingInput::One(s) => vec![s.clone()],
        SettingInput::List(list) => list.clone(),
        SettingInput::Range {
            from,
            to,
            steps,
            log,
        } => {
            if matches!(spec.kind, SettingKind::Choice(_)) {
                return Err(format!("{learner}: {} takes words, not a range", spec.name));
            }
            range_values(*from, *to, *steps, *log)
                .into_iter()
                .map(Scalar::Float)
                .collect()
        }
    };
    scalars.iter().map(|s| convert(spec, learner, s)).collect()
}

/// Expand one block into complete settings, in the documented order.
pub fn expand(learner: &dyn Learner, block: &RawCandidates) -> Result<Vec<Settings>, Vec<Problem>> {
    let mut axes: Vec<(&'static str, Vec<SettingValue>)> = Vec::new();
    let mut problems = Vec::new();
    for spec in learner.settings() {
        let written = block.settings.iter().find(|(name, _, _)| name == spec.name);
        let values = match written {
            None => Ok(vec![spec.default.value()]),
            Some((_, input, place)) => {
                values_of(spec, learner.name(), input).map_err(|m| (m, *place))
            }
        };
        match values {
            Ok(v) => axes.push((spec.name, v)),
            Err((message, place)) => {
                problems.push(Problem::at(place, format!("[[candidates]] {message}")))
            }
        }
    }
    if !problems.is_empty() {
        return Err(problems);
    }
    Ok(product(&axes))
}

fn product(axes: &[(&'static str, Vec<SettingValue>)]) -> Vec<Settings> {
    let mut out = vec![Settings::new()];
    for (name, values) in axes {
        out = out
            .iter()
            .flat_map(|base| {
                values.iter().map(move |v| {
                    let mut s = base.clone();
                    s.insert((*name).to_string(), v.clone());
                    s
                })
            })
            .collect();
    }
    out
}

/// A readable one-line label: `nearest-neighbors k=5 vote=equal`.
pub fn label(learner: &str, settings: &Settings, spec: &[SettingSpec]) -> String {
    let mut text = learner.to_string();
    for s in spec {
        if let Some(v) = settings.get(s.name) {
            let shown = match v {
                SettingValue::Int(i) => i.to_string(),
                SettingValue::Float(f) => format!("{f}"),
                SettingValue::Text(t) => t.clone(),
            };
            text.push_str(&format!(" {}={}", s.name, shown));
        }
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_ranges_use_the_closed_formula() {
        // from + i*(to-from)/(steps-1): 0, 0.25, ..., 4 for 17 steps (common practice).
        let v = range_values(0.0, 4.0, 17, false);
        assert_eq!(v.len(), 17);
        assert_eq!(v[1], 0.25);
        assert_eq!(v[16], 4.0);
        assert_eq!(range_values(2.0, 9.0, 1, false), vec![2.0]);
    }

    #[test]
    fn log_ranges_hit_powers_of_ten() {
        let v = range_values(0.001, 1000.0, 7, true);
        assert_eq!(v, [0.001, 0.01, 0.1, 1.0, 10.0, 100.0, 1000.0]);
        let v = range_values(1.0, 100.0, 5, true);
        // 10^0.5 = 3.16227766016838 to 12 significant digits (common practice).
        assert_eq!(v, [1.0, 3.16227766017, 10.0, 31.6227766017, 100.0]);
    }

    #[test]
    fn product_varies_the_first_setting_slowest() {
        let axes = vec![
            ("k", vec![SettingValue::Int(1), SettingValue::Int(3)]),
            (
                "vote",
                vec![
                    SettingValue::Text("a".into()),
                    SettingValue::Text("b".into()),
                ],
            ),
        ];
        let got: Vec<String> = product(&axes)
            .iter()
            .map(|s| format!("{:?}{:?}", s["k"], s["vote"]))
            .collect();
        assert_eq!(
            got,
            [
                r#"Int(1)Text("a")"#,
                r#"Int(1)Text("b")"#,
                r#"Int(3)Text("a")"#,
                r#"Int(3)Text("b")"#
            ]
        );
    }
}
