//! Tests of the ledger as a whole: files on disk, several handles, and
//! tampering done with plain SQL the way someone hiding a look would.

use std::path::{Path, PathBuf};

use chrono::{TimeZone, Utc};
use rusqlite::Connection;
use serde_json::json;

use super::*;
use crate::exit;

fn provenance() -> Provenance {
    Provenance {
        user: "ana".into(),
        host: "lab-1".into(),
        tool_version: "0.1.0".into(),
        plan_path: "plans/p.toml".into(),
        git_commit: Some("c".repeat(40)),
        git_dirty: Some(false),
    }
}

fn selection(i: u32) -> NewEntry {
    NewEntry {
        kind: EntryKind::Selection,
        timestamp: Utc.with_ymd_and_hms(2024, 1, 1, 0, 0, 0).unwrap()
            + chrono::Duration::seconds(i.into()),
        plan_hash: format!("plan-{i}"),
        data_file: "data-1".into(),
        partition: "seal-1".into(),
        result_hash: format!("result-{i}"),
        body: json!({"chosen": "ridge", "score": 0.5, "i": i}),
        sealed_rows: Vec::new(),
        provenance: provenance(),
    }
}

fn opening(i: u32, partition: &str, rows: &[&str]) -> NewEntry {
    NewEntry {
        kind: EntryKind::Opening,
        partition: partition.into(),
        sealed_rows: rows.iter().map(|r| r.to_string()).collect(),
        body: json!({"score": 0.75, "i": i}),
        ..selection(i)
    }
}

fn temp_ledger() -> (tempfile::TempDir, Ledger) {
    let dir = tempfile::tempdir().unwrap();
    let ledger = Ledger::open(&dir.path().join("ledger/holdfast.sqlite")).unwrap();
    (dir, ledger)
}

/// A ledger with entries 1..=4: selection, opening, selection, opening.
fn four_entries() -> (tempfile::TempDir, Ledger) {
    let (dir, ledger) = temp_ledger();
    ledger.append(selection(1)).unwrap();
    ledger
        .append(opening(2, "seal-1", &["r1", "r2", "r3"]))
        .unwrap();
    ledger.append(selection(3)).unwrap();
    ledger.append(opening(4, "seal-1", &["r2", "r4"])).unwrap();
    (dir, ledger)
}

/// A plain SQLite connection with the append-only triggers dropped, as a
/// tamperer would have it.
fn tamper(path: &Path, sql: &str) {
    let conn = Connection::open(path).unwrap();
    conn.execute_batch(
        "DROP TRIGGER entry_no_update; DROP TRIGGER entry_no_delete;
         DROP TRIGGER entry_body_no_update; DROP TRIGGER entry_body_no_delete;
         DROP TRIGGER exposure_no_update; DROP TRIGGER exposure_no_delete;
         DROP TRIGGER job_no_update;",
    )
    .unwrap();
    conn.execute_batch(sql).unwrap();
}

fn first_problem(ledger: &Ledger) -> (ProblemKind, Option<u64>) {
    let v = ledger.verify(None).unwrap();
    let p = v.first_problem().expect("a problem was expected");
    (p.kind, p.seq)
}

#[test]
fn appended_entries_read_back_unchanged() {
    let (_dir, ledger) = temp_ledger();
    let mut new = opening(1, "seal-1", &["r2", "r1", "r2"]);
    new.timestamp = Utc.timestamp_opt(1_700_000_000, 123_456_789).unwrap();
    let recorded = ledger.append(new.clone()).unwrap();
    assert_eq!(
        recorded.sealed_rows,
        ["r1", "r2", "r2"],
        "sorted, copies kept"
    );
    assert_eq!(
        recorded.timestamp,
        Utc.timestamp_opt(1_700_000_000, 123_456_000).unwrap()
    );
    let read = ledger.entry("1").unwrap();
    assert_eq!(read, recorded);
    assert_eq!(
        (read.body, read.provenance, read.kind),
        (new.body, new.provenance, new.kind)
    );
    assert_eq!(ledger.list().unwrap(), vec![recorded.meta()]);
    assert_eq!(ledger.list().unwrap()[0].sealed_row_count, 3);
}

#[test]
fn entries_link_to_their_predecessor() {
    let (dir, ledger) = four_entries();
    let entries: Vec<Entry> = (1..=4)
        .map(|s| ledger.entry(&s.to_string()).unwrap())
        .collect();
    assert_eq!(entries[0].prev, GENESIS);
    for pair in entries.windows(2) {
        assert_eq!(pair[1].prev, pair[0].hash);
        assert_eq!(pair[1].seq, pair[0].seq + 1);
    }
    for e in &entries {
        assert_eq!(e.hash.len(), 64);
        assert!(
            e.hash
                .bytes()
                .all(|b| b.is_ascii_hexdigit() && !b.is_ascii_uppercase())
        );
    }
    assert_eq!(
        ledger.head().unwrap().as_deref(),
        Some(entries[3].hash.as_str())
    );
    drop(ledger);
    let again = Ledger::open_existing(&dir.path().join("ledger/holdfast.sqlite")).unwrap();
    assert_eq!(again.list().unwrap().len(), 4);
}

#[test]
fn a_clean_chain_verifies_and_proves_its_heads() {
    let (_dir, ledger) = four_entries();
    let second = ledger.entry("2").unwrap().hash;
    let v = ledger.verify(Some(&second.to_ascii_uppercase())).unwrap();
    assert!(v.is_intact(), "{:?}", v.problems);
    assert_eq!(
        (v.entries, v.head_check),
        (4, Some(HeadCheck::Proven { seq: 2 }))
    );
    assert_eq!(v.head, ledger.head().unwrap());
    let empty = temp_ledger().1.verify(None).unwrap();
    assert!(empty.is_intact() && empty.entries == 0 && empty.head.is_none());
}

#[test]
fn an_edited_score_is_found_at_its_entry() {
    let (_dir, ledger) = four_entries();
    tamper(
        ledger.path(),
        "UPDATE entry_body SET body = json_set(body, '$.score', 0.99) WHERE seq = 2",
    );
    let v = ledger.verify(None).unwrap();
    assert_eq!(v.problems.len(), 1, "{:?}", v.problems);
    assert_eq!(
        first_problem(&ledger),
        (ProblemKind::ContentChanged, Some(2))
    );
    assert!(
        v.problems[0]
            .to_string()
            .starts_with("entry 2: content changed")
    );
}

#[test]
fn every_tampering_is_named_at_its_first_entry() {
    let cases: [(&str, ProblemKind, u64); 8] = [
        (
            "DELETE FROM entry WHERE seq = 2",
            ProblemKind::MissingEntry,
            2,
        ),
        (
            "DELETE FROM entry WHERE seq = 1",
            ProblemKind::MissingEntry,
            1,
        ),
        (
            "UPDATE entry SET seq = -1 WHERE seq = 2; UPDATE entry SET seq = 2 WHERE seq = 3;
             UPDATE entry SET seq = 3 WHERE seq = -1;",
            ProblemKind::OutOfOrder,
            2,
        ),
        (
            "UPDATE exposure SET row_hash = 'r9' WHERE seq = 2 AND row_hash = 'r1'",
            ProblemKind::ContentChanged,
            2,
        ),
        (
            "DELETE FROM exposure WHERE seq = 4 AND row_hash = 'r4'",
            ProblemKind::ContentChanged,
            4,
        ),
        (
            "INSERT INTO exposure VALUES ('r7', 3, 1)",
            ProblemKind::ContentChanged,
            3,
        ),
        (
            "UPDATE entry SET prev = '00ff' WHERE seq = 3",
            ProblemKind::LinkBroken,
            3,
        ),
        // The last opening removed, its exposure rows left behind.
        (
            "DELETE FROM entry WHERE seq = 4",
            ProblemKind::MissingEntry,
            4,
        ),
    ];
    for (sql, kind, seq) in cases {
        let (_dir, ledger) = four_entries();
        tamper(ledger.path(), sql);
        assert_eq!(first_problem(&ledger), (kind, Some(seq)), "{sql}");
    }
}

#[test]
fn undecodable_rows_are_problems_not_failures() {
    for sql in [
        "UPDATE entry_body SET body = 'not json' WHERE seq = 3",
        "UPDATE entry SET kind = 'peek' WHERE seq = 3",
        "UPDATE entry SET timestamp = 'yesterday' WHERE seq = 3",
        "UPDATE entry SET git_dirty = 'maybe' WHERE seq = 3",
        "UPDATE entry SET sealed_row_count = 5 WHERE seq = 3",
    ] {
        let (_dir, ledger) = four_entries();
        tamper(ledger.path(), sql);
        assert_eq!(
            first_problem(&ledger),
            (ProblemKind::ContentChanged, Some(3)),
            "{sql}"
        );
        let err = ledger.entry("3").unwrap_err();
        assert_eq!(err.exit_code(), exit::INTEGRITY, "{sql}: {err}");
    }
}

/// Rewrite entry 1's body and recompute every hash after it: the chain is
/// consistent again, and only a head recorded before shows the rewrite.
#[test]
fn a_rewritten_history_is_caught_by_an_old_head() {
    let (_dir, ledger) = four_entries();
    let old_head = ledger.head().unwrap().unwrap();
    let old_second = ledger.entry("2").unwrap().hash;
    let mut prev = GENESIS.to_string();
    let mut script = String::new();
    for seq in 1..=4 {
        let mut e = ledger.entry(&seq.to_string()).unwrap();
        if seq == 1 {
            e.body = json!({"chosen": "tree", "score": 0.9});
        }
        e.prev = prev;
        e.hash = entry_hash(&e).unwrap();
        script += &format!(
            "UPDATE entry_body SET body = '{}' WHERE seq = {seq};
             UPDATE entry SET prev = '{}', hash = '{}' WHERE seq = {seq};",
            crate::canon::canonical_json(&e.body).unwrap(),
            e.prev,
            e.hash
        );
        prev = e.hash;
    }
    tamper(ledger.path(), &script);
    assert!(
        ledger.verify(None).unwrap().is_intact(),
        "consistent rewrite"
    );
    for head in [old_head, old_second] {
        let v = ledger.verify(Some(&head)).unwrap();
        assert_eq!(v.head_check, Some(HeadCheck::NotFound));
        assert_eq!(
            v.first_problem().map(|p| p.kind),
            Some(ProblemKind::HeadNotFound)
        );
    }
}

#[test]
fn a_head_after_a_broken_entry_is_not_proven() {
    let (_dir, ledger) = four_entries();
    let head = ledger.head().unwrap().unwrap();
    let first = ledger.entry("1").unwrap().hash;
    tamper(
        ledger.path(),
        "UPDATE entry SET partition = 'seal-2' WHERE seq = 2",
    );
    let check = |h: &str| ledger.verify(Some(h)).unwrap().head_check;
    assert_eq!(check(&head), Some(HeadCheck::Unproven { seq: 4 }));
    assert_eq!(check(&first), Some(HeadCheck::Proven { seq: 1 }));
    let err = ledger.verify(Some("abcd")).unwrap_err();
    assert!(matches!(err, LedgerError::BadHead { .. }), "{err}");
}

#[test]
fn two_writers_at_once_both_land_on_one_chain() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ledger/holdfast.sqlite");
    let writers: Vec<_> = (0..2u32)
        .map(|w| {
            let path = path.clone();
            std::thread::spawn(move || {
                let ledger = Ledger::open(&path).unwrap();
                for i in 0..50 {
                    ledger.append(selection(w * 1000 + i)).unwrap();
                }
            })
        })
        .collect();
    for w in writers {
        w.join().unwrap();
    }
    let ledger = Ledger::open_existing(&path).unwrap();
    let list = ledger.list().unwrap();
    assert_eq!(list.len(), 100);
    assert!(list.iter().enumerate().all(|(i, m)| m.seq == i as u64 + 1));
    let v = ledger.verify(None).unwrap();
    assert!(v.is_intact() && v.entries == 100, "{:?}", v.problems);
}

/// The file's bytes, read after every other connection to it was closed
/// (the last close folds the write-ahead log into the file).
fn settled_bytes(path: &Path) -> Vec<u8> {
    std::fs::read(path).unwrap()
}

#[test]
fn a_newer_schema_is_refused_and_left_unchanged() {
    let (dir, ledger) = four_entries();
    let path = ledger.path().to_path_buf();
    drop(ledger);
    Connection::open(&path)
        .unwrap()
        .pragma_update(None, "user_version", 99)
        .unwrap();
    let before = settled_bytes(&path);
    for result in [Ledger::open(&path), Ledger::open_existing(&path)] {
        let err = result.unwrap_err();
        let text = err.to_string();
        assert!(text.contains("schema 99, this one reads up to 1"), "{text}");
        assert!(text.contains(&path.display().to_string()) && text.ends_with("upgrade holdfast"));
        assert_eq!(err.exit_code(), exit::USER);
    }
    assert_eq!(settled_bytes(&path), before);
    drop(dir);
}

#[test]
fn files_that_are_not_ledgers_are_refused_and_left_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let csv = dir.path().join("readings.csv");
    std::fs::write(&csv, "a,b\n1,2\n").unwrap();
    let foreign = dir.path().join("other.sqlite");
    Connection::open(&foreign)
        .unwrap()
        .execute_batch("CREATE TABLE t (x); INSERT INTO t VALUES (1);")
        .unwrap();
    for (path, phrase) in [
        (&csv, "is not an SQLite file"),
        (&foreign, "not a holdfast ledger"),
    ] {
        let before = settled_bytes(path);
        for result in [Ledger::open(path), Ledger::open_existing(path)] {
            let err = result.unwrap_err();
            let text = err.to_string();
            assert!(
                text.contains(&path.display().to_string()) && text.contains(phrase),
                "{text}"
            );
            assert_eq!(err.exit_code(), exit::USER);
        }
        assert_eq!(settled_bytes(path), before, "{}", path.display());
    }
}

#[test]
fn an_empty_file_becomes_a_new_ledger() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("new.sqlite");
    std::fs::write(&path, b"").unwrap();
    let err = Ledger::open_existing(&path).unwrap_err();
    assert!(matches!(err, LedgerError::NotFound { .. }), "{err}");
    let ledger = Ledger::open(&path).unwrap();
    ledger.append(selection(1)).unwrap();
    assert_eq!(ledger.list().unwrap().len(), 1);
}

#[test]
fn a_missing_ledger_is_not_created_by_reading() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ledger/holdfast.sqlite");
    let err = Ledger::open_existing(&path).unwrap_err();
    let text = err.to_string();
    assert!(text.contains(&path.display().to_string()), "{text}");
    assert!(
        text.contains("no run has recorded anything there yet"),
        "{text}"
    );
    assert_eq!(err.exit_code(), exit::USER);
    assert!(!dir.path().join("ledger").exists());
}

#[test]
fn a_read_only_handle_refuses_to_write() {
    let (_dir, ledger) = four_entries();
    let reader = Ledger::open_existing(ledger.path()).unwrap();
    let err = reader.append(selection(9)).unwrap_err();
    assert!(matches!(err, LedgerError::ReadOnly { .. }), "{err}");
    assert_eq!(ledger.list().unwrap().len(), 4);
}

/// True when this process can create files in `folder` (root can, whatever
/// the permission bits say).
fn can_write_in(folder: &Path) -> bool {
    let probe = folder.join("probe");
    let ok = std::fs::write(&probe, b"").is_ok();
    let _ = std::fs::remove_file(&probe);
    ok
}

#[test]
fn a_read_only_folder_gives_a_clear_error() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("locked");
    std::fs::create_dir(&folder).unwrap();
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o555)).unwrap();
    let mut places: Vec<PathBuf> = Vec::new();
    if can_write_in(&folder) {
        eprintln!("note: permission bits do not stop this user (root); checking /sys only");
    } else {
        places.push(folder.join("holdfast.sqlite"));
    }
    // sysfs refuses new files even to root (Linux sysfs documentation).
    if Path::new("/sys").is_dir() && !can_write_in(Path::new("/sys")) {
        places.push(PathBuf::from("/sys/holdfast.sqlite"));
    }
    if places.is_empty() {
        eprintln!("skipped: no folder this process cannot write to");
    }
    for path in places {
        let err = Ledger::open(&path).unwrap_err();
        let text = err.to_string();
        assert!(matches!(err, LedgerError::ReadOnly { .. }), "{text}");
        assert!(
            text.contains(&path.display().to_string()) && text.contains("--ledger"),
            "{text}"
        );
        assert_eq!(err.exit_code(), exit::USER);
    }
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o755)).unwrap();
}

#[test]
fn a_folder_that_cannot_be_made_gives_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("plain-file");
    std::fs::write(&file, b"x").unwrap();
    let path = file.join("ledger/holdfast.sqlite");
    let err = Ledger::open(&path).unwrap_err();
    let text = err.to_string();
    assert!(matches!(err, LedgerError::CreateFolder { .. }), "{text}");
    assert!(
        text.starts_with(&format!(
            "cannot create folder {}",
            file.join("ledger").display()
        )),
        "{text}"
    );
}

/// Append selections until two hashes share their first four characters.
fn ledger_with_shared_prefix() -> (tempfile::TempDir, Ledger, String, [u64; 2]) {
    let (dir, ledger) = temp_ledger();
    let mut seen = std::collections::HashMap::new();
    for i in 0..5000 {
        let e = ledger.append(selection(i)).unwrap();
        if let Some(first) = seen.insert(e.hash[..4].to_string(), e.seq) {
            let prefix = e.hash[..4].to_string();
            return (dir, ledger, prefix, [first, e.seq]);
        }
    }
    panic!("no shared prefix in 5000 hashes (birthday bound says ~320 suffice)");
}

#[test]
fn entry_ids_resolve_as_documented() {
    let (_dir, ledger, prefix, [a, b]) = ledger_with_shared_prefix();
    let hash_a = ledger.entry(&a.to_string()).unwrap().hash;
    assert_eq!(ledger.entry(&hash_a[..12]).unwrap().seq, a);
    assert_eq!(ledger.entry(&hash_a.to_ascii_uppercase()).unwrap().seq, a);
    assert_eq!(ledger.entry("latest").unwrap().seq, b);
    match ledger.entry(&prefix).unwrap_err() {
        LedgerError::AmbiguousEntry { candidates, .. } => {
            assert_eq!(candidates.len(), 2);
            assert!(
                candidates[0].starts_with(&format!("entry {a} (")),
                "{candidates:?}"
            );
            assert!(
                candidates[1].starts_with(&format!("entry {b} (")),
                "{candidates:?}"
            );
        }
        other => panic!("expected an ambiguous id, got {other}"),
    }
    for unknown in ["0", "999999", "ffffffffffff"] {
        let err = ledger.entry(unknown).unwrap_err();
        assert!(
            matches!(err, LedgerError::UnknownEntry { .. }),
            "{unknown}: {err}"
        );
        assert_eq!(err.exit_code(), exit::USER);
    }
    assert!(matches!(
        ledger.entry("abc").unwrap_err(),
        LedgerError::BadEntrySpec { .. }
    ));
    let latest_of_empty = temp_ledger().1.entry("latest").unwrap_err();
    assert!(
        matches!(latest_of_empty, LedgerError::Empty { .. }),
        "{latest_of_empty}"
    );
}

#[test]
fn exposure_counts_openings_per_row() {
    let (_dir, ledger) = four_entries();
    ledger
        .append(opening(5, "seal-2", &["r2", "r2", "r5"]))
        .unwrap();
    // By hand from four_entries: r1 in opening 2; r2 in 2, 4 and 5 (twice in
    // 5, one opening); r3 in 2; r4 in 4; r5 in 5; r6 nowhere.
    let rows: Vec<String> = ["r1", "r2", "r3", "r4", "r5", "r6"]
        .map(String::from)
        .to_vec();
    assert_eq!(ledger.exposure(&rows).unwrap(), [1, 3, 1, 1, 1, 0]);
}

#[test]
fn openings_are_found_by_partition_and_by_data_file() {
    let (_dir, ledger) = four_entries();
    let mut other = opening(5, "seal-2", &["r9"]);
    other.data_file = "data-2".into();
    ledger.append(other).unwrap();
    let seqs = |v: Vec<Entry>| v.iter().map(|e| e.seq).collect::<Vec<_>>();
    assert_eq!(seqs(ledger.openings("seal-1").unwrap()), [2, 4]);
    assert_eq!(seqs(ledger.openings("seal-2").unwrap()), [5]);
    assert_eq!(seqs(ledger.openings("seal-3").unwrap()), Vec::<u64>::new());
    assert_eq!(seqs(ledger.openings_of_data("data-1").unwrap()), [2, 4]);
    assert_eq!(seqs(ledger.openings_of_data("data-2").unwrap()), [5]);
    assert_eq!(
        ledger.openings("seal-1").unwrap()[1].sealed_rows,
        ["r2", "r4"]
    );
}

#[test]
fn a_selection_with_sealed_rows_is_refused() {
    let (_dir, ledger) = temp_ledger();
    let mut bad = selection(1);
    bad.sealed_rows = vec!["r1".into()];
    let err = ledger.append(bad).unwrap_err();
    assert_eq!(err.exit_code(), exit::INTERNAL, "{err}");
    assert!(ledger.list().unwrap().is_empty());
}

fn job(id: &str, result: &str) -> StoredJob {
    StoredJob {
        id: id.into(),
        result: result.into(),
        seconds: 0.25,
    }
}

#[test]
fn cached_jobs_are_kept_once_and_read_back() {
    let (_dir, ledger) = temp_ledger();
    ledger
        .store_jobs(&[
            job("j2", r#"{"score":0.5}"#),
            job("j1", r#"{"score":0.25}"#),
        ])
        .unwrap();
    ledger
        .store_jobs(&[job("j1", r#"{"score":0.99}"#), job("j3", "{}")])
        .unwrap();
    let ids: Vec<String> = ["j1", "j2", "j3", "j4"].map(String::from).to_vec();
    let got = ledger.jobs(&ids).unwrap();
    assert_eq!(got.keys().collect::<Vec<_>>(), ["j1", "j2", "j3"]);
    assert_eq!(
        got["j1"],
        job("j1", r#"{"score":0.25}"#),
        "the first result stays"
    );
    assert!(
        ledger
            .store_jobs(&[StoredJob {
                seconds: f64::NAN,
                ..job("j5", "{}")
            }])
            .is_err()
    );
    let v = ledger.verify(None).unwrap();
    assert!(v.is_intact() && v.jobs_checked == 3, "{v:?}");
}

#[test]
fn a_tampered_cache_is_noticed() {
    let (_dir, ledger) = temp_ledger();
    ledger
        .store_jobs(&[job("j1", r#"{"score":0.25}"#), job("j2", "{}")])
        .unwrap();
    tamper(
        ledger.path(),
        r#"UPDATE job SET result = '{"score":0.95}' WHERE id = 'j1'"#,
    );
    let err = ledger.jobs(&["j1".to_string()]).unwrap_err();
    assert!(matches!(err, LedgerError::CacheTampered { .. }), "{err}");
    assert_eq!(err.exit_code(), exit::INTEGRITY);
    assert!(ledger.jobs(&["j2".to_string()]).is_ok());
    let v = ledger.verify(None).unwrap();
    let kinds: Vec<_> = v
        .problems
        .iter()
        .map(|p| (p.kind, p.job.as_deref()))
        .collect();
    assert_eq!(kinds, [(ProblemKind::CacheMismatch, Some("j1"))]);
}

#[test]
fn a_deleted_opening_is_named_once() {
    let (_dir, ledger) = four_entries();
    tamper(ledger.path(), "DELETE FROM entry WHERE seq = 2");
    let v = ledger.verify(None).unwrap();
    let texts: Vec<String> = v.problems.iter().map(Problem::to_string).collect();
    assert_eq!(texts, ["entry 2: missing entry: entry 2 is gone"]);
}

#[test]
fn errors_can_cross_threads() {
    // anyhow in the binary needs Send + Sync + 'static errors.
    fn assert_error<T: std::error::Error + Send + Sync + 'static>() {}
    assert_error::<LedgerError>();
    fn assert_send<T: Send>() {}
    assert_send::<Ledger>();
}

#[test]
fn a_deleted_last_selection_leaves_its_body_behind() {
    let (_dir, ledger) = four_entries();
    ledger.append(selection(5)).unwrap();
    tamper(ledger.path(), "DELETE FROM entry WHERE seq = 5");
    assert_eq!(first_problem(&ledger), (ProblemKind::MissingEntry, Some(5)));
    let (_dir, ledger) = four_entries();
    tamper(ledger.path(), "DELETE FROM entry_body WHERE seq = 3");
    assert_eq!(
        first_problem(&ledger),
        (ProblemKind::ContentChanged, Some(3))
    );
}

#[test]
fn reading_leaves_no_files_behind() {
    let (dir, ledger) = four_entries();
    let path = ledger.path().to_path_buf();
    drop(ledger);
    let reader = Ledger::open_existing(&path).unwrap();
    reader.verify(None).unwrap();
    drop(reader);
    let names: Vec<String> = std::fs::read_dir(dir.path().join("ledger"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, ["holdfast.sqlite"]);
}

#[test]
fn processes_creating_the_same_ledger_at_once_all_open_it() {
    // Eight connections race to create one new ledger: each must open it
    // (none may see a half-migrated file as "not a ledger", or fail to
    // switch to WAL while another holds the lock), and every append lands.
    for round in 0..20 {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("race.sqlite");
        let handles: Vec<_> = (0..8)
            .map(|i| {
                let path = path.clone();
                std::thread::spawn(move || {
                    Ledger::open(&path).and_then(|l| l.append(selection(i)).map(|_| ()))
                })
            })
            .collect();
        for h in handles {
            let outcome = h.join().expect("thread");
            assert!(outcome.is_ok(), "round {round}: {outcome:?}");
        }
        let ledger = Ledger::open_existing(&path).expect("open");
        assert_eq!(ledger.list().expect("list").len(), 8);
        assert!(ledger.verify(None).expect("verify").is_intact());
    }
}

/// The content check as the walk made it before it read bodies in place:
/// each entry's sealed rows asked for with a query of their own, every
/// body parsed and re-written to hash it. The content problems it finds,
/// by entry.
fn content_problems_the_slow_way(ledger: &Ledger) -> Vec<(u64, String)> {
    let sql = format!("{} ORDER BY e.seq", stored::SELECT_ENTRIES);
    let mut stmt = ledger.conn.prepare(&sql).unwrap();
    let mut rows = stmt.query([]).unwrap();
    let mut found = Vec::new();
    while let Some(row) = rows.next().unwrap() {
        let seq: i64 = row.get(0).unwrap();
        let hash: Option<String> = row.get(1).ok();
        let sealed = stored::sealed_rows(&ledger.conn, seq).unwrap();
        let detail = match sealed.and_then(|r| stored::read_entry(row, r)) {
            Err(reason) => Some(reason),
            Ok(e) => match entry_hash(&e) {
                Ok(h) if Some(&h) == hash.as_ref() => None,
                Ok(_) => Some("its stored content no longer hashes to its recorded hash".into()),
                Err(e) => Some(e.to_string()),
            },
        };
        found.extend(detail.map(|d| (seq as u64, d)));
    }
    found
}

fn content_problems(ledger: &Ledger) -> Vec<(u64, String)> {
    let v = ledger.verify(None).unwrap();
    let content = v.problems.into_iter();
    let content = content.filter(|p| p.kind == ProblemKind::ContentChanged);
    content.map(|p| (p.seq.unwrap(), p.detail)).collect()
}

/// The hash entry `seq` would have with `body` as its stored text, taken
/// over that text as it stands, canonical or not: what someone who hashed
/// stored bytes would write.
fn hash_over_text(ledger: &Ledger, seq: u64, body: &str) -> String {
    let e = ledger.list().unwrap().remove(seq as usize - 1);
    let rows = stored::sealed_rows(&ledger.conn, seq as i64)
        .unwrap()
        .unwrap();
    let rows = entry::sealed_rows_hash(&rows).unwrap();
    entry::hash_with_canonical_body(&entry::Head::of_meta(&e), body, &rows).unwrap()
}

#[test]
fn the_walk_judges_content_as_parsing_every_body_does() {
    // Each tampering touches content only (no numbers, links or order),
    // so the walk checks every entry's content; `true` when it changes
    // what the entry hashes to.
    let cases = [
        ("", false),
        // Re-formatted by hand, content unchanged: verifies, as before.
        (
            r#"UPDATE entry_body SET body = '{ "i" : 2 , "score" : 0.75 }' WHERE seq = 2"#,
            false,
        ),
        (
            r#"UPDATE entry_body SET body = '{"score":7.5e-1,"i":2}' WHERE seq = 2"#,
            false,
        ),
        (
            r#"UPDATE entry_body SET body = '{"i":2,"score":0.1,"score":0.75}' WHERE seq = 2"#,
            false,
        ),
        (
            r#"UPDATE entry_body SET body = '{"i":2,"sc\u006fre":0.75}' WHERE seq = 2"#,
            false,
        ),
        (
            "UPDATE entry SET timestamp = '2024-01-01T00:00:02.000000+00:00' WHERE seq = 2",
            false,
        ),
        // Rows of a number no entry has are no entry's content.
        ("INSERT INTO exposure VALUES ('r9', 2.5, 1)", false),
        // Re-formatted and changed.
        (
            r#"UPDATE entry_body SET body = '{ "i" : 2 , "score" : 0.99 }' WHERE seq = 2"#,
            true,
        ),
        (
            r#"UPDATE entry_body SET body = '{"i":2,"score":0.750001}' WHERE seq = 2"#,
            true,
        ),
        // Not JSON, not text, other JSON, gone.
        (
            "UPDATE entry_body SET body = '{\"i\":2,' WHERE seq = 2",
            true,
        ),
        (
            "UPDATE entry_body SET body = CAST(body AS BLOB) WHERE seq = 3",
            true,
        ),
        ("UPDATE entry_body SET body = 7 WHERE seq = 3", true),
        ("DELETE FROM entry_body WHERE seq = 1", true),
        // Exposure rows that do not decode, or are extra, or missing.
        (
            "UPDATE exposure SET copies = 0 WHERE seq = 2 AND row_hash = 'r1'",
            true,
        ),
        (
            "UPDATE exposure SET copies = 2 WHERE seq = 2 AND row_hash = 'r1'",
            true,
        ),
        (
            "UPDATE exposure SET row_hash = CAST('r1' AS BLOB) WHERE seq = 2 AND row_hash = 'r1'",
            true,
        ),
        (
            "UPDATE exposure SET seq = 2.5 WHERE seq = 2 AND row_hash = 'r1'",
            true,
        ),
        ("INSERT INTO exposure VALUES ('r0', 2, 1)", true),
        // Columns that no longer decode or no longer match.
        ("UPDATE entry SET sealed_row_count = 2 WHERE seq = 2", true),
        ("UPDATE entry SET timestamp = 'later' WHERE seq = 2", true),
        ("UPDATE entry SET format = 2 WHERE seq = 4", true),
        ("UPDATE entry SET user = 'eve' WHERE seq = 4", true),
        ("UPDATE entry SET hash = upper(hash) WHERE seq = 4", true),
    ];
    for (sql, changed) in cases {
        let (_dir, ledger) = four_entries();
        if !sql.is_empty() {
            tamper(ledger.path(), sql);
        }
        let slow = content_problems_the_slow_way(&ledger);
        assert_eq!(content_problems(&ledger), slow, "{sql}");
        assert_eq!(!slow.is_empty(), changed, "{sql}: {slow:?}");
        assert_eq!(ledger.verify(None).unwrap().is_intact(), !changed, "{sql}");
    }
}

#[test]
fn a_hash_forged_over_non_canonical_text_is_caught() {
    // A tamperer edits the last body and writes a hash taken over the
    // stored text as it now stands; the hash is defined over the
    // canonical form, so the entry does not verify. Over canonical text
    // the same forgery is a consistent rewrite.
    for (body, intact) in [
        (r#"{"score": 0.99, "i": 4}"#, false),
        (r#"{"i":4,"score":0.99}"#, true),
    ] {
        let (_dir, ledger) = four_entries();
        let forged = hash_over_text(&ledger, 4, body);
        tamper(
            ledger.path(),
            &format!(
                "UPDATE entry_body SET body = '{body}' WHERE seq = 4;
                 UPDATE entry SET hash = '{forged}' WHERE seq = 4;"
            ),
        );
        assert_eq!(ledger.verify(None).unwrap().is_intact(), intact, "{body}");
        assert_eq!(
            content_problems(&ledger),
            content_problems_the_slow_way(&ledger)
        );
    }
}

#[test]
fn verify_reading_shows_every_entry_and_counts_exposure() {
    let (_dir, ledger) = four_entries();
    ledger
        .append(opening(5, "seal-2", &["r2", "r2", "r5"]))
        .unwrap();
    let mut seen = Vec::new();
    let read = ledger
        .verify_reading(|meta, body| seen.push((meta.clone(), body.to_string())))
        .unwrap();
    assert_eq!(read.verification, ledger.verify(None).unwrap());
    let metas: Vec<EntryMeta> = seen.iter().map(|(m, _)| m.clone()).collect();
    assert_eq!(metas, ledger.list().unwrap());
    for (meta, body) in &seen {
        let e = ledger.entry(&meta.hash).unwrap();
        assert_eq!(body, &crate::canon::canonical_json(&e.body).unwrap());
    }
    let rows: Vec<String> = ["r1", "r2", "r3", "r4", "r5", "r6"]
        .map(String::from)
        .to_vec();
    let counts: Vec<u32> = rows.iter().map(|r| read.exposure.openings(r)).collect();
    assert_eq!(counts, ledger.exposure(&rows).unwrap());
    // Rows of numbers no entry has still count, as `exposure` counts them.
    tamper(
        ledger.path(),
        "INSERT INTO exposure VALUES ('r6', 2.5, 1); INSERT INTO exposure VALUES ('r6', 99, 1);
         INSERT INTO exposure VALUES ('r6', -1, 1);",
    );
    let read = ledger.verify_reading(|_, _| {}).unwrap();
    assert_eq!(read.exposure.openings("r6"), 3);
    assert_eq!(ledger.exposure(&rows[5..]).unwrap(), [3]);
}

#[test]
fn reads_inside_a_snapshot_share_it() {
    let (_dir, ledger) = four_entries();
    let other = Ledger::open(ledger.path()).unwrap();
    let (before, after) = ledger
        .read_snapshot(|| {
            let before = ledger.list()?.len();
            other.append(selection(9)).unwrap();
            Ok((before, ledger.verify(None)?.entries))
        })
        .unwrap();
    assert_eq!((before, after), (4, 4));
    assert_eq!(ledger.verify(None).unwrap().entries, 5);
}

#[test]
fn orphans_are_found_as_one_condition_found_them() {
    // The query before it was split into one condition per index search.
    const ONE_CONDITION: &str = "SELECT seq FROM exposure WHERE seq < 1 OR seq > ?1 \
         UNION SELECT seq FROM entry_body WHERE seq < 1 OR seq > ?1 ORDER BY 1";
    let cases = [
        "",
        "DELETE FROM entry WHERE seq = 4",
        "INSERT INTO exposure VALUES ('r', 0, 1); INSERT INTO exposure VALUES ('r', -3, 2);
         INSERT INTO entry_body VALUES (9, '{}'); INSERT INTO entry_body VALUES (-1, '{}');",
        "INSERT INTO exposure VALUES ('r', 4.5, 1); INSERT INTO exposure VALUES ('r', 0.5, 1);
         INSERT INTO exposure VALUES ('r', 'x', 1); INSERT INTO exposure VALUES ('r', x'01', 1);
         INSERT INTO exposure VALUES ('r', 1e30, 1); INSERT INTO exposure VALUES ('s', 7, 1);",
    ];
    for sql in cases {
        let (_dir, ledger) = four_entries();
        if !sql.is_empty() {
            tamper(ledger.path(), sql);
        }
        let run = |query: &str| -> Vec<String> {
            let mut stmt = ledger.conn.prepare(query).unwrap();
            let rows = stmt.query_map([3i64], |r| r.get::<_, rusqlite::types::Value>(0));
            rows.unwrap().map(|v| format!("{:?}", v.unwrap())).collect()
        };
        assert_eq!(run(verify::ORPHANS), run(ONE_CONDITION), "{sql}");
    }
}
