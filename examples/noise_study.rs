//! The full-size pure-noise study: 1000 seeds (the test suite runs 100).
//! Labels are a fair coin independent of the features, so every
//! candidate's true accuracy is 0.5. Run with
//! `cargo run --release --example noise_study [SEEDS]`.

fn main() {
    let seeds: u64 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(1000);
    let dir = std::env::temp_dir().join(format!("holdfast-noise-{}", std::process::id()));
    if let Err(e) = std::fs::create_dir_all(&dir) {
        eprintln!("error: cannot create {}: {e}", dir.display());
        std::process::exit(1);
    }
    let (mut cv, mut sealed, mut covers) = (0.0, 0.0, 0u64);
    for seed in 0..seeds {
        match holdfast::demo::noise_trial(&dir, seed, 200, 5) {
            Ok(t) => {
                cv += t.cv_mean;
                sealed += t.sealed;
                covers += u64::from(t.covers_chance);
            }
            Err(e) => {
                eprintln!("error: seed {seed}: {e}");
                std::process::exit(1);
            }
        }
    }
    let n = seeds as f64;
    println!(
        "{seeds} pure-noise data sets, 200 rows, 100 sealed, 10 candidates, 5-fold, chance 0.5"
    );
    println!(
        "chosen candidate's cross-validation mean accuracy: {:.4} (optimistic)",
        cv / n
    );
    println!(
        "its accuracy on the sealed partition, opened once: {:.4}",
        sealed / n
    );
    println!("95% Wilson interval covers 0.5 in {covers} of {seeds} data sets");
    let _ = std::fs::remove_dir_all(&dir);
}
