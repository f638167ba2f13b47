//! The demo: an invented wind-turbine fleet, generated from a seed, and the
//! plan that goes with it. (The generator is being built.)

use std::path::{Path, PathBuf};

/// Write the demo data and plan into `dir`; returns the plan's path.
pub fn write(dir: &Path) -> std::io::Result<PathBuf> {
    std::fs::create_dir_all(dir)?;
    Ok(dir.join("plan.toml"))
}
