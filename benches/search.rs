//! The distance / neighbour-search kernel: exact k-nearest-neighbour
//! queries, brute force against the k-d tree.
//!
//! - `search/target`: 20,000 query rows against 80,000 training rows with
//!   12 features, k = 10, the path `choose_method` picks (target: under
//!   10 s on 2 cores).
//! - `search/crossover`: 2,000 query rows against 1,000 .. 80,000 training
//!   rows of 2 .. 16 features, k = 10, each path forced; the table in
//!   `neighbor_search::choose_method` is read off these figures.
//!
//! Rows are standard normal (a seeded ChaCha stream), the worst case for a
//! tree: real data with structure favours it more.

use std::hint::black_box;
use std::time::Duration;

use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use holdfast::learn::search_bench::{chooses_tree, search};
use ndarray::Array2;
use rand_chacha::ChaCha8Rng;
use rand_core::{Rng, SeedableRng};

/// Standard normal rows (Box-Muller on a seeded stream; libm, not std).
fn gaussian(rows: usize, dims: usize, seed: u64) -> Array2<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut unit = move || ((rng.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64;
    Array2::from_shape_fn((rows, dims), |_| {
        let (u, v) = (unit(), unit());
        libm::sqrt(-2.0 * libm::log(u)) * libm::cos(std::f64::consts::TAU * v)
    })
}

fn target(c: &mut Criterion) {
    let train = gaussian(80_000, 12, 1);
    let queries = gaussian(20_000, 12, 2);
    let mut group = c.benchmark_group("search/target");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(20));
    let path = if chooses_tree(80_000, 12, 10) {
        "tree"
    } else {
        "brute"
    };
    group.bench_function(format!("20000x80000x12-k10-chosen-{path}"), |b| {
        b.iter(|| black_box(search(train.view(), queries.view(), 10, None).1))
    });
    group.finish();
}

fn crossover(c: &mut Criterion) {
    let mut group = c.benchmark_group("search/crossover");
    group.sample_size(10);
    group.warm_up_time(Duration::from_millis(300));
    group.measurement_time(Duration::from_secs(1));
    for dims in [2, 4, 6, 8, 10, 12, 16] {
        let queries = gaussian(2_000, dims, 100 + dims as u64);
        for rows in [1_000, 4_000, 16_000, 80_000] {
            let train = gaussian(rows, dims, dims as u64);
            for (name, path) in [("brute", false), ("tree", true)] {
                let id = BenchmarkId::new(format!("d{dims:02}-{name}"), rows);
                group.bench_with_input(id, &rows, |b, _| {
                    b.iter(|| black_box(search(train.view(), queries.view(), 10, Some(path)).1))
                });
            }
        }
    }
    group.finish();
}

criterion_group!(benches, target, crossover);
criterion_main!(benches);
