//! The long run of the project's fuzzing harness: `cargo run --release --example fuzz -- [RUNS] [SEED] [WORKERS]`
//! (or `bash scripts/fuzz.sh`). Prints the tally of outcomes and examples of every failing class; exits 1 when any
//! case failed.

#[path = "../tests/integration/fuzz_harness.rs"]
mod fuzz_harness;

use std::path::PathBuf;
use std::time::Duration;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let runs = args.get(1).and_then(|a| a.parse().ok()).unwrap_or(100_000);
    let seed = args.get(2).and_then(|a| a.parse().ok()).unwrap_or(1);
    let workers = args.get(3).and_then(|a| a.parse().ok()).unwrap_or(2);
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let binary = std::env::var("HUSHRAIL_BIN").map(PathBuf::from).unwrap_or_else(|_| {
        let profile = if cfg!(debug_assertions) { "debug" } else { "release" };
        let target = std::env::var("CARGO_TARGET_DIR").map(PathBuf::from).unwrap_or_else(|_| root.join("target"));
        target.join(profile).join("hushrail")
    });
    let started = std::time::Instant::now();
    let tally = fuzz_harness::run_many(
        &binary,
        &root,
        seed,
        runs,
        workers,
        Duration::from_secs(24 * 3600),
        fuzz_harness::Limits::default(),
    );
    println!("{}", tally.report());
    println!("{:.0} s, seed {seed}, binary {}", started.elapsed().as_secs_f64(), binary.display());
    std::process::exit(if tally.failures() == 0 { 0 } else { 1 });
}
