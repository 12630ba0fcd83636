//! No input makes the model reader panic: random text, random TOML-ish
//! text, and random edits of good models all end in `Ok` or `Err`.

use fluxwright_solver::model::{Model, ModelSource};
use proptest::prelude::*;

const GOOD: [&str; 4] = [
    include_str!("../../tests/models/good/door_holding_magnet.toml"),
    include_str!("../../tests/models/good/gapped_choke.toml"),
    include_str!("../../tests/models/good/axisymmetric_plunger.toml"),
    include_str!("../../tests/models/good/busbar_pair.toml"),
];

/// Characters that matter to TOML and to the format, plus digits and
/// letters, so that mutations often stay parseable and reach the checks.
const ALPHABET: &[char] = &[
    '[', ']', '{', '}', '=', ',', '"', '.', '-', '+', '\n', ' ', '#', '0', '1', '2', '5', '9', 'e',
    'a', 'n', 'i', 'f', 'x', '_', 'μ',
];

fn check_no_panic(text: &str) {
    let source = ModelSource::new("fuzz.toml");
    match Model::from_toml_str(text, &source) {
        Ok(m) => {
            // A model that parses must also give a mesher input and a summary.
            let input = m.mesh_input();
            assert_eq!(input.shapes.len(), m.shapes.len());
            let _ = m.summary();
        }
        Err(e) => {
            assert!(!e.errors.is_empty());
            for err in &e.errors {
                assert!(err.to_string().starts_with("fuzz.toml"), "{err}");
            }
        }
    }
}

#[derive(Debug, Clone)]
enum Edit {
    Delete {
        at: usize,
        len: usize,
    },
    Insert {
        at: usize,
        c: char,
    },
    Replace {
        at: usize,
        c: char,
    },
    /// Replace a number-looking character run with another number.
    Number {
        at: usize,
        value: f64,
    },
}

fn apply(text: &str, edits: &[Edit]) -> String {
    let mut chars: Vec<char> = text.chars().collect();
    for e in edits {
        let n = chars.len().max(1);
        match *e {
            Edit::Delete { at, len } => {
                let at = at % n;
                let end = (at + len).min(chars.len());
                chars.drain(at.min(chars.len())..end);
            }
            Edit::Insert { at, c } => chars.insert(at % (chars.len() + 1), c),
            Edit::Replace { at, c } => {
                if !chars.is_empty() {
                    chars[at % n] = c;
                }
            }
            Edit::Number { at, value } => {
                if chars.is_empty() {
                    continue;
                }
                let mut i = at % n;
                while i < chars.len() && !chars[i].is_ascii_digit() {
                    i += 1;
                }
                let mut j = i;
                while j < chars.len() && (chars[j].is_ascii_digit() || chars[j] == '.') {
                    j += 1;
                }
                let replacement: Vec<char> = format!("{value:?}").chars().collect();
                chars.splice(i..j, replacement);
            }
        }
    }
    chars.into_iter().collect()
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        (any::<usize>(), 1usize..20).prop_map(|(at, len)| Edit::Delete { at, len }),
        (any::<usize>(), prop::sample::select(ALPHABET)).prop_map(|(at, c)| Edit::Insert { at, c }),
        (any::<usize>(), prop::sample::select(ALPHABET))
            .prop_map(|(at, c)| Edit::Replace { at, c }),
        (
            any::<usize>(),
            prop_oneof![
                Just(0.0),
                Just(-1.0),
                Just(1e-300),
                Just(1e300),
                Just(-1e300),
                Just(f64::MIN_POSITIVE),
                -1e4..1e4f64,
            ]
        )
            .prop_map(|(at, value)| Edit::Number { at, value }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, ..ProptestConfig::default() })]

    #[test]
    fn random_text_never_panics(text in "\\PC{0,200}") {
        check_no_panic(&text);
    }

    #[test]
    fn random_toml_like_text_never_panics(chars in prop::collection::vec(prop::sample::select(ALPHABET), 0..300)) {
        let text: String = chars.into_iter().collect();
        check_no_panic(&text);
    }

    #[test]
    fn edited_good_models_never_panic(which in 0usize..4, edits in prop::collection::vec(edit(), 1..6)) {
        let text = apply(GOOD[which], &edits);
        check_no_panic(&text);
    }
}

#[test]
fn extreme_but_valid_numbers_do_not_panic() {
    for text in [
        "[[shape]]\ncircle = { center = [1e300, -1e300], radius = 1e300 }\n",
        "[[shape]]\ncircle = { center = [0, 0], radius = 1e-300 }\n",
        "[[shape]]\nrectangle = { min = [0, 0], max = [1e-310, 1e-310] }\n",
        "[[shape]]\nsector = { center = [0, 0], outer_radius = 1, start_angle = 1e300, end_angle = 1e300 }\n",
        "[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\nrotate = 1e300\nrepeat = { count = 10000, angle = 1e-300 }\n",
        "[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\ntranslate = [1e308, 1e308]\n",
        "[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\n[sweep]\nturn = { shapes = [\"shape-1\"], from = -1e300, to = 1e300, steps = 100000 }\n",
        "[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\n[sweep]\nmove = { shapes = [\"shape-1\"], along = [1e-320, 0], from = 0, to = 1, steps = 1 }\n",
    ] {
        check_no_panic(text);
    }
}
