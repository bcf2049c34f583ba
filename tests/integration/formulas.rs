//! The engine against published formulas and textbook results. Each check names its source.

use hushrail::analysis::{AnalysisOptions, Network, analyze_rail, target_impedance};
use hushrail::model::{Board, Combine, DecapGroup, Load, Part, PartKind, Rail};
use hushrail::physics::{SeriesRlc, TWO_PI};

fn part(id: &str, c: f64, esr: f64, esl: f64) -> Part {
    Part::new(id, PartKind::Ceramic, c, esr, esl)
}

fn rail(name: &str, groups: Vec<DecapGroup>, band: [f64; 2]) -> Rail {
    Rail {
        name: name.into(),
        voltage_v: 1.0,
        ripple_pct: 5.0,
        band_hz: Some(band),
        combine: Combine::Sum,
        source: None,
        plane: None,
        package: None,
        die: None,
        loads: vec![Load::new("load", 10.0, None)],
        decaps: groups,
        placement: None,
    }
}

fn group(part: &str, count: u32, mounting_h: f64) -> DecapGroup {
    DecapGroup::new(part, count, mounting_h)
}

/// Target impedance Z_t = V × ripple / ΔI (Smith et al., "Power distribution system design methodology and
/// capacitor selection for modern CMOS technology", IEEE Trans. Advanced Packaging, 1999): 1.0 V with 5 % ripple
/// and a 10 A step gives 5 mΩ.
#[test]
fn target_impedance_smith_1999() {
    let r = rail("R", Vec::new(), [1e3, 1e8]);
    assert!((target_impedance(&r) - 5e-3).abs() < 1e-15);
}

/// Series RLC (textbook circuit theory): the self-resonance is f0 = 1/(2π√(LC)), and there |Z| = ESR. The
/// analysis finds the dip of a single group there, with |Z| equal to ESR/n.
#[test]
fn series_resonance_is_esr_at_f0() {
    let (c, esr, esl, mount) = (1e-7, 0.02, 4e-10, 6e-10);
    let board = Board {
        parts: vec![part("c", c, esr, esl)],
        rails: vec![rail("R", vec![group("c", 4, mount)], [1e4, 1e9])],
        ..Board::named("t")
    };
    let f0 = 1.0 / (TWO_PI * ((esl + mount) * c).sqrt());
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    assert!((a.groups[0].self_resonance_hz.unwrap() - f0).abs() < 1e-9 * f0);
    assert_eq!(a.dips.len(), 1);
    let dip = a.dips[0];
    assert!((dip.freq_hz - f0).abs() < 1e-3 * f0, "dip at {} vs f0 {f0}", dip.freq_hz);
    assert!((dip.z_ohm - esr / 4.0).abs() < 1e-6 * esr, "|Z(f0)| = {} vs ESR/n {}", dip.z_ohm, esr / 4.0);
    let net = Network::of_rail(&board, &board.rails[0]);
    assert!((net.magnitude(f0) - esr / 4.0).abs() < 1e-12);
}

/// n identical parts in parallel are one part of n·C, ESR/n, ESL/n (parallel combination of equal impedances,
/// textbook).
#[test]
fn n_identical_parts_are_one_scaled_part() {
    let (c, esr, esl, mount, n) = (2.2e-6, 0.008, 5e-10, 3e-10, 7u32);
    let many = Board {
        parts: vec![part("c", c, esr, esl)],
        rails: vec![rail("R", vec![group("c", n, mount)], [1e3, 1e9])],
        ..Board::named("many")
    };
    let nf = n as f64;
    let one = SeriesRlc { r_ohm: esr / nf, l_h: (esl + mount) / nf, c_f: Some(c * nf) };
    let net = Network::of_rail(&many, &many.rails[0]);
    for f in hushrail::analysis::log_grid(1e3, 1e9, 500) {
        let (a, b) = (net.impedance(f), one.impedance(f));
        assert!((a - b).norm() <= 1e-12 * b.norm(), "at {f}: {a} vs {b}");
    }
}

/// Two groups with C_big >> C_small: the anti-resonance sits near 1/(2π√(L_big·C_small)), where the big group's
/// inductance resonates with the small group's capacitance (textbook approximation for a parallel LC tank).
#[test]
fn antiresonance_of_big_and_small_groups() {
    let (c_big, l_big) = (4.7e-5, 1.5e-9);
    let (c_small, l_small) = (1e-8, 5e-10);
    let board = Board {
        parts: vec![part("big", c_big, 0.003, 1e-9), part("small", c_small, 0.005, 3e-10)],
        rails: vec![rail("R", vec![group("big", 1, l_big - 1e-9), group("small", 1, l_small - 3e-10)], [1e4, 5e8])],
        ..Board::named("t")
    };
    let a = analyze_rail(&board, 0, &AnalysisOptions::default()).unwrap();
    assert_eq!(a.antiresonances.len(), 1, "{:?}", a.antiresonances);
    let ar = &a.antiresonances[0];
    let approx = 1.0 / (TWO_PI * (l_big * c_small).sqrt());
    // The approximation ignores the small group's own ESL, which pulls the peak down by √(L_big/(L_big+L_small)).
    let exact_lc = 1.0 / (TWO_PI * ((l_big + l_small) * c_small).sqrt());
    assert!(ar.freq_hz < approx && ar.freq_hz > 0.8 * approx, "peak {} vs approx {approx}", ar.freq_hz);
    assert!((ar.freq_hz - exact_lc).abs() < 0.01 * exact_lc, "peak {} vs {exact_lc}", ar.freq_hz);
    assert_eq!(ar.inductive_side.as_ref().unwrap().label, "big ×1");
    assert_eq!(ar.capacitive_side.as_ref().unwrap().label, "small ×1");
}

/// The refined peak is a true maximum to 0.1 %: |Z| at ±0.1 % of the reported frequency is not higher, and the
/// reported |Z| equals |Z| at the reported frequency.
#[test]
fn peaks_are_refined_to_a_tenth_of_a_percent() {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/networks/lossless.json");
    let board = hushrail::io::read_board(std::path::Path::new(path)).unwrap();
    let a = analyze_rail(&board, 0, &AnalysisOptions { band_points: 200, ..Default::default() }).unwrap();
    let net = Network::of_rail(&board, &board.rails[0]);
    assert!(!a.antiresonances.is_empty());
    for p in &a.antiresonances {
        let z = net.magnitude(p.freq_hz);
        assert!((z - p.z_ohm).abs() <= 1e-12 * z);
        assert!(net.magnitude(p.freq_hz * 1.001) <= z && net.magnitude(p.freq_hz * 0.999) <= z);
    }
    // Violation edges sit where |Z| crosses the target, to 0.1 % in frequency.
    for v in &a.violations {
        for (edge, inside) in [(v.from_hz, 1.001), (v.to_hz, 0.999)] {
            if edge == a.band_hz[0] || edge == a.band_hz[1] {
                continue;
            }
            assert!(net.magnitude(edge * inside) > a.target_ohm);
            assert!(net.magnitude(edge / inside) <= a.target_ohm * (1.0 + 1e-9));
        }
    }
}

/// A coarse grid must not lose a sharp anti-resonance: the result with 50 points equals that with 20 000.
#[test]
fn sharp_peaks_survive_a_coarse_grid() {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/networks/lossless.json");
    let board = hushrail::io::read_board(std::path::Path::new(path)).unwrap();
    let coarse = analyze_rail(&board, 0, &AnalysisOptions { band_points: 50, ..Default::default() }).unwrap();
    let fine = analyze_rail(&board, 0, &AnalysisOptions { band_points: 20_000, ..Default::default() }).unwrap();
    assert_eq!(coarse.antiresonances.len(), fine.antiresonances.len());
    for (c, f) in coarse.antiresonances.iter().zip(&fine.antiresonances) {
        assert!((c.freq_hz - f.freq_hz).abs() < 1e-6 * f.freq_hz);
        assert!((c.z_ohm - f.z_ohm).abs() < 1e-6 * f.z_ohm);
    }
    assert!((coarse.worst_ohm - fine.worst_ohm).abs() < 1e-6 * fine.worst_ohm);
}

/// A regulator that gives its control loop (crossover f_c, phase margin φm): flat at its resistance R well inside
/// the bandwidth; at the closed loop's natural frequency f_n = f_c/√(cos φm) exactly R + R/sin φm + j2πf_n·L, the
/// peak of a second-order closed loop of Q = √(cos φm)/sin φm (Erickson and Maksimović, Fundamentals of Power
/// Electronics, 2nd ed., §9.4.2); far past crossover the plain series R-L; the lower the margin, the higher the peak.
#[test]
fn regulator_loop_output_impedance_erickson() {
    use hushrail::model::{Source, SourceLoop};
    let (r, l, fc) = (2e-3, 1e-9, 1e5);
    let mut last_peak = f64::INFINITY;
    for pm in [30.0f64, 45.0, 70.0] {
        let mut rl = rail("R", Vec::new(), [1e3, 1e8]);
        rl.source =
            Some(Source { control: Some(SourceLoop { crossover_hz: fc, phase_margin_deg: pm }), ..Source::rl(r, l) });
        let board = Board { rails: vec![rl], ..Board::named("loop") };
        let net = Network::of_rail(&board, &board.rails[0]);
        let phi = pm.to_radians();
        // Flat inside the bandwidth: at f_c/1000 the loop's inductive rise is a thousandth of R.
        assert!((net.magnitude(fc / 1e3) - r).abs() < 2e-3 * r, "{pm}°: flat");
        // The peak at f_n: the tank is its parallel resistance there, R/sin φm.
        let f_n = fc / phi.cos().sqrt();
        let z = net.impedance(f_n);
        let want = num_complex::Complex64::new(r + r / phi.sin(), TWO_PI * f_n * l);
        assert!((z - want).norm() < 1e-9 * want.norm(), "{pm}°: {z} vs {want}");
        assert!(want.norm() < last_peak, "a lower margin peaks higher");
        last_peak = want.norm();
        // Far past crossover the R-L: the tank's capacitance has shorted the loop.
        let f = fc * 1e4;
        let rl_z = SeriesRlc { r_ohm: r, l_h: l, c_f: None }.impedance(f);
        assert!((net.impedance(f) - rl_z).norm() < 2e-3 * rl_z.norm(), "{pm}°: the R-L past crossover");
    }
}
