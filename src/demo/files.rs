//! Writing the demo into a folder: the generated readings and the demo plan
//! (the same plan as `plans/turbines.toml`, with its data path pointing at the
//! file beside it).

use std::path::{Path, PathBuf};

use super::{DEMO_HOURS, DEMO_SEED, DEMO_TURBINES, turbines_csv};

/// The example plan, as committed.
pub const PLAN: &str = include_str!("../../plans/turbines.toml");
/// The data path written in the example plan.
pub const PLAN_DATA_PATH: &str = "../examples/turbines/readings.csv";
/// The data file name inside a demo folder.
pub const DATA_FILE: &str = "readings.csv";

/// The demo plan with its data path pointing at `readings.csv` beside it.
pub fn plan_text() -> String {
    PLAN.replace(PLAN_DATA_PATH, DATA_FILE)
}

/// The demo data, as committed under `examples/turbines/readings.csv`.
pub fn readings() -> String {
    turbines_csv(DEMO_SEED, DEMO_TURBINES, DEMO_HOURS)
}

/// Write the demo data and plan into `dir`; returns the plan's path.
pub fn write(dir: &Path) -> std::io::Result<PathBuf> {
    std::fs::create_dir_all(dir)?;
    std::fs::write(dir.join(DATA_FILE), readings())?;
    let plan = dir.join("plan.toml");
    std::fs::write(&plan, plan_text())?;
    Ok(plan)
}
