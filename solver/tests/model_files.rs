//! The model files under tests/models/: every good one parses without
//! errors; every bad one fails with the message its first line promises.
//!
//! A bad file starts with `# expect: LINE | TEXT`: the model must be
//! rejected with an error at LINE whose message contains TEXT.

use std::path::PathBuf;

use fluxwright_solver::model::{Model, ModelSource};

fn models(kind: &str) -> Vec<(String, String)> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../tests/models")
        .join(kind);
    let mut out: Vec<(String, String)> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("cannot list {}: {e}", dir.display()))
        .filter_map(Result::ok)
        .map(|entry| entry.path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .map(|p| {
            let text = std::fs::read_to_string(&p)
                .unwrap_or_else(|e| panic!("cannot read {}: {e}", p.display()));
            (
                p.file_name()
                    .map(|n| n.to_string_lossy().into_owned())
                    .unwrap_or_default(),
                text,
            )
        })
        .collect();
    out.sort();
    out
}

#[test]
fn good_models_parse_cleanly() {
    let good = models("good");
    assert!(
        good.len() >= 4,
        "expected the example models, found {}",
        good.len()
    );
    for (name, text) in good {
        assert!(
            text.starts_with("# Invented scenario"),
            "{name} must say it is invented"
        );
        match Model::from_toml_str(&text, &ModelSource::new(name.as_str())) {
            Ok(m) => assert!(m.warnings.is_empty(), "{name}: {:?}", m.warnings),
            Err(e) => panic!("{name} should parse:\n{e}"),
        }
    }
}

#[test]
fn bad_models_fail_as_promised() {
    let bad = models("bad");
    assert!(
        bad.len() >= 8,
        "expected the bad models, found {}",
        bad.len()
    );
    for (name, text) in bad {
        let expect = text
            .lines()
            .next()
            .and_then(|l| l.strip_prefix("# expect: "))
            .unwrap_or_else(|| panic!("{name}: first line must be `# expect: LINE | TEXT`"));
        let (line, needle) = expect
            .split_once(" | ")
            .unwrap_or_else(|| panic!("{name}: bad expect line"));
        let line: usize = line
            .trim()
            .parse()
            .unwrap_or_else(|_| panic!("{name}: bad line number"));
        let errors = match Model::from_toml_str(&text, &ModelSource::new(name.as_str())) {
            Ok(_) => panic!("{name} should be rejected"),
            Err(e) => e,
        };
        let hit = errors
            .errors
            .iter()
            .find(|e| e.what.contains(needle.trim()));
        let hit =
            hit.unwrap_or_else(|| panic!("{name}: no error containing {needle:?}:\n{errors}"));
        assert_eq!(hit.line, Some(line), "{name}: {hit}");
        assert!(
            hit.to_string().starts_with(&format!("{name}:{line}:")),
            "{hit}"
        );
    }
}
