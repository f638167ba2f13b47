//! Hand-made selection JSON for the analysis tests: a few candidates with
//! per-split scores written out by the test, shaped like a recorded
//! `SelectionResult` (only the keys the analysis reads, plus a few it
//! ignores).

use serde_json::{Value, json};

use super::recorded::Recorded;

pub struct Fixture {
    scheme: Value,
    splits: usize,
    sizes: Vec<(usize, usize)>,
    metric: String,
    larger: bool,
    rule: String,
    standard_error: Option<f64>,
    chosen: String,
    best: String,
    candidates: Vec<Value>,
    jobs: Vec<Value>,
}

pub fn kfold(folds: usize, repeats: usize) -> Value {
    json!({"scheme": "k-fold", "folds": folds, "repeats": repeats, "stratify": true})
}

fn plain_mean(v: &[f64]) -> f64 {
    v.iter().sum::<f64>() / v.len() as f64
}

impl Fixture {
    pub fn new(scheme: Value, splits: usize, train: usize, validation: usize) -> Fixture {
        Fixture {
            scheme,
            splits,
            sizes: vec![(train, validation); splits],
            metric: "accuracy".into(),
            larger: true,
            rule: "best".into(),
            standard_error: None,
            chosen: String::new(),
            best: String::new(),
            candidates: Vec::new(),
            jobs: Vec::new(),
        }
    }

    pub fn metric(&mut self, name: &str, larger: bool) -> &mut Fixture {
        self.metric = name.into();
        self.larger = larger;
        self
    }

    pub fn rule(&mut self, rule: &str, standard_error: f64) -> &mut Fixture {
        self.rule = rule.into();
        self.standard_error = Some(standard_error);
        self
    }

    /// Add an eligible candidate with validation `scores` (one per split)
    /// and optional training-part scores. Its recorded mean is the plain
    /// mean of `scores`.
    pub fn candidate(
        &mut self,
        id: &str,
        learner: &str,
        settings: Value,
        scores: &[f64],
        training: Option<&[f64]>,
    ) -> &mut Fixture {
        self.add(id, learner, settings, scores, training, false)
    }

    /// Add the reference baseline.
    pub fn baseline(&mut self, scores: &[f64]) -> &mut Fixture {
        self.add("base", "baseline", json!({}), scores, None, true)
    }

    fn add(
        &mut self,
        id: &str,
        learner: &str,
        settings: Value,
        scores: &[f64],
        training: Option<&[f64]>,
        reference: bool,
    ) -> &mut Fixture {
        assert_eq!(scores.len(), self.splits, "one score per split");
        let label = format!("{learner} {settings}");
        self.candidates.push(json!({
            "id": id, "label": label, "learner": learner, "settings": settings,
            "reference": reference, "scored_splits": scores.len(),
            "mean": plain_mean(scores), "eligible": !reference,
            "not_converged": 0,
        }));
        for (s, v) in scores.iter().enumerate() {
            let mut job = json!({
                "id": format!("{id}-{s}"), "split": format!("s{s}"), "candidate": id,
                "scores": {(self.metric.clone()): v}, "note": {},
            });
            if let Some(t) = training {
                job["training"] = json!({(self.metric.clone()): t[s]});
            }
            self.jobs.push(job);
        }
        self
    }

    /// Also record `metric` = `scores` on the candidate's jobs.
    pub fn extra(
        &mut self,
        id: &str,
        metric: &str,
        scores: &[f64],
        training: &[f64],
    ) -> &mut Fixture {
        for job in self.jobs.iter_mut().filter(|j| j["candidate"] == id) {
            let s: usize = job["split"].as_str().unwrap()[1..].parse().unwrap();
            job["scores"][metric] = json!(scores[s]);
            if job.get("training").is_none() {
                job["training"] = json!({});
            }
            job["training"][metric] = json!(training[s]);
        }
        self
    }

    pub fn choose(&mut self, chosen: &str, best: &str) -> &mut Fixture {
        self.chosen = chosen.into();
        self.best = best.into();
        self
    }

    /// Training and validation rows of each split.
    pub fn sizes(&mut self, sizes: &[(usize, usize)]) -> &mut Fixture {
        self.sizes = sizes.to_vec();
        self
    }

    pub fn json(&self) -> Value {
        let split_facts: Vec<Value> = (0..self.splits)
            .map(|s| {
                let (train, validation) = self.sizes[s];
                json!({"id": format!("s{s}"), "role": "outer", "repeat": 0, "fold": s,
                       "train_rows": train, "validation_rows": validation})
            })
            .collect();
        json!({
            "format": 1, "plan_hash": "p", "data_file": "d", "partition": "x",
            "sealed_rows": 10, "development_rows": 40,
            "metric": self.metric, "larger_is_better": self.larger, "rule": self.rule,
            "scheme": self.scheme, "splits": self.splits, "split_facts": split_facts,
            "chosen": self.chosen, "chosen_label": "", "best": self.best,
            "standard_error": self.standard_error, "threshold": null,
            "candidates": self.candidates, "jobs": self.jobs,
        })
    }

    pub fn recorded(&self) -> Recorded {
        Recorded::parse(&self.json()).expect("fixture parses")
    }
}
