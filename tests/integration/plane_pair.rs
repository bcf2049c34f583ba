//! The plane pair as an N-port (physics::plane_pair) against outside references: the parallel-plate capacitance,
//! the textbook resonances of a rectangular cavity with magnetic walls, the loop inductance between two small
//! ports, the double sum it is a closed form of, reciprocity, passivity and convergence.

use hushrail::physics::plane_pair::{
    Conductor, DEFAULT_TOLERANCE, EPS0, MU0, PortRect, PreparedPlane, Stackup, double_sum, single_sum,
};
use num_complex::Complex64 as C;
use std::f64::consts::PI;

fn lossless(a: f64, b: f64) -> Stackup {
    Stackup { size_m: [a, b], dielectric_m: 1e-4, er: 4.3, loss_tangent: 0.0, conductor: Conductor::Perfect }
}

fn lossy() -> Stackup {
    Stackup {
        size_m: [0.10, 0.08],
        dielectric_m: 1e-4,
        er: 4.3,
        loss_tangent: 0.02,
        conductor: Conductor::Foil { thickness_m: 35e-6, conductivity_s_m: 5.8e7 },
    }
}

fn ports() -> Vec<PortRect> {
    vec![
        PortRect::square(0.012, 0.011, 2e-3),
        PortRect { x: 0.05, y: 0.04, w: 5e-3, h: 4e-3 },
        PortRect::square(0.056, 0.043, 0.5e-3),
        PortRect::square(0.0903, 0.0702, 0.5e-3),
        PortRect::square(0.0302, 0.065, 1e-3),
        PortRect::square(0.05, 0.0025, 0.5e-3),
    ]
}

fn rel(a: C, b: C) -> f64 {
    (a - b).norm() / b.norm()
}

#[test]
fn below_the_first_resonance_the_ports_see_the_plate_capacitance() {
    // Parallel-plate capacitance C = ε0·εr·a·b/d (any electromagnetics textbook). At 10 kHz the spreading
    // inductance adds a part in 1e10 of the reactance, so Z·jωC = 1 to far better than 1e-6.
    let st = lossless(0.10, 0.08);
    let c = EPS0 * 4.3 * 0.10 * 0.08 / 1e-4;
    let f = 1e4;
    let w = 2.0 * PI * f;
    let p = ports();
    for (i, j) in [(0, 0), (0, 3), (2, 5)] {
        let z = single_sum(&st, &p[i], &p[j], f, DEFAULT_TOLERANCE);
        assert!((z * C::new(0.0, w * c) - 1.0).norm() < 1e-6, "{i},{j}: {z}");
    }
    let prepared = PreparedPlane::new(st, p, 1e9, DEFAULT_TOLERANCE);
    let m = prepared.matrix(f);
    assert!((m[7] * C::new(0.0, w * c) - 1.0).norm() < 1e-6);
    assert!((prepared.stackup.plate_capacitance_f() - c).abs() < 1e-15 * c);
}

#[test]
fn lossless_resonances_fall_at_the_textbook_frequencies() {
    // Modes of a rectangular cavity with magnetic side walls: f_mn = c/(2√εr)·√((m/a)² + (n/b)²) (Pozar,
    // Microwave Engineering, the TM_mn0 modes of a parallel-plate cavity). Found as the peaks of |Z| of a port
    // near a corner (every mode is excited there) with a loss tangent of 1e-5, within 0.1 %.
    let st = Stackup { loss_tangent: 1e-5, ..lossless(0.10, 0.08) };
    let port = PortRect::square(0.004, 0.005, 1e-3);
    let c0 = 299_792_458.0;
    for (m, n) in [(1, 0), (0, 1), (1, 1), (2, 0), (2, 1)] {
        let f_mn = c0 / (2.0 * 4.3f64.sqrt()) * ((m as f64 / 0.10).powi(2) + (n as f64 / 0.08).powi(2)).sqrt();
        let mag = |f: f64| single_sum(&st, &port, &port, f, 1e-5).norm();
        // A fine grid over ±2 %, then golden section around its best point.
        let grid: Vec<f64> = (0..=800).map(|k| f_mn * (0.98 + 0.04 * k as f64 / 800.0)).collect();
        let best = grid.iter().copied().max_by(|a, b| mag(*a).total_cmp(&mag(*b))).unwrap();
        let (mut lo, mut hi) = (best * (1.0 - 1e-4), best * (1.0 + 1e-4));
        for _ in 0..60 {
            let (x1, x2) = (lo + (hi - lo) * 0.382, lo + (hi - lo) * 0.618);
            if mag(x1) > mag(x2) { hi = x2 } else { lo = x1 }
        }
        let peak = (lo + hi) / 2.0;
        assert!((peak / f_mn - 1.0).abs() < 1e-3, "mode ({m},{n}): peak {peak} vs {f_mn}");
    }
}

#[test]
fn spreading_inductance_between_two_small_ports_matches_the_closed_form() {
    // Two parallel conductors between plates a distance D apart, far from the edges: L = (μ0·d/π)·ln(D/GMD), with
    // the self geometric mean distance of a square of side s, 0.44705·s (Maxwell's GMD of a square, from memory).
    // Ports 0.5 mm square, 10 to 30 mm apart, at the middle of a 20 cm × 20 cm pair: within 1 %.
    let st = lossless(0.2, 0.2);
    let s = 0.5e-3;
    for dist in [0.01, 0.02, 0.03] {
        let p = vec![PortRect::square(0.1 - dist / 2.0, 0.1, s), PortRect::square(0.1 + dist / 2.0, 0.1, s)];
        let plane = PreparedPlane::new(st, p.clone(), 1e8, DEFAULT_TOLERANCE);
        let loop_l = plane.spreading_inductance_h(0, 0) + plane.spreading_inductance_h(1, 1)
            - 2.0 * plane.spreading_inductance_h(0, 1);
        let expected = MU0 * 1e-4 / PI * (dist / (0.44705 * s)).ln();
        assert!((loop_l / expected - 1.0).abs() < 0.01, "D = {dist}: {loop_l} vs {expected}");
        // The same from the single sum at 1 MHz, where the loop sees the inductance alone (the plate term cancels).
        let f = 1e6;
        let z = |i: usize, j: usize| single_sum(&st, &p[i], &p[j], f, DEFAULT_TOLERANCE);
        let l_ss = (z(0, 0) + z(1, 1) - z(0, 1) - z(1, 0)).im / (2.0 * PI * f);
        assert!((l_ss / loop_l - 1.0).abs() < 1e-4, "{l_ss} vs {loop_l}");
    }
}

#[test]
fn the_single_sum_is_the_double_sum_in_closed_form() {
    // The double sum as written (the cavity model's series) converged with 4000 × 4000 terms on ports of a few mm,
    // against the single sum: within 1e-5 relative, lossy, below and above the first resonances.
    let st = lossy();
    let p = [PortRect { x: 0.03, y: 0.02, w: 4e-3, h: 3e-3 }, PortRect { x: 0.07, y: 0.055, w: 5e-3, h: 5e-3 }];
    for f in [5e7, 6e8, 1.5e9] {
        for (i, j) in [(0, 0), (0, 1)] {
            let single = single_sum(&st, &p[i], &p[j], f, 1e-8);
            let double = double_sum(&st, &p[i], &p[j], f, 4000, 4000);
            assert!(rel(single, double) < 1e-5, "f {f} ({i},{j}): {single} vs {double}");
        }
    }
}

#[test]
fn impedances_are_reciprocal() {
    // Reciprocity of a linear passive network: Z_ij = Z_ji (computed with the roles of the two ports swapped).
    let st = lossy();
    let p = ports();
    for f in [1e6, 3e8, 1.2e9] {
        for (i, j) in [(0, 1), (1, 4), (2, 3), (3, 5)] {
            let zij = single_sum(&st, &p[i], &p[j], f, DEFAULT_TOLERANCE);
            let zji = single_sum(&st, &p[j], &p[i], f, DEFAULT_TOLERANCE);
            assert!(rel(zij, zji) < 1e-12, "{i},{j} at {f}");
        }
    }
}

/// True when the real symmetric matrix is positive semidefinite (Cholesky with a tolerance on the pivots).
fn positive_semidefinite(a: &[f64], n: usize) -> bool {
    let scale = (0..n).map(|i| a[i * n + i].abs()).fold(0.0, f64::max);
    let mut l = vec![0.0; n * n];
    for j in 0..n {
        let mut d = a[j * n + j];
        for k in 0..j {
            d -= l[j * n + k] * l[j * n + k];
        }
        if d < -1e-9 * scale {
            return false;
        }
        let d = d.max(1e-300).sqrt();
        l[j * n + j] = d;
        for i in j + 1..n {
            let mut s = a[i * n + j];
            for k in 0..j {
                s -= l[i * n + k] * l[j * n + k];
            }
            l[i * n + j] = s / d;
        }
    }
    true
}

#[test]
fn the_lossy_pair_is_passive() {
    // Passivity of a reciprocal N-port: the Hermitian part of Z, here Re Z (Z is symmetric), is positive
    // semidefinite at every frequency (the power it takes, Re(Iᴴ Z I), is never negative).
    let p = ports();
    let n = p.len();
    let plane = PreparedPlane::new(lossy(), p, 3e9, DEFAULT_TOLERANCE);
    for k in 0..40 {
        let f = 1e6 * 3000f64.powf(k as f64 / 39.0);
        let z = plane.matrix(f);
        let re: Vec<f64> = z.iter().map(|z| z.re).collect();
        assert!(positive_semidefinite(&re, n), "at {f} Hz");
    }
}

#[test]
fn the_prepared_form_keeps_its_promise_and_converges() {
    // The promise: the prepared (static + modes + tail) matrix within 1e-4 relative of the single sum up to half the
    // frequency it was prepared for and 5e-4 up to that frequency (the worst seen: 2.2e-4, a 0.5 mm port 2.5 mm
    // from the edge at f_max); and doubling the modes kept per frequency while tightening every sum's tolerance
    // changes no entry by more than that.
    let st = lossy();
    let p = ports();
    let n = p.len();
    let f_max = 2e9;
    let plane = PreparedPlane::new(st, p.clone(), f_max, DEFAULT_TOLERANCE);
    // About twice the modes per frequency (the cut from 5× to about 7× f_max) and every static sum carried further.
    let finer = PreparedPlane::with_cut(st, p.clone(), f_max, DEFAULT_TOLERANCE / 8.0, 5.0 * 2f64.sqrt());
    assert!(2 * finer.mode_count() >= 3 * plane.mode_count(), "{} vs {}", finer.mode_count(), plane.mode_count());
    for f in [1e5, 1e7, 2e8, 7e8, 1.3e9, 2e9] {
        let z = plane.matrix(f);
        let zf = finer.matrix(f);
        for i in 0..n {
            for j in 0..n {
                let exact = single_sum(&st, &p[i], &p[j], f, 1e-8);
                let promise = if f <= f_max / 2.0 { 1e-4 } else { 5e-4 };
                assert!(rel(z[i * n + j], exact) < promise, "({i},{j}) at {f}: {} vs {exact}", z[i * n + j]);
                let dz = (z[i * n + j] - zf[i * n + j]).norm();
                assert!(dz <= promise * zf[i * n + j].norm(), "({i},{j}) at {f}: changed by {dz}");
            }
        }
    }
}

#[test]
fn moving_a_port_gives_the_matrix_of_the_moved_layout() {
    let st = lossy();
    let mut p = ports();
    let mut plane = PreparedPlane::new(st, p.clone(), 1e9, DEFAULT_TOLERANCE);
    let moved = PortRect::square(0.071, 0.018, 0.5e-3);
    plane.move_port(2, moved);
    p[2] = moved;
    let fresh = PreparedPlane::new(st, p, 1e9, DEFAULT_TOLERANCE);
    // The moved port's pairs are taken in the fresh preparation's order, so the plane is the fresh one to the bit.
    assert_eq!(plane, fresh);
}

/// The kept planes (analysis::placed::prepared): the same layout twice is the same preparation, shared; a layout
/// one port apart from a kept one is derived by moving that port, and a stack-up or highest frequency not kept is
/// prepared afresh; each is the fresh preparation to the bit, whichever way it was made.
#[test]
fn kept_planes_give_the_fresh_preparations_matrix() {
    use hushrail::analysis::placed::prepared;
    let st = lossy();
    let p = ports();
    let first = prepared(st, p.clone(), 1e9, DEFAULT_TOLERANCE);
    let again = prepared(st, p.clone(), 1e9, DEFAULT_TOLERANCE);
    assert!(std::sync::Arc::ptr_eq(&first, &again), "the same layout is prepared once");
    assert_eq!(*first, PreparedPlane::new(st, p.clone(), 1e9, DEFAULT_TOLERANCE));
    let mut one = p.clone();
    one[3] = PortRect::square(0.071, 0.018, 0.5e-3);
    let mut two = one.clone();
    two[0] = PortRect::square(0.02, 0.02, 2e-3);
    let mut thin = st;
    thin.dielectric_m = 5e-5;
    for (layout, stackup, f_max) in [(one.clone(), st, 1e9), (two, st, 1e9), (one, st, 2e9), (p, thin, 1e9)] {
        let kept = prepared(stackup, layout.clone(), f_max, DEFAULT_TOLERANCE);
        assert_eq!(*kept, PreparedPlane::new(stackup, layout, f_max, DEFAULT_TOLERANCE));
    }
}
