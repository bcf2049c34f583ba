//! A bounded pass of the project's fuzzing harness (tests/integration/fuzz_harness.rs): a fixed seed, about a
//! minute, against the built binary. The long run is `bash scripts/fuzz.sh`.

use crate::common::root;
use crate::fuzz_harness::{Limits, run_many};
use std::time::Duration;

#[test]
fn bounded_fuzz_pass_finds_no_failure() {
    let binary = std::path::Path::new(env!("CARGO_BIN_EXE_hushrail"));
    // A fixed seed keeps the pass repeatable; 600 cases or 60 seconds, whichever ends first.
    let tally = run_many(binary, &root(), 20261202, 600, 2, Duration::from_secs(60), Limits::default());
    println!("{}", tally.report());
    assert!(tally.runs >= 50, "too few cases ran to mean anything:\n{}", tally.report());
    assert_eq!(tally.failures(), 0, "{}", tally.report());
}

#[test]
fn the_classifier_catches_what_it_should() {
    use crate::fuzz_harness::has_non_finite;
    assert!(has_non_finite("1000.0,NaN,3\n"));
    assert!(has_non_finite("worst 3 inf× target"));
    assert!(has_non_finite("{\"target_ohm\": null}"));
    assert!(!has_non_finite("{\"self_resonance_hz\": null, \"x\": 1.5}"));
    assert!(!has_non_finite("freq_hz,z_mag_ohm\n1000.0,0.004\n"));
    assert!(!has_non_finite("the information is infinite in words"));
}
