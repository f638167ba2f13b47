//! Family evaluation against one candidate, learner by learner: the cost of
//! a whole grid on one split beside the cost of one of its candidates, both
//! through `exec::evaluate_candidates` (z-score fit, the learner, scoring,
//! training scores on, as a default run does).
//!
//! Data: 10,000 generated rows, 5 features, 100 groups, 2 classes (the
//! `bench-data` defaults); the first split of a grouped 5-fold scheme, so
//! 8,000 training rows and 2,000 validation rows. Targets (BENCHMARKS.md):
//! 16 k at most 1.3x one, 17 delta at most 1.3x one, 10 ridge penalties at
//! most 1.5x one, depths 1..10 at most 1.5x depth 10 alone.
//!
//! `*-wide`: the shrunken-centroid and ridge grids again on 2,000 rows of
//! 500 features (1,600 training rows, 400 validation), where the shared fit
//! is most of the work.

mod common;

use std::hint::black_box;
use std::time::Duration;

use criterion::{Criterion, criterion_group};

use common::{Bed, candidates_of, classification_plan, compiled, evaluate_on_first_split};

/// (group name, learner, plan blocks, task is regression, which candidates
/// are timed alone: indices into the family).
const FAMILIES: &[Family<'_>] = &[
    (
        "nearest-neighbors-16-k",
        "nearest-neighbors",
        "[[candidates]]\nlearner = \"nearest-neighbors\"\n\
         k = [1, 3, 5, 7, 9, 11, 13, 15, 17, 19, 21, 23, 25, 27, 29, 31]\n",
        false,
        &[15, 7, 0],
    ),
    (
        "shrunken-centroid-17-delta",
        "shrunken-centroid",
        "[[candidates]]\nlearner = \"shrunken-centroid\"\ndelta = { from = 0.0, to = 4.0, steps = 17 }\n",
        false,
        &[8],
    ),
    (
        "ridge-10-lambda",
        "ridge",
        "[[candidates]]\nlearner = \"ridge\"\nlambda = { from = 0.001, to = 1000.0, steps = 10, scale = \"log\" }\n",
        true,
        &[5],
    ),
    (
        "tree-depth-1-to-10",
        "tree",
        "[[candidates]]\nlearner = \"tree\"\ndepth = { from = 1, to = 10, steps = 10 }\n",
        false,
        &[9],
    ),
    (
        "logistic-6-lambda",
        "logistic",
        "[[candidates]]\nlearner = \"logistic\"\nlambda = { from = 0.001, to = 100.0, steps = 6, scale = \"log\" }\n",
        false,
        &[3],
    ),
];

/// The same grids on a wide shape, where the learner's shared work (the
/// fit over many features) outweighs predicting and scoring each candidate's
/// rows: 2,000 rows, 500 features (3 of them carry the class), the shape of
/// the expression data nearest shrunken centroids were made for.
const WIDE: &[Family<'_>] = &[
    (
        "shrunken-centroid-17-delta-wide",
        "shrunken-centroid",
        "[[candidates]]\nlearner = \"shrunken-centroid\"\ndelta = { from = 0.0, to = 4.0, steps = 17 }\n",
        false,
        &[8],
    ),
    (
        "ridge-10-lambda-wide",
        "ridge",
        "[[candidates]]\nlearner = \"ridge\"\nlambda = { from = 0.001, to = 1000.0, steps = 10, scale = \"log\" }\n",
        true,
        &[5],
    ),
];

fn families(c: &mut Criterion) {
    family_groups(c, &Bed::new(10_000, 5, 100), 5, FAMILIES);
    family_groups(c, &Bed::new(2_000, 500, 100), 500, WIDE);
}

type Family<'a> = (&'a str, &'a str, &'a str, bool, &'a [usize]);

/// The plan of a family's bench: grouped 5-fold over the bench data.
fn plan_text(blocks: &str, regression: bool, features: usize) -> String {
    if regression {
        // The generator pads feature names to the width of the count.
        let first = format!("\"f{:0w$}\"", 1, w = features.to_string().len().max(2));
        common::regression_plan(5, blocks).replace("\"f01\"", &first)
    } else {
        classification_plan(5, 1, blocks)
    }
}

/// One criterion group per family: the whole grid, then the chosen
/// candidates alone.
fn family_groups(c: &mut Criterion, bed: &Bed, features: usize, table: &[Family<'_>]) {
    for &(name, learner, blocks, regression, alone) in table {
        let text = plan_text(blocks, regression, features);
        let (r, sheet) = compiled(&bed.plan(&format!("{name}.toml"), &text));
        let family = candidates_of(&sheet, learner);
        let mut group = c.benchmark_group(format!("family/{name}"));
        group.sample_size(20);
        group.measurement_time(Duration::from_secs(4));
        group.bench_function(format!("all-{}", family.len()), |b| {
            b.iter(|| black_box(evaluate_on_first_split(&r, &sheet, &family)))
        });
        for &i in alone {
            let one = [family[i]];
            let label = sheet
                .candidates
                .iter()
                .filter(|c| c.learner == learner)
                .nth(i)
                .map_or_else(String::new, |c| c.label.replace(' ', "_"));
            group.bench_function(format!("one/{label}"), |b| {
                b.iter(|| black_box(evaluate_on_first_split(&r, &sheet, &one)))
            });
        }
        group.finish();
    }
}

criterion_group!(benches, families);

/// `HOLDFAST_RATIOS=1 cargo bench --bench families`: instead of criterion,
/// time each grid and its candidates alone in alternation (grid, then each
/// candidate, round after round), so that a change in the machine's load
/// reaches both sides of a ratio alike; prints per family the fastest
/// round of each side and their ratio.
fn ratios() {
    const ROUNDS: usize = 40;
    for (bed, features, table) in [
        (Bed::new(10_000, 5, 100), 5, FAMILIES),
        (Bed::new(2_000, 500, 100), 500, WIDE),
    ] {
        for &(name, learner, blocks, regression, alone) in table {
            let (r, sheet) = compiled(&bed.plan(
                &format!("{name}.toml"),
                &plan_text(blocks, regression, features),
            ));
            let family = candidates_of(&sheet, learner);
            let ones: Vec<[(&str, &holdfast::learn::Settings); 1]> =
                alone.iter().map(|&i| [family[i]]).collect();
            let mut best_all = Duration::MAX;
            let mut best_one = vec![Duration::MAX; ones.len()];
            for _ in 0..ROUNDS {
                best_all = best_all.min(timed(|| evaluate_on_first_split(&r, &sheet, &family)));
                for (best, one) in best_one.iter_mut().zip(&ones) {
                    *best = (*best).min(timed(|| evaluate_on_first_split(&r, &sheet, one)));
                }
            }
            for (&i, one) in alone.iter().zip(&best_one) {
                println!(
                    "{name}: all-{} {:.3} ms, candidate {i} alone {:.3} ms, ratio {:.2}x (fastest of {ROUNDS} alternating rounds)",
                    family.len(),
                    best_all.as_secs_f64() * 1e3,
                    one.as_secs_f64() * 1e3,
                    best_all.as_secs_f64() / one.as_secs_f64()
                );
            }
        }
    }
}

fn timed(f: impl FnOnce() -> usize) -> Duration {
    let start = std::time::Instant::now();
    black_box(f());
    start.elapsed()
}

fn main() {
    if std::env::var_os("HOLDFAST_RATIOS").is_some() {
        ratios();
        return;
    }
    benches();
    Criterion::default().configure_from_args().final_summary();
}
