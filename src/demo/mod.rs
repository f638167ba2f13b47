//! The demo: an invented wind-turbine fleet, and benchmark inputs, both
//! generated from a seed with portable draws so the bytes are the same on
//! every machine.

mod bench;
mod files;
mod noise;
mod random;
mod turbines;

#[cfg(test)]
mod tests;

pub use bench::{bench_csv, write_bench};
pub use files::{DATA_FILE, PLAN, plan_text, readings, write};
pub use noise::{NOISE_PLAN, NoiseTrial, noise_csv, noise_trial};
pub use turbines::{
    DEMO_HOURS, DEMO_SEED, DEMO_TURBINES, READING_EVERY_HOURS, TURBINE_COLUMNS, turbines_csv,
};
