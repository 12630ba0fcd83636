//! Arbitrary bytes as a model file: reading it must end in `Ok` or `Err`,
//! never a panic, and a model that reads must give a mesher input and a
//! summary.
#![no_main]

use fluxwright_solver::model::{Model, ModelSource};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    // Model files are UTF-8 text; other bytes are refused before the
    // reader by the caller (the CLI reads with `read_to_string`).
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let source = ModelSource::new("fuzz.toml");
    match Model::from_toml_str(text, &source) {
        Ok(model) => {
            let input = model.mesh_input();
            assert_eq!(input.shapes.len(), model.shapes.len());
            let _ = model.summary();
        }
        Err(errors) => {
            assert!(!errors.errors.is_empty(), "an Err with no error in it");
            for e in &errors.errors {
                let message = e.to_string();
                assert!(
                    message.starts_with("fuzz.toml"),
                    "error without the file name: {message}"
                );
            }
        }
    }
});
