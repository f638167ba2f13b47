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

#[cfg(test)]
mod tests {
    use super::*;

    /// The committed example data is exactly what the generator makes, so the
    /// plans under `plans/` and `holdfast demo` see the same bytes. Set
    /// `HOLDFAST_WRITE_EXAMPLES=1` to rewrite it after changing the generator.
    #[test]
    fn the_committed_example_data_is_the_generated_data() {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/turbines/readings.csv");
        if std::env::var_os("HOLDFAST_WRITE_EXAMPLES").is_some() {
            std::fs::write(&path, readings()).expect("write examples/turbines/readings.csv");
        }
        let committed =
            std::fs::read_to_string(&path).expect("examples/turbines/readings.csv is committed");
        assert!(
            committed == readings(),
            "examples/turbines/readings.csv differs from the generator's output"
        );
    }

    #[test]
    fn the_demo_plan_points_at_the_file_beside_it() {
        assert!(PLAN.contains(PLAN_DATA_PATH));
        assert!(plan_text().contains("path = \"readings.csv\""));
    }
}
