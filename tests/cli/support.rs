//! Fixtures for the integration tests: a temp dir holding a copy of the
//! Palmer penguins data (tests/data/penguins.csv, CC0; see tests/data/README.md)
//! and plan files written by each test.

use std::path::{Path, PathBuf};

use assert_cmd::Command;

/// A temp dir with the penguins data as `penguins.csv`.
pub struct Fixture {
    pub dir: tempfile::TempDir,
}

/// The penguins plan most tests start from: species from the four body
/// measurements, island as the group, year as the order, sex categorical.
pub const PENGUINS_PLAN: &str = r#"
[plan]
name = "penguins"
seed = 11

[data]
path = "penguins.csv"
target = "species"
features = ["bill_*", "flipper_length_mm", "body_mass_g"]

[prep]
impute = "mean"

[resample]
folds = 5

[[candidates]]
learner = "nearest-neighbors"
k = [1, 5, 9]
"#;

pub fn repo_file(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

impl Fixture {
    pub fn new() -> Fixture {
        let dir = tempfile::tempdir().expect("temp dir");
        std::fs::copy(
            repo_file("tests/data/penguins.csv"),
            dir.path().join("penguins.csv"),
        )
        .expect("copy data");
        Fixture { dir }
    }

    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.path().join(name)
    }

    pub fn write(&self, name: &str, text: &str) -> PathBuf {
        let p = self.path(name);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).expect("mkdir");
        }
        std::fs::write(&p, text).expect("write fixture");
        p
    }

    /// The `holdfast` binary, run in the fixture dir, with the ledger inside it.
    pub fn cmd(&self) -> Command {
        let mut c = Command::cargo_bin("holdfast").expect("binary");
        c.current_dir(self.dir.path());
        c.env("HOLDFAST_LEDGER", self.path("ledger.sqlite"));
        c.env_remove("HOLDFAST_REQUIRE_REFERENCE");
        c
    }
}

/// Run and return (exit code, stdout, stderr).
pub fn run(cmd: &mut Command) -> (i32, String, String) {
    let out = cmd.output().expect("run holdfast");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}
