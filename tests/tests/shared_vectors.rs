//! The shared cross-language vectors: the committed file must be what the core computes now,
//! to the last bit. The Python and C tests read the same file, so all three languages agree.

use rotaframe_tests::shared::{all_cases, evaluate, parse};

fn committed() -> Vec<rotaframe_tests::shared::Case> {
    parse(&std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/vectors/shared_cases.txt")).unwrap())
}

#[test]
fn committed_shared_vectors_are_reproduced_bit_for_bit() {
    let cases = committed();
    assert!(cases.len() >= 100, "file holds {} cases", cases.len());
    for c in &cases {
        let got = evaluate(&c.function, &c.inputs);
        assert_eq!(got.len(), c.outputs.len(), "{}", c.function);
        for (k, (g, w)) in got.iter().zip(&c.outputs).enumerate() {
            assert_eq!(g.to_bits(), w.to_bits(), "{} output {k}: got {g:?}, file has {w:?}", c.function);
        }
    }
}

#[test]
fn committed_shared_vectors_are_current() {
    // Regenerate with `cargo run -p rotaframe-tests --bin gen_shared_vectors` when the core's
    // numbers change on purpose, and say why in the commit.
    assert_eq!(committed(), all_cases(), "tests/vectors/shared_cases.txt is stale");
}
