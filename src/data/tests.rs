//! Tests of loading through the public entry points (`load`, `read_header`)
//! against small files written to a temporary folder.

use std::path::{Path, PathBuf};

use tempfile::TempDir;

use super::*;

const BASE: &str = "id,x,y,site,label\n1,0.5,2,north,no\n2,1.5,3,south,yes\n3,2.5,4,north,no\n";

fn spec(path: &Path) -> DataSpec {
    DataSpec {
        path: path.to_path_buf(),
        target: "label".into(),
        classification: true,
        features: vec!["x".into(), "y".into()],
        categorical: vec![],
        group: None,
        order: None,
        allow_missing: false,
    }
}

fn write(dir: &TempDir, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.path().join(name);
    std::fs::write(&path, bytes).expect("temp file");
    path
}

/// Load `text` as `data.csv` with the base spec changed by `edit`.
fn try_load(
    text: &[u8],
    edit: impl FnOnce(&mut DataSpec),
) -> (TempDir, Result<Dataset, DataError>) {
    let dir = TempDir::new().expect("temp dir");
    let path = write(&dir, "data.csv", text);
    let mut spec = spec(&path);
    edit(&mut spec);
    let result = load(&spec);
    (dir, result)
}

fn loaded(text: &str, edit: impl FnOnce(&mut DataSpec)) -> Dataset {
    match try_load(text.as_bytes(), edit) {
        (_, Ok(data)) => data,
        (_, Err(e)) => panic!("expected a data set, got: {e}"),
    }
}

/// The error message for `text`, with the temp folder shown as `DIR`.
fn message(text: &[u8], edit: impl FnOnce(&mut DataSpec)) -> String {
    match try_load(text, edit) {
        (dir, Err(e)) => e
            .to_string()
            .replace(&dir.path().display().to_string(), "DIR"),
        (_, Ok(_)) => panic!("expected an error"),
    }
}

fn set_features(names: &[&str]) -> Box<dyn FnOnce(&mut DataSpec)> {
    let names: Vec<String> = names.iter().map(|n| n.to_string()).collect();
    Box::new(move |s| s.features = names)
}

#[test]
fn errors_name_the_file_line_column_and_remedy() {
    type Edit = Box<dyn FnOnce(&mut DataSpec)>;
    let same: fn() -> Edit = || Box::new(|_| {});
    let cases: Vec<(&str, &str, Edit, &str)> = vec![
        (
            "empty file",
            "",
            same(),
            "data file DIR/data.csv is empty: it needs a header row naming the columns, then one row per case",
        ),
        (
            "blank lines only",
            "\n\n\r\n",
            same(),
            "data file DIR/data.csv is empty: it needs a header row naming the columns, then one row per case",
        ),
        (
            "header only",
            "id,x,y,site,label\n",
            same(),
            "data file DIR/data.csv has a header but no data rows: add rows, or point `[data] path` at the right file",
        ),
        (
            "duplicate header",
            "a,x,b,x\n1,2,3,4\n",
            same(),
            "data file DIR/data.csv line 1: column name `x` appears twice in the header (columns 2 and 4): rename one of them",
        ),
        (
            "ragged row",
            "id,x,y,site,label\n1,0.5,2,north,no\n2,1.5,south,yes\n",
            same(),
            "data file DIR/data.csv line 3: 4 cells, but the header has 5: fix that row (a stray or missing comma, or an unclosed quote, is the usual cause)",
        ),
        (
            "target missing",
            BASE,
            Box::new(|s| s.target = "lable".into()),
            "data file DIR/data.csv has no column `lable` (the target named in `[data] target`): did you mean `label`?",
        ),
        (
            "target missing, no near name",
            BASE,
            Box::new(|s| s.target = "outcome".into()),
            "data file DIR/data.csv has no column `outcome` (the target named in `[data] target`): the header has `id`, `x`, `y`, `site`, `label`",
        ),
        (
            "single class",
            "x,y,label\n1,2,no\n3,4,no\n",
            same(),
            "data file DIR/data.csv: the target column `label` has a single class (`no`) in every row: classification needs at least two classes; check `[data] target`",
        ),
        (
            "group missing",
            BASE,
            Box::new(|s| s.group = Some("sites".into())),
            "data file DIR/data.csv has no column `sites` (the group named in `[data] group`): did you mean `site`?",
        ),
        (
            "order missing",
            BASE,
            Box::new(|s| s.order = Some("time".into())),
            "data file DIR/data.csv has no column `time` (the order named in `[data] order`): the header has `id`, `x`, `y`, `site`, `label`",
        ),
        (
            "feature missing",
            BASE,
            set_features(&["x", "Y"]),
            "data file DIR/data.csv has no column `Y` (the feature named in `[data] features`): did you mean `y`?",
        ),
        (
            "semicolons",
            "x;y;label\n1;2;a\n",
            Box::new(|s| s.target = "lbl".into()),
            "data file DIR/data.csv has no column `lbl` (the target named in `[data] target`): the header is a single column `x;y;label`: the file must be comma-separated",
        ),
        (
            "non-numeric feature",
            BASE,
            set_features(&["x", "site"]),
            "data file DIR/data.csv line 2, column `site`: `north` is not a number: declare it in `categorical = [...]` or drop it from `features`",
        ),
        (
            "nan written",
            "x,y,label\n1,2,a\n3,nan,b\n",
            same(),
            "data file DIR/data.csv line 3, column `y`: `nan` is not a finite number: write a missing value as an empty cell or `NA`, or correct the value",
        ),
        (
            "missing cells",
            "x,y,label\n1,2,a\n,4,b\n5,NA,a\n",
            same(),
            "data file DIR/data.csv: 2 missing feature cells (empty or `NA`), the first at line 3, column `x`: set `[prep] impute = \"mean\"` or \"median\", or remove the rows",
        ),
        (
            "missing target",
            "x,y,label\n1,2,a\n3,4,NA\n",
            same(),
            "data file DIR/data.csv line 3: the target column `label` is empty there: every row needs a target value; fill it in or remove the row",
        ),
        (
            "missing group",
            "g,x,y,label\nu,1,2,a\n,3,4,b\n",
            Box::new(|s| s.group = Some("g".into())),
            "data file DIR/data.csv line 3: the group column `g` is empty there: every row needs a group value; fill it in or remove the row",
        ),
        (
            "missing order",
            "t,x,y,label\n1,1,2,a\n  ,3,4,b\n",
            Box::new(|s| s.order = Some("t".into())),
            "data file DIR/data.csv line 3: the order column `t` is empty there: every row needs a order value; fill it in or remove the row",
        ),
        (
            "order not numeric",
            "t,x,y,label\n1,1,2,a\n2024-01-02,3,4,b\n",
            Box::new(|s| s.order = Some("t".into())),
            "data file DIR/data.csv line 3, column `t`: `2024-01-02` is not a finite number, and the order column must be numeric (a time or sequence index): correct the value or choose another `[data] order` column",
        ),
        (
            "order infinite",
            "t,x,y,label\n1,1,2,a\ninf,3,4,b\n",
            Box::new(|s| s.order = Some("t".into())),
            "data file DIR/data.csv line 3, column `t`: `inf` is not a finite number, and the order column must be numeric (a time or sequence index): correct the value or choose another `[data] order` column",
        ),
        (
            "regression target nan",
            "x,y,label\n1,2,NaN\n",
            Box::new(|s| s.classification = false),
            "data file DIR/data.csv line 2, column `label`: `NaN` is not a finite number, and a regression target must be numeric: correct the value, or set `task = \"classification\"` if the column holds classes",
        ),
        (
            "regression target text",
            "x,y,label\n1,2,3.5\n3,4,high\n",
            Box::new(|s| s.classification = false),
            "data file DIR/data.csv line 3, column `label`: `high` is not a finite number, and a regression target must be numeric: correct the value, or set `task = \"classification\"` if the column holds classes",
        ),
        (
            "feature listed twice",
            BASE,
            set_features(&["x", "y", "x"]),
            "`[data] features` lists `x` more than once (data file DIR/data.csv): list each column once",
        ),
        (
            "feature is target",
            BASE,
            set_features(&["x", "label"]),
            "`[data] features` includes the target column `label` (data file DIR/data.csv): remove it from `features`; a model must not see its own answer",
        ),
        (
            "categorical not a feature",
            BASE,
            Box::new(|s| s.categorical = vec!["site".into()]),
            "`categorical` names `site`, which is not among `[data] features` (data file DIR/data.csv): add it to `features` or remove it from `categorical`",
        ),
    ];
    for (name, text, edit, expected) in cases {
        assert_eq!(message(text.as_bytes(), edit), expected, "case: {name}");
    }
}

#[test]
fn every_non_finite_spelling_is_an_error_not_a_missing_value() {
    // Spellings Rust's f64 parser accepts as NaN or infinity (std docs for
    // `f64::from_str`), plus an overflow to infinity.
    for value in ["nan", "NaN", "inf", "-inf", "+Infinity", "1e400"] {
        let text = format!("x,y,label\n1,2,a\n{value},4,b\n");
        let (_, result) = try_load(text.as_bytes(), |s| s.allow_missing = true);
        match result {
            Err(DataError::NonFinite {
                line,
                column,
                value: shown,
                ..
            }) => {
                assert_eq!((line, column.as_str(), shown.as_str()), (3, "x", value));
            }
            other => panic!("{value}: expected NonFinite, got {other:?}"),
        }
    }
}

#[test]
fn a_missing_file_names_its_path() {
    let dir = TempDir::new().expect("temp dir");
    let path = dir.path().join("sub").join("absent.csv");
    let err = load(&spec(&path)).expect_err("missing file");
    assert!(matches!(err, DataError::NotFound { .. }), "{err:?}");
    let text = err.to_string();
    assert!(text.contains(&path.display().to_string()), "{text}");
    assert!(text.contains("check `[data] path`"), "{text}");
    assert!(matches!(
        read_header(&path),
        Err(DataError::NotFound { .. })
    ));
}

#[test]
fn a_folder_is_unreadable_not_missing() {
    let dir = TempDir::new().expect("temp dir");
    let err = load(&spec(dir.path())).expect_err("a folder");
    assert!(matches!(err, DataError::Unreadable { .. }), "{err:?}");
    let text = err.to_string();
    assert!(text.starts_with(&format!(
        "failed to read data file {}: ",
        dir.path().display()
    )));
    assert!(text.ends_with("check that it is a readable file"), "{text}");
    assert!(matches!(
        read_header(dir.path()),
        Err(DataError::Unreadable { .. })
    ));
}

#[test]
fn invalid_utf8_names_the_line() {
    let text = b"x,y,label\n1,2,a\n3,4,\xFFb\n";
    assert_eq!(
        message(text, |_| {}),
        "data file DIR/data.csv line 3: the text is not valid UTF-8: save the file as UTF-8 text"
    );
    // A multi-byte character cut by a delimiter: each field is invalid even
    // though the fields joined would spell a valid `é` (C3 A9).
    let split = b"x,y,label\n1,2,\xC3,\xA9\n";
    let (_, result) = try_load(split, |s| s.features = vec!["x".into()]);
    assert!(
        matches!(result, Err(DataError::Ragged { .. })),
        "{result:?}"
    );
    let split = b"x,y,label\n1,\xC3,\xA9\n";
    let (_, result) = try_load(split, |s| s.features = vec!["x".into()]);
    assert!(
        matches!(result, Err(DataError::NotUtf8 { line: 2, .. })),
        "{result:?}"
    );
}

#[test]
fn line_numbers_count_the_header_blank_lines_and_quoted_line_breaks() {
    // Row starts: header 1, row 2, blank 3, a quoted two-line cell 4-5, row 6.
    let text = "a,b,label\n1,2,x\n\n\"two\nlines\",3,y\n4,oops,x\n";
    let (_, result) = try_load(text.as_bytes(), |s| s.features = vec!["b".into()]);
    match result {
        Err(DataError::NotNumeric {
            line,
            column,
            value,
            ..
        }) => {
            assert_eq!((line, column.as_str(), value.as_str()), (6, "b", "oops"));
        }
        other => panic!("expected NotNumeric, got {other:?}"),
    }
    let crlf = "a,b,label\r\n1,2,x\r\n3,,y\r\n";
    let (_, result) = try_load(crlf.as_bytes(), |s| s.features = vec!["b".into()]);
    assert!(
        matches!(
            result,
            Err(DataError::MissingCells {
                line: 3,
                count: 1,
                ..
            })
        ),
        "{result:?}"
    );
    let ragged = "a,b,label\r\n1,2,x\r\n\r\n3,4\r\n";
    let (_, result) = try_load(ragged.as_bytes(), |s| s.features = vec!["b".into()]);
    assert!(
        matches!(
            result,
            Err(DataError::Ragged {
                line: 4,
                cells: 2,
                expected: 3,
                ..
            })
        ),
        "{result:?}"
    );
    let lone_cr = "a,b,label\r1,2,x\r3,4,y\r5,,x\r";
    let (_, result) = try_load(lone_cr.as_bytes(), |s| s.features = vec!["b".into()]);
    assert!(
        matches!(
            result,
            Err(DataError::MissingCells {
                line: 4,
                count: 1,
                ..
            })
        ),
        "{result:?}"
    );
}

#[test]
fn long_values_are_cut_short_in_messages() {
    let long = "v".repeat(100);
    let text = format!("x,y,label\n{long},1,a\n");
    let msg = message(text.as_bytes(), |_| {});
    assert!(
        msg.contains(&format!("`{}...` is not a number", "v".repeat(40))),
        "{msg}"
    );
}

#[test]
fn features_follow_the_spec_order_with_trimmed_numbers() {
    let data = loaded("id,x,y,label\n1, 0.5 ,2,b\n2,-1e-3,\"3\",a\n", |s| {
        s.features = vec!["y".into(), "x".into()];
    });
    assert_eq!(data.header, ["id", "x", "y", "label"]);
    assert_eq!(data.feature_names, ["y", "x"]);
    assert_eq!(data.features, ndarray::array![[2.0, 0.5], [3.0, -0.001]]);
    assert_eq!(data.missing_cells, 0);
    assert_eq!(data.rows(), 2);
}

#[test]
fn class_codes_follow_the_sorted_text_of_the_classes() {
    // Byte order of the text, so "10" sorts before "9" and "B" before "a".
    let cases: [(&[&str], &[&str], &[u32]); 3] = [
        (
            &["zeta", "alpha", "mid", "alpha"],
            &["alpha", "mid", "zeta"],
            &[2, 0, 1, 0],
        ),
        (&["9", "10", "9"], &["10", "9"], &[1, 0, 1]),
        (&["a", "B"], &["B", "a"], &[1, 0]),
    ];
    for (labels, names, codes) in cases {
        let body: String = labels.iter().map(|l| format!("1,{l}\n")).collect();
        let data = loaded(&format!("x,label\n{body}"), |s| {
            s.features = vec!["x".into()]
        });
        assert_eq!(
            data.target,
            Target::Classes {
                codes: codes.to_vec(),
                names: names.iter().map(|n| n.to_string()).collect()
            },
            "{labels:?}"
        );
        assert_eq!(data.class_count(), names.len());
    }
}

#[test]
fn categorical_columns_expand_in_place_with_sorted_levels() {
    let text = "x,site,y,label\n1,south,2,a\n3,north,4,b\n5,,6,a\n7,NA,8,b\n9,east,10,a\n";
    let data = loaded(text, |s| {
        s.features = vec!["x".into(), "site".into(), "y".into()];
        s.categorical = vec!["site".into()];
        s.allow_missing = true;
    });
    assert_eq!(
        data.feature_names,
        ["x", "site=east", "site=north", "site=south", "y"]
    );
    assert_eq!(
        data.feature_kinds[1],
        FeatureKind::Indicator {
            column: "site".into(),
            level: "east".into()
        }
    );
    assert_eq!(
        data.feature_kinds[4],
        FeatureKind::Numeric { column: "y".into() }
    );
    let expected = ndarray::array![
        [1.0, 0.0, 0.0, 1.0, 2.0],
        [3.0, 0.0, 1.0, 0.0, 4.0],
        [5.0, 0.0, 0.0, 0.0, 6.0],
        [7.0, 0.0, 0.0, 0.0, 8.0],
        [9.0, 1.0, 0.0, 0.0, 10.0],
    ];
    assert_eq!(data.features, expected);
    assert_eq!(data.missing_cells, 2);
}

#[test]
fn missing_numeric_cells_are_nan_and_counted_when_allowed() {
    let data = loaded("x,y,label\n1,,a\nNA,4,b\n 5 , NA ,a\n", |s| {
        s.allow_missing = true
    });
    assert_eq!(data.missing_cells, 3);
    let nan: Vec<bool> = data.features.iter().map(|v| v.is_nan()).collect();
    assert_eq!(nan, [false, true, true, false, false, true]);
    assert_eq!(data.features[[2, 0]], 5.0);
}

#[test]
fn group_codes_are_sorted_and_order_and_regression_values_are_kept() {
    let text = "unit,t,x,y\nu2,3,1,0.5\nu10,1,2,-2\nu1,2.5,3,4e2\nu2,4,4,0\n";
    let data = loaded(text, |s| {
        s.target = "y".into();
        s.classification = false;
        s.features = vec!["x".into()];
        s.group = Some("unit".into());
        s.order = Some("t".into());
    });
    assert_eq!(data.group_names, ["u1", "u10", "u2"]);
    assert_eq!(data.group, Some(vec![2, 1, 0, 2]));
    assert_eq!(data.order, Some(vec![3.0, 1.0, 2.5, 4.0]));
    assert_eq!(data.target, Target::Values(vec![0.5, -2.0, 400.0, 0.0]));
    assert_eq!(data.classes(), None);
    assert_eq!(data.class_count(), 0);
}

#[test]
fn the_fingerprint_hashes_the_bytes_and_every_cell_of_each_row() {
    let text = "id,x,note,label\n1,0.5,\"a, quoted\",no\n2, 1.5 ,plain,yes\n";
    let data = loaded(text, |s| s.features = vec!["x".into()]);
    assert_eq!(
        data.fingerprint.file,
        blake3::hash(text.as_bytes()).to_hex().to_string()
    );
    assert_eq!(
        data.fingerprint.rows,
        [
            row_hash(&["1", "0.5", "a, quoted", "no"]),
            row_hash(&["2", "1.5", "plain", "yes"]),
        ]
    );
    // A cell the plan does not use still changes its row's hash.
    let edited = loaded(&text.replace("plain", "plane"), |s| {
        s.features = vec!["x".into()]
    });
    assert_eq!(edited.fingerprint.rows[0], data.fingerprint.rows[0]);
    assert_ne!(edited.fingerprint.rows[1], data.fingerprint.rows[1]);
}

#[test]
fn a_shuffled_copy_keeps_the_row_hashes_and_changes_the_file_hash() {
    let rows = [
        "1,0.5,2,north,no",
        "2,1.5,3,south,yes",
        "3,2.5,4,north,no",
        "4,0.1,9,east,yes",
    ];
    let header = "id,x,y,site,label\n";
    let original = loaded(&format!("{header}{}\n", rows.join("\n")), |_| {});
    let shuffled = [rows[2], rows[0], rows[3], rows[1]];
    let copy = loaded(&format!("{header}{}\n", shuffled.join("\n")), |_| {});
    assert_ne!(original.fingerprint.file, copy.fingerprint.file);
    assert_ne!(original.fingerprint.rows, copy.fingerprint.rows);
    let sorted = |mut v: Vec<String>| {
        v.sort();
        v
    };
    assert_eq!(
        sorted(original.fingerprint.rows),
        sorted(copy.fingerprint.rows)
    );
}

#[test]
fn a_byte_order_mark_is_not_part_of_the_first_name() {
    let text = b"\xEF\xBB\xBFx,y,label\n1,2,a\n3,4,b\n";
    let (dir, result) = try_load(text, |_| {});
    let data = result.expect("loads");
    assert_eq!(data.header, ["x", "y", "label"]);
    let header = read_header(&dir.path().join("data.csv")).expect("header");
    assert_eq!(header, ["x", "y", "label"]);
}

#[test]
fn read_header_reads_only_the_first_row() {
    let dir = TempDir::new().expect("temp dir");
    // Later rows are ragged and not UTF-8: the header alone is still fine.
    let path = write(&dir, "h.csv", b"\n a , b ,\"c,d\"\n1\n\xFF\n");
    assert_eq!(read_header(&path).expect("header"), ["a", "b", "c,d"]);
    let cases: [(&[u8], &str); 3] = [
        (b"", "is empty"),
        (b"\r\n\n", "is empty"),
        (
            b"a,b,a\n",
            "column name `a` appears twice in the header (columns 1 and 3)",
        ),
    ];
    for (bytes, expected) in cases {
        let path = write(&dir, "h.csv", bytes);
        let msg = read_header(&path).expect_err("bad header").to_string();
        assert!(msg.contains(expected), "{msg}");
        assert!(msg.contains(&path.display().to_string()), "{msg}");
    }
}

/// Palmer penguins (tests/data/penguins.csv; provenance in tests/data/README.md).
#[test]
fn the_penguins_file_loads_with_its_documented_counts() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/penguins.csv");
    let measures = [
        "bill_length_mm",
        "bill_depth_mm",
        "flipper_length_mm",
        "body_mass_g",
    ];
    let mut features: Vec<String> = measures.iter().map(|m| m.to_string()).collect();
    features.push("sex".into());
    let spec = DataSpec {
        path,
        target: "species".into(),
        classification: true,
        features,
        categorical: vec!["sex".into()],
        group: Some("island".into()),
        order: Some("year".into()),
        allow_missing: true,
    };
    let data = load(&spec).expect("penguins load");
    assert_eq!(data.rows(), 344);
    let count = |codes: &[u32], code: u32| codes.iter().filter(|&&c| c == code).count();
    let classes = data.classes().expect("classes");
    // Class and island counts: the reference README (palmerpenguins 0.1.0).
    let (adelie, chinstrap, gentoo) = (count(classes, 0), count(classes, 1), count(classes, 2));
    assert_eq!((adelie, chinstrap, gentoo), (152, 68, 124));
    let group = data.group.as_deref().expect("groups");
    assert_eq!(data.group_names, ["Biscoe", "Dream", "Torgersen"]);
    assert_eq!(
        (count(group, 0), count(group, 1), count(group, 2)),
        (168, 124, 52)
    );
    // Missing cells counted with grep in the file: 2 rows miss all four
    // measurements and sex, 9 more miss sex only: 2 * 4 + 11 = 19.
    assert_eq!(data.missing_cells, 19);
    assert_eq!(data.feature_names[4..], ["sex=female", "sex=male"]);
    let spec = DataSpec {
        allow_missing: false,
        ..spec
    };
    let msg = load(&spec).expect_err("missing without impute").to_string();
    assert!(
        msg.contains(
            "19 missing feature cells (empty or `NA`), the first at line 5, column `bill_length_mm`"
        ),
        "{msg}"
    );
}
