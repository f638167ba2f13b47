//! Test-only: runs `tests/reference/knn_auc.py` (scipy, live) and hands its
//! JSON to the checks in `learn::nearest_neighbors` and `score::metric`.
//! Included by both through `#[path]`, because each lives in a private
//! module.
//!
//! When python3, numpy or scipy is missing the check prints
//! `skipped: <why>` and the caller returns, unless the environment sets
//! `HOLDFAST_REQUIRE_REFERENCE=1` (CI does), in which case it fails.

// Each includer uses only some of the helpers.
#![allow(dead_code)]

use std::path::Path;
use std::process::Command;

use serde_json::Value;

/// The script's output, or `None` after printing why the check is skipped.
pub(crate) fn reference_output() -> Option<Value> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let script = root.join("tests").join("reference").join("knn_auc.py");
    let output = match Command::new("python3")
        .arg(&script)
        .current_dir(root)
        .output()
    {
        Ok(output) => output,
        Err(e) => return skip(&format!("python3 could not be run ({e})")),
    };
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        output.status.success(),
        "{} failed: {stderr}",
        script.display()
    );
    let value: Value = match serde_json::from_slice(&output.stdout) {
        Ok(v) => v,
        Err(e) => panic!("{} printed no JSON ({e}): {stderr}", script.display()),
    };
    if let Some(missing) = value.get("missing") {
        return skip(&format!("numpy or scipy is not installed ({missing})"));
    }
    let version = |name: &str| {
        value["versions"][name]
            .as_str()
            .unwrap_or("unknown")
            .to_string()
    };
    println!(
        "reference: python {} numpy {} scipy {}",
        version("python"),
        version("numpy"),
        version("scipy")
    );
    Some(value)
}

fn skip(why: &str) -> Option<Value> {
    let required = std::env::var("HOLDFAST_REQUIRE_REFERENCE").is_ok_and(|v| v == "1");
    assert!(!required, "HOLDFAST_REQUIRE_REFERENCE=1 but {why}");
    println!("skipped: {why}");
    None
}

/// A JSON array of numbers as `f64`s.
pub(crate) fn floats(value: &Value) -> Vec<f64> {
    value
        .as_array()
        .map(|a| a.iter().filter_map(Value::as_f64).collect())
        .unwrap_or_default()
}

/// A JSON array of non-negative integers as `u32`s.
pub(crate) fn codes(value: &Value) -> Vec<u32> {
    value
        .as_array()
        .map(|a| {
            a.iter()
                .filter_map(Value::as_u64)
                .map(|v| v as u32)
                .collect()
        })
        .unwrap_or_default()
}

/// Whether `a` is within `tol` of `b`, relative to `|b|` (so 0 only
/// matches 0).
pub(crate) fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs()
}
