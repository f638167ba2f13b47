//! Turning `[resample]` as written into a resolved [`Scheme`], checking that
//! every key written applies to the chosen scheme and filling in defaults.
//!
//! Defaults (written out in the resolved plan): k-fold 5 folds, 1 repeat;
//! monte-carlo 20 splits, train 0.8, validation 0.2; bootstrap 50 splits;
//! forward-chaining window expanding, gap 0, step = validation, all origins;
//! `stratify` true for classification (never for regression).

use crate::resample::{Scheme, Size, Window};

use super::problem::Problem;
use super::raw::{RawResample, RawSize};
use super::reader::join;

fn keys_for(scheme: &str) -> &'static [&'static str] {
    match scheme {
        "k-fold" => &["folds", "repeats", "stratify"],
        "monte-carlo" => &["splits", "train", "validation", "stratify"],
        "forward-chaining" => &["splits", "window", "min-train", "validation", "gap", "step"],
        "bootstrap" => &["splits", "stratify"],
        "nested" => &["outer", "inner"],
        _ => &[],
    }
}

fn written(r: &RawResample) -> Vec<&'static str> {
    let flags = [
        ("folds", r.folds.is_some()),
        ("repeats", r.repeats.is_some()),
        ("stratify", r.stratify.is_some()),
        ("splits", r.splits.is_some()),
        ("train", r.train.is_some()),
        ("validation", r.validation.is_some()),
        ("window", r.window.is_some()),
        ("min-train", r.min_train.is_some()),
        ("gap", r.gap.is_some()),
        ("step", r.step.is_some()),
        ("outer", r.outer.is_some()),
        ("inner", r.inner.is_some()),
    ];
    flags
        .iter()
        .filter(|(_, on)| *on)
        .map(|(k, _)| *k)
        .collect()
}

fn size(s: RawSize) -> Size {
    match s {
        RawSize::Fraction(f) => Size::Fraction(f),
        RawSize::Count(c) => Size::Count(c),
    }
}

/// Resolve `r`; `classification` sets the default of `stratify`. The
/// `place` function gives the place of a dotted key.
pub fn resolve_scheme(
    r: &RawResample,
    classification: bool,
    place: &dyn Fn(&str) -> Option<super::problem::Place>,
    problems: &mut Vec<Problem>,
) -> Option<Scheme> {
    let name = r.scheme.clone().unwrap_or_else(|| "k-fold".to_string());
    let valid = keys_for(&name);
    for key in written(r) {
        if !valid.contains(&key) {
            let hint = if valid.is_empty() {
                "it takes no other keys".to_string()
            } else {
                format!("it takes {}", valid.join(", "))
            };
            problems.push(Problem::at(
                place(&join(&r.path, key)),
                format!(
                    "[{}] {key} does not apply to scheme \"{name}\"; {hint}",
                    r.path
                ),
            ));
        }
    }
    let stratify = r.stratify.unwrap_or(classification) && classification;
    if r.stratify == Some(true) && !classification {
        problems.push(Problem::at(
            place(&join(&r.path, "stratify")),
            format!(
                "[{}] stratify needs a classification target; remove it for regression",
                r.path
            ),
        ));
    }
    let scheme = match name.as_str() {
        "k-fold" => Scheme::KFold {
            folds: r.folds.unwrap_or(5),
            repeats: r.repeats.unwrap_or(1),
            stratify,
        },
        "monte-carlo" => Scheme::MonteCarlo {
            splits: r.splits.unwrap_or(20),
            train: size(r.train.unwrap_or(RawSize::Fraction(0.8))),
            validation: size(r.validation.unwrap_or(RawSize::Fraction(0.2))),
            stratify,
        },
        "leave-one-out" => Scheme::OneRowOut,
        "leave-one-group-out" => Scheme::OneGroupOut,
        "forward-chaining" => forward_chaining(r, place, problems)?,
        "bootstrap" => Scheme::Bootstrap {
            splits: r.splits.unwrap_or(50),
            stratify,
        },
        "nested" => nested(r, classification, place, problems)?,
        _ => return None,
    };
    Some(scheme)
}

fn forward_chaining(
    r: &RawResample,
    place: &dyn Fn(&str) -> Option<super::problem::Place>,
    problems: &mut Vec<Problem>,
) -> Option<Scheme> {
    let table = place(&join(&r.path, "scheme"));
    let mut need = |key: &str, what: &str| {
        problems.push(Problem::at(
            table,
            format!(
                "[{}] scheme \"forward-chaining\" needs `{key}` ({what})",
                r.path
            ),
        ));
    };
    if r.min_train.is_none() {
        need(
            "min-train",
            "the fewest time points a training part may have",
        );
    }
    let validation = match r.validation {
        Some(RawSize::Count(c)) => Some(c),
        Some(RawSize::Fraction(_)) => {
            problems.push(Problem::at(
                place(&join(&r.path, "validation")),
                format!(
                    "[{}] validation for forward-chaining is a count of time points, like 24",
                    r.path
                ),
            ));
            None
        }
        None => {
            need(
                "validation",
                "how many time points each validation part holds",
            );
            None
        }
    };
    let (min_train, validation) = (r.min_train?, validation?);
    Some(Scheme::ForwardChaining {
        splits: r.splits,
        window: match r.window.as_deref() {
            Some("sliding") => Window::Sliding,
            _ => Window::Expanding,
        },
        min_train,
        validation,
        gap: r.gap.unwrap_or(0),
        step: r.step.unwrap_or(validation),
    })
}

fn nested(
    r: &RawResample,
    classification: bool,
    place: &dyn Fn(&str) -> Option<super::problem::Place>,
    problems: &mut Vec<Problem>,
) -> Option<Scheme> {
    let (Some(outer), Some(inner)) = (&r.outer, &r.inner) else {
        problems.push(Problem::at(
            place(&join(&r.path, "scheme")),
            format!(
                "[{}] scheme \"nested\" needs both [{0}.outer] and [{0}.inner] tables",
                r.path
            ),
        ));
        return None;
    };
    for side in [outer, inner] {
        if side.scheme.as_deref() == Some("nested") {
            problems.push(Problem::at(
                place(&join(&side.path, "scheme")),
                format!(
                    "[{}] cannot itself be nested; choose another scheme",
                    side.path
                ),
            ));
            return None;
        }
    }
    let outer = resolve_scheme(outer, classification, place, problems)?;
    let inner = resolve_scheme(inner, classification, place, problems)?;
    Some(Scheme::Nested {
        outer: Box::new(outer),
        inner: Box::new(inner),
    })
}
