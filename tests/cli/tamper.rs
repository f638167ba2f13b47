//! Tampering with the ledger through plain SQLite is detected by `verify`
//! (exit 3) and reported first by `audit`.

use crate::support::{Fixture, run};

fn ok(fx: &Fixture, args: &[&str]) -> String {
    let (code, stdout, stderr) = run(fx.cmd().args(args));
    assert_eq!(code, 0, "holdfast {args:?}: {stderr}");
    stdout
}

/// A ledger with two selections and one opening.
fn ledger() -> Fixture {
    let fx = Fixture::new();
    fx.write("plan.toml", &super::ledger_flow::plan());
    ok(&fx, &["run", "plan.toml"]);
    ok(&fx, &["unseal", "plan.toml", "--reason", "look"]);
    ok(&fx, &["run", "plan.toml"]);
    fx
}

/// Run SQL against the ledger as someone with any SQLite tool could, first
/// dropping the triggers that refuse updates and deletes.
fn tamper(fx: &Fixture, sql: &str) {
    let conn = rusqlite::Connection::open(fx.path("ledger.sqlite")).expect("open");
    let triggers: Vec<String> = {
        let mut st = conn
            .prepare("SELECT name FROM sqlite_master WHERE type = 'trigger'")
            .expect("prepare");
        st.query_map([], |r| r.get(0))
            .expect("query")
            .filter_map(Result::ok)
            .collect()
    };
    for t in triggers {
        conn.execute_batch(&format!("DROP TRIGGER \"{t}\""))
            .expect("drop trigger");
    }
    conn.execute_batch(sql).expect("tamper");
}

fn expect_detected(fx: &Fixture, fragment: &str) {
    let (code, stdout, stderr) = run(fx.cmd().arg("verify"));
    assert_eq!(code, 3, "verify must fail: {stdout}{stderr}");
    assert!(
        stdout.contains(fragment) || stderr.contains(fragment),
        "wanted {fragment:?}: {stdout}{stderr}"
    );
    let (_, audit, _) = run(fx.cmd().arg("audit"));
    assert!(
        audit
            .lines()
            .next()
            .is_some_and(|l| l.starts_with("CHAIN DOES NOT VERIFY")),
        "{audit}"
    );
}

#[test]
fn an_edited_score_is_detected() {
    let fx = ledger();
    tamper(
        &fx,
        "UPDATE entry_body SET body = replace(body, '\"score\":', '\"score\":0.99,\"was\":') WHERE seq = 2",
    );
    expect_detected(&fx, "entry 2");
}

#[test]
fn a_deleted_entry_is_detected() {
    let fx = ledger();
    tamper(
        &fx,
        "DELETE FROM entry WHERE seq = 2; DELETE FROM entry_body WHERE seq = 2;",
    );
    expect_detected(&fx, "entry");
}

#[test]
fn reordered_entries_are_detected() {
    let fx = ledger();
    tamper(
        &fx,
        "UPDATE entry SET seq = 100 WHERE seq = 1; UPDATE entry SET seq = 1 WHERE seq = 3; UPDATE entry SET seq = 3 WHERE seq = 100;
         UPDATE entry_body SET seq = 100 WHERE seq = 1; UPDATE entry_body SET seq = 1 WHERE seq = 3; UPDATE entry_body SET seq = 3 WHERE seq = 100;",
    );
    expect_detected(&fx, "entry 1");
}

#[test]
fn a_clean_ledger_verifies() {
    let fx = ledger();
    let out = ok(&fx, &["verify"]);
    assert!(out.starts_with("verified: 3 entries"), "{out}");
}
