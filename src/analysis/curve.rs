//! Validation curves: per learner, the eligible candidates ordered by the
//! learner's complexity setting (k for nearest-neighbors, delta for
//! shrunken-centroid, lambda for ridge and logistic, depth for tree), with
//! validation and training means and their standard errors. A learner
//! whose other settings also vary (vote, distance, min-leaf) gets one curve
//! per combination of them.
//!
//! Invariants: points run from the simplest setting to the most complex
//! (the direction of the learner's `simplicity` key: a larger k, delta or
//! lambda is simpler, a larger depth more complex); curves come in
//! candidate order of their first candidate; a candidate that cannot be
//! placed on a curve is listed in [`LeftOut`] with the reason.

use std::collections::BTreeMap;

use serde::Serialize;
use serde_json::Value;

use crate::stats;

use super::recorded::{Recorded, Tables};

/// A mean over the outer splits with its standard error.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Stat {
    pub mean: f64,
    /// sd / sqrt(n); `None` with one split.
    pub se: Option<f64>,
    /// Splits averaged over.
    pub n: usize,
}

/// One candidate on a curve.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CurvePoint {
    pub candidate: String,
    pub label: String,
    /// The complexity setting's value.
    pub value: f64,
    pub validation: Stat,
    /// `None` when the jobs record no training-part score on every split.
    pub training: Option<Stat>,
    pub chosen: bool,
    pub best: bool,
}

/// One learner's candidates over its complexity setting, other settings
/// fixed.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Curve {
    /// A stable name: the learner and the fixed settings, in kebab-case.
    pub name: String,
    pub learner: String,
    /// The complexity setting (`k`, `delta`, `lambda`, `depth`).
    pub setting: String,
    /// The other settings that vary between this learner's curves, fixed
    /// on this one.
    pub fixed: BTreeMap<String, String>,
    /// Whether a larger value of the setting is simpler (k, delta, lambda).
    pub simpler_with_larger_values: bool,
    /// Whether the values are best read on a log scale (all positive,
    /// spanning a factor of 20 or more).
    pub log_scale: bool,
    /// Simplest first.
    pub points: Vec<CurvePoint>,
}

/// A learner or candidate that is not on any curve, and why.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct LeftOut {
    pub learner: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
    pub reason: String,
}

/// The complexity setting of `learner` and whether larger values are simpler.
pub fn complexity_setting(learner: &str) -> Option<(&'static str, bool)> {
    match learner {
        "nearest-neighbors" => Some(("k", true)),
        "shrunken-centroid" => Some(("delta", true)),
        "ridge" | "logistic" => Some(("lambda", true)),
        "tree" => Some(("depth", false)),
        _ => None,
    }
}

/// A mean and standard error of `values`, when every split has one.
pub(super) fn stat(values: &[Option<f64>]) -> Option<Stat> {
    let present: Vec<f64> = values.iter().flatten().copied().collect();
    if present.len() < values.len() {
        return None;
    }
    stats::summarize(&present).ok().map(|s| Stat {
        mean: s.mean,
        se: s.se,
        n: s.n,
    })
}

fn text(v: &Value) -> String {
    v.as_str().map_or_else(|| v.to_string(), str::to_string)
}

fn slug(learner: &str, fixed: &BTreeMap<String, String>) -> String {
    let mut s = learner.to_string();
    for (k, v) in fixed {
        s.push_str(&format!("-{k}-{v}"));
    }
    s.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '-'
            }
        })
        .collect()
}

/// Settings other than `setting` whose values differ among `members`.
fn varying(r: &Recorded, members: &[usize], setting: &str) -> Vec<String> {
    let mut seen: BTreeMap<&str, Vec<&Value>> = BTreeMap::new();
    for &c in members {
        for (k, v) in &r.candidates[c].settings {
            seen.entry(k.as_str()).or_default().push(v);
        }
    }
    seen.into_iter()
        .filter(|(k, vs)| {
            *k != setting && (vs.len() < members.len() || vs.windows(2).any(|w| w[0] != w[1]))
        })
        .map(|(k, _)| k.to_string())
        .collect()
}

fn point(r: &Recorded, t: &Tables, c: usize, value: f64) -> Option<CurvePoint> {
    let cand = &r.candidates[c];
    Some(CurvePoint {
        candidate: cand.id.clone(),
        label: cand.label.clone(),
        value,
        validation: stat(&t.validation[c])?,
        training: stat(&t.training[c]),
        chosen: cand.id == r.chosen,
        best: cand.id == r.best,
    })
}

/// The curves of one learner with complexity `setting`.
fn learner_curves(
    r: &Recorded,
    t: &Tables,
    learner: &str,
    (setting, larger_simpler): (&str, bool),
    left: &mut Vec<LeftOut>,
) -> Vec<Curve> {
    let mut members = Vec::new();
    for (c, cand) in r.candidates.iter().enumerate() {
        if cand.learner != learner || cand.reference {
            continue;
        }
        let value = cand.settings.get(setting).and_then(Value::as_f64);
        let reason = match (cand.eligible, value) {
            (false, _) => cand.why_not.clone().or(Some("not eligible".into())),
            (true, None) => Some(format!("it records no numeric {setting}")),
            (true, Some(v)) => point(r, t, c, v)
                .map(|p| members.push((c, p)))
                .map_or(Some("a split has no score".into()), |()| None),
        };
        if let Some(reason) = reason {
            let label = Some(cand.label.clone());
            left.push(LeftOut {
                learner: learner.into(),
                label,
                reason,
            });
        }
    }
    let idx: Vec<usize> = members.iter().map(|(c, _)| *c).collect();
    let vary = varying(r, &idx, setting);
    let mut curves: Vec<Curve> = Vec::new();
    for (c, p) in members {
        let fixed: BTreeMap<String, String> = vary
            .iter()
            .map(|k| {
                (
                    k.clone(),
                    r.candidates[c].settings.get(k).map_or("-".into(), text),
                )
            })
            .collect();
        match curves.iter_mut().find(|cv| cv.fixed == fixed) {
            Some(cv) => cv.points.push(p),
            None => curves.push(Curve {
                name: slug(learner, &fixed),
                learner: learner.into(),
                setting: setting.into(),
                fixed,
                simpler_with_larger_values: larger_simpler,
                log_scale: false,
                points: vec![p],
            }),
        }
    }
    for cv in &mut curves {
        finish(cv);
    }
    curves
}

/// Order the points simplest first (stable: candidate order on ties) and
/// decide the scale.
fn finish(cv: &mut Curve) {
    if cv.simpler_with_larger_values {
        cv.points.sort_by(|a, b| b.value.total_cmp(&a.value));
    } else {
        cv.points.sort_by(|a, b| a.value.total_cmp(&b.value));
    }
    let lo = cv
        .points
        .iter()
        .map(|p| p.value)
        .fold(f64::INFINITY, f64::min);
    let hi = cv
        .points
        .iter()
        .map(|p| p.value)
        .fold(f64::NEG_INFINITY, f64::max);
    cv.log_scale = lo > 0.0 && hi / lo >= 20.0;
}

/// Every learner's curves, and what could not be drawn.
pub(super) fn curves(r: &Recorded, t: &Tables) -> (Vec<Curve>, Vec<LeftOut>) {
    let mut learners: Vec<&str> = Vec::new();
    for c in r.candidates.iter().filter(|c| !c.reference) {
        if !learners.contains(&c.learner.as_str()) {
            learners.push(&c.learner);
        }
    }
    let (mut curves, mut left) = (Vec::new(), Vec::new());
    for learner in learners {
        match complexity_setting(learner) {
            Some(spec) => curves.extend(learner_curves(r, t, learner, spec, &mut left)),
            None => left.push(LeftOut {
                learner: learner.into(),
                label: None,
                reason: format!("{learner} has no complexity setting to draw a curve over"),
            }),
        }
    }
    (curves, left)
}

#[cfg(test)]
mod tests {
    use super::super::fixture::{Fixture, kfold};
    use super::*;
    use serde_json::json;

    #[test]
    fn points_run_simplest_first_with_means_and_errors() {
        let mut f = Fixture::new(kfold(2, 1), 2, 40, 10);
        // k = 1, 9, 3: a larger k is simpler, so the order is 9, 3, 1.
        for (k, v, tr) in [
            (1, [0.5, 0.75], [1.0, 1.0]),
            (9, [0.625, 0.625], [0.75, 0.5]),
            (3, [0.75, 0.5], [0.875, 0.875]),
        ] {
            let id = format!("k{k}");
            f.candidate(
                &id,
                "nearest-neighbors",
                json!({"k": k, "vote": "equal"}),
                &v,
                Some(&tr),
            );
        }
        f.choose("k9", "k9");
        let r = f.recorded();
        let (cs, left) = curves(&r, &r.tables(&r.metric));
        assert!(left.is_empty());
        assert_eq!(cs.len(), 1);
        let c = &cs[0];
        assert_eq!(
            (c.name.as_str(), c.setting.as_str(), c.log_scale),
            ("nearest-neighbors", "k", false)
        );
        let ks: Vec<f64> = c.points.iter().map(|p| p.value).collect();
        assert_eq!(ks, vec![9.0, 3.0, 1.0]);
        // k = 1: validation (0.5, 0.75): mean 0.625, sd 0.1767767 (by hand:
        // sqrt(2 * 0.125^2 / 1)), se = sd / sqrt(2) = 0.125.
        let k1 = &c.points[2];
        assert_eq!(k1.validation.mean, 0.625);
        assert!((k1.validation.se.unwrap() - 0.125).abs() < 1e-15);
        // Training (1, 1): mean 1, se 0.
        assert_eq!(
            k1.training.as_ref().map(|s| (s.mean, s.se)),
            Some((1.0, Some(0.0)))
        );
        assert!(c.points[0].chosen && !c.points[1].chosen);
    }

    #[test]
    fn other_varying_settings_split_the_curves() {
        let mut f = Fixture::new(kfold(2, 1), 2, 40, 10);
        for (k, vote) in [
            (1, "equal"),
            (1, "inverse-distance"),
            (5, "equal"),
            (5, "inverse-distance"),
        ] {
            let id = format!("k{k}{vote}");
            f.candidate(
                &id,
                "nearest-neighbors",
                json!({"k": k, "vote": vote, "distance": "euclidean"}),
                &[0.5, 0.5],
                None,
            );
        }
        f.candidate("nc", "nearest-centroid", json!({}), &[0.5, 0.5], None);
        f.candidate(
            "t1",
            "tree",
            json!({"depth": 1, "min-leaf": 5}),
            &[0.5, 0.5],
            None,
        );
        f.candidate(
            "t20",
            "tree",
            json!({"depth": 20, "min-leaf": 5}),
            &[0.5, 0.5],
            None,
        );
        f.baseline(&[0.25, 0.25]);
        f.choose("t1", "t1");
        let r = f.recorded();
        let (cs, left) = curves(&r, &r.tables(&r.metric));
        let names: Vec<&str> = cs.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(
            names,
            [
                "nearest-neighbors-vote-equal",
                "nearest-neighbors-vote-inverse-distance",
                "tree"
            ]
        );
        assert!(cs.iter().all(|c| c.points.len() == 2));
        // Depth: a larger depth is more complex, so 1 comes first; 1 to 20
        // spans a factor of 20, so a log scale.
        assert_eq!(cs[2].points[0].value, 1.0);
        assert!(cs[2].log_scale && !cs[2].simpler_with_larger_values);
        assert_eq!(left.len(), 1);
        assert!(
            left[0]
                .reason
                .contains("nearest-centroid has no complexity setting")
        );
        // Missing training scores: no training statistic.
        assert!(cs[0].points[0].training.is_none());
    }
}
