//! A pure-noise study: labels independent of the features, so every
//! candidate's true accuracy is exactly chance (0.5). Used by a test (100
//! seeds) and by `examples/noise_study.rs` (1000 seeds) to show that
//! picking the best of many candidates on the same splits inflates the
//! cross-validation mean, while the sealed partition, opened once, does not.

use std::fmt::Write as _;
use std::path::Path;

use super::random::Draws;
use crate::compile;
use crate::exec::{self, RunProgress, choose, run_jobs, selection_splits};
use crate::plan;

/// One trial's numbers.
#[derive(Clone, Debug, PartialEq)]
pub struct NoiseTrial {
    /// The chosen candidate's cross-validation mean accuracy.
    pub cv_mean: f64,
    /// Its accuracy on the sealed partition.
    pub sealed: f64,
    /// Whether the 95% Wilson interval on the sealed partition covers 0.5.
    pub covers_chance: bool,
}

/// The plan of every trial: 10 candidates over 5 folds, half the rows sealed.
pub const NOISE_PLAN: &str = r#"
[plan]
name = "noise"
seed = 1

[data]
path = "noise.csv"
target = "label"

[seal]
fraction = 0.5

[resample]
folds = 5

[[candidates]]
learner = "nearest-neighbors"
k = [1, 3, 5, 9, 15, 25]

[[candidates]]
learner = "tree"
depth = [1, 2, 3, 5]
min-leaf = 3

[select]
metric = "accuracy"
"#;

/// `rows` rows of `features` standard normal features and a fair coin label.
pub fn noise_csv(seed: u64, rows: usize, features: usize) -> String {
    let mut d = Draws::new("holdfast/demo/noise", seed);
    let mut text: String = (1..=features).map(|j| format!("x{j},")).collect();
    text.push_str("label\n");
    for _ in 0..rows {
        for _ in 0..features {
            let _ = write!(text, "{:.6},", d.normal());
        }
        text.push_str(if d.chance(0.5) { "b\n" } else { "a\n" });
    }
    text
}

struct Quiet;

impl RunProgress for Quiet {
    fn advance(&self) -> &(dyn Fn(usize) + Sync) {
        &|_| {}
    }
    fn store(&mut self, _: &[(exec::JobResult, f64)]) {}
}

/// Run one trial in `dir` (which it writes `noise.csv` and `plan.toml` into).
pub fn noise_trial(
    dir: &Path,
    seed: u64,
    rows: usize,
    features: usize,
) -> Result<NoiseTrial, String> {
    std::fs::write(dir.join("noise.csv"), noise_csv(seed, rows, features))
        .map_err(|e| e.to_string())?;
    let plan_path = dir.join("plan.toml");
    std::fs::write(
        &plan_path,
        NOISE_PLAN.replace("seed = 1", &format!("seed = {seed}")),
    )
    .map_err(|e| e.to_string())?;
    let r = plan::resolve_file(&plan_path).map_err(|e| e.to_string())?;
    let sheet = compile::compile(&r).map_err(|e| e.to_string())?;
    let results = run_jobs(&r, &sheet, &Default::default(), &mut Quiet);
    let splits = selection_splits(&sheet, false);
    let choice = choose(&r, &sheet, &results, &splits).map_err(|e| e.to_string())?;
    let chosen = &choice.candidates[choice.chosen];
    let opened = exec::recompute(&r, &sheet, &chosen.id, 1).map_err(|e| e.to_string())?;
    Ok(NoiseTrial {
        cv_mean: chosen.mean.unwrap_or(0.5),
        sealed: opened.score,
        covers_chance: opened.interval.low <= 0.5 && 0.5 <= opened.interval.high,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Pure noise, 100 seeds, 200 rows each (100 sealed). Chance is 0.5 by
    /// construction (labels are a fair coin independent of the features:
    /// common practice). Bounds: the sealed mean over 100 seeds has a
    /// standard error of about sqrt(0.25/100)/10 = 0.005, so 0.02 is four of
    /// them; a 95% interval misses in about 5 of 100 seeds, and fewer than 90
    /// covers would be very unlikely (binomial, common practice).
    #[test]
    fn selection_on_noise_is_optimistic_and_the_sealed_look_is_not() {
        let dir = tempfile::tempdir().expect("temp dir");
        let trials: Vec<NoiseTrial> = (0..100)
            .map(|s| noise_trial(dir.path(), s, 200, 5).expect("trial"))
            .collect();
        let n = trials.len() as f64;
        let cv = trials.iter().map(|t| t.cv_mean).sum::<f64>() / n;
        let sealed = trials.iter().map(|t| t.sealed).sum::<f64>() / n;
        let covers = trials.iter().filter(|t| t.covers_chance).count();
        assert!(
            cv > 0.5,
            "the chosen candidate's CV mean is on average above chance: {cv}"
        );
        assert!(
            (sealed - 0.5).abs() <= 0.02,
            "the sealed estimate's mean is within 0.02 of chance: {sealed}"
        );
        assert!(
            covers >= 90,
            "the 95% Wilson interval covers chance in {covers} of 100 seeds"
        );
    }
}
