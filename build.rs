//! Link the `hushrail` binary as a position-dependent executable. The binary carries the window's code, and as a
//! position-independent one it spends about half of a short command-line run (a check, a sweep) applying some
//! 40 000 relative relocations at start-up; position-dependent, it has none to apply. The cost is that the
//! program's own code is not placed at a random address (shared libraries still are).
fn main() {
    println!("cargo:rustc-link-arg-bins=-no-pie");
}
