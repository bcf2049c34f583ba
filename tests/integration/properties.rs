//! Properties that must hold for every input, checked on random ones (proptest).

use hushrail::analysis::{AnalysisOptions, Network, View, analyze_rail};
use hushrail::io::{board_to_string, parse_board};
use hushrail::model::{
    Board, Combine, DecapGroup, Die, GroupPlacement, GroupSpots, Load, LoadPlacement, MountingGeometry, Package, Part,
    PartKind, Placement, Plane, PlanePair, Rail, Source, SourceLoop, SourcePlacement, validate_board,
};
use hushrail::physics::Corner;
use hushrail::units::{Unit, format, format_sig, parse};
use proptest::prelude::*;

/// A value spread evenly in log between 10^lo and 10^hi.
fn log_value(lo: f64, hi: f64) -> impl Strategy<Value = f64> {
    (lo..hi).prop_map(|e: f64| 10f64.powf(e))
}

fn zero_or(s: impl Strategy<Value = f64>) -> impl Strategy<Value = f64> {
    prop_oneof![1 => Just(0.0), 4 => s]
}

fn part_strategy(i: usize) -> impl Strategy<Value = Part> {
    let bias = proptest::option::of(proptest::collection::vec((log_value(-1.0, 1.5), 0.05f64..1.0), 1..4).prop_map(
        |mut pts| {
            pts.sort_by(|a, b| a.0.total_cmp(&b.0));
            pts.dedup_by(|a, b| a.0 == b.0);
            pts.into_iter().map(|(v, r)| [v, r]).collect::<Vec<_>>()
        },
    ));
    let extras = (
        proptest::option::of(0.0f64..50.0),
        bias,
        proptest::option::of(prop_oneof![Just("X7R"), Just("X5R"), Just("C0G"), Just("Y5V"), Just("ABC")]),
        proptest::option::of(prop_oneof![Just("0201"), Just("0402"), Just("1206"), Just("7343")]),
        proptest::option::of(log_value(0.0, 2.0)),
    );
    (log_value(-12.0, -1.0), zero_or(log_value(-5.0, 0.0)), zero_or(log_value(-12.0, -7.0)), extras).prop_map(
        move |(c, esr, esl, (tol, bias, dielectric, case, rated))| {
            let mut p = Part::new(format!("p{i}"), PartKind::ALL[i % PartKind::ALL.len()], c, esr, esl);
            p.unit_cost = Some(0.01);
            p.tolerance_pct = tol;
            p.dc_bias = bias;
            p.dielectric = dielectric.map(String::from);
            p.case = case.map(String::from);
            p.rated_voltage_v = rated;
            p
        },
    )
}

fn geometry_strategy() -> impl Strategy<Value = MountingGeometry> {
    (
        zero_or(log_value(-4.0, -2.0)),
        log_value(-4.5, -3.0),
        log_value(-4.5, -3.5),
        log_value(-4.3, -3.5),
        0.1f64..0.9,
        1u32..4,
        log_value(-4.0, -2.5),
    )
        .prop_map(|(len, w, h, d, pitch_over, n, via_len)| MountingGeometry {
            trace_length_m: len,
            trace_width_m: w,
            trace_height_m: h,
            via_drill_m: d,
            via_length_m: via_len,
            via_pitch_m: d / pitch_over,
            vias_per_pad: n,
        })
}

fn board_strategy() -> impl Strategy<Value = Board> {
    let parts = (1usize..6).prop_flat_map(|n| (0..n).map(part_strategy).collect::<Vec<_>>());
    parts.prop_flat_map(|parts| {
        let n = parts.len();
        let group =
            (0..n, 0u32..50, zero_or(log_value(-11.0, -8.0)), proptest::option::weighted(0.3, geometry_strategy()))
                .prop_map(|(p, count, m, geometry)| DecapGroup {
                    part: format!("p{p}"),
                    count,
                    mounting_h: if geometry.is_some() { 0.0 } else { m },
                    mounting: geometry,
                });
        let source = proptest::option::of(
            (
                zero_or(log_value(-5.0, 0.0)),
                zero_or(log_value(-10.0, -6.0)),
                proptest::option::of((log_value(2.0, 7.0), 5.0f64..85.0)),
            )
                .prop_map(|(r, l, control)| Source {
                    // A loop needs a resistance to hold.
                    control: control
                        .filter(|_| r > 0.0)
                        .map(|(crossover_hz, phase_margin_deg)| SourceLoop { crossover_hz, phase_margin_deg }),
                    ..Source::rl(r, if r == 0.0 && l == 0.0 { 1e-9 } else { l })
                }),
        );
        let plane = proptest::option::of(
            (log_value(-11.0, -7.0), zero_or(log_value(-5.0, -1.0)), zero_or(log_value(-13.0, -10.0)))
                .prop_map(|(c, r, l)| Plane { capacitance_f: c, esr_ohm: r, esl_h: l }),
        );
        let package = proptest::option::of(
            (
                zero_or(log_value(-5.0, -2.0)),
                zero_or(log_value(-12.0, -9.0)),
                proptest::option::of((log_value(-10.0, -6.0), zero_or(log_value(-5.0, -2.0)))),
            )
                .prop_map(|(r, l, die)| {
                    (Package { r_ohm: r, l_h: l }, die.map(|(c, esr)| Die { capacitance_f: c, esr_ohm: esr }))
                }),
        );
        let rail = (
            (log_value(-1.0, 1.5), 0.1f64..50.0),
            proptest::option::weighted(0.8, (log_value(0.0, 6.0), log_value(0.1, 4.0))),
            any::<bool>(),
            source,
            plane,
            package,
            proptest::collection::vec(group, 0..8),
            proptest::collection::vec((log_value(-3.0, 2.0), proptest::option::of(log_value(-10.0, -7.0))), 1..4),
        )
            .prop_map(|((v, ripple), band, rss, source, plane, package, mut decaps, mut steps)| {
                if source.is_none() && plane.is_none() && decaps.iter().all(|g| g.count == 0) {
                    decaps.push(DecapGroup::new("p0", 1, 0.0));
                }
                // Without a band, some load must give a rise time for the band to follow from.
                if band.is_none() {
                    steps[0].1 = Some(steps[0].1.unwrap_or(1e-9));
                }
                Rail {
                    name: "R".into(),
                    voltage_v: v,
                    ripple_pct: ripple,
                    band_hz: band.map(|(lo, span)| [lo, lo * span]),
                    combine: if rss { Combine::Rss } else { Combine::Sum },
                    source,
                    plane,
                    package: package.map(|p| p.0),
                    die: package.and_then(|p| p.1),
                    loads: steps.into_iter().enumerate().map(|(i, (s, t))| Load::new(format!("L{i}"), s, t)).collect(),
                    decaps,
                    placement: None,
                }
            });
        let temperature = proptest::option::of((-60.0f64..20.0, 30.0f64..160.0).prop_map(|(a, b)| [a, b]));
        (rail, temperature, proptest::option::of(any::<bool>())).prop_map(move |(rail, temperature_c, generic)| Board {
            parts: parts.clone(),
            rails: vec![rail],
            temperature_c,
            generic_dc_bias: generic,
            ..Board::named("random")
        })
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    /// Any valid board gives a finite |Z| with Re(Z) >= 0 (a passive network) everywhere, and the analysis never
    /// panics and returns finite figures.
    #[test]
    fn valid_boards_give_finite_passive_impedance(board in board_strategy()) {
        prop_assert!(validate_board(&board).is_empty(), "{:?}", validate_board(&board));
        let rail = &board.rails[0];
        for corner in Corner::ALL {
            let net = Network::of_rail_in(&board, rail, corner);
            for view in [View::Board, View::Die] {
                for f in hushrail::analysis::log_grid(1.0, 1e10, 200) {
                    let z = net.impedance_in(f, view);
                    prop_assert!(z.re.is_finite() && z.im.is_finite(), "Z({f}) = {z}");
                    prop_assert!(z.re >= -1e-12 * z.norm(), "Re Z({f}) = {} < 0", z.re);
                }
            }
        }
        let a = analyze_rail(&board, 0, &AnalysisOptions { band_points: 200, ..Default::default() }).unwrap();
        let band = rail.band().unwrap().hz;
        prop_assert!(a.worst_ohm.is_finite() && a.worst_ohm >= 0.0);
        prop_assert!(a.worst_hz >= band[0] && a.worst_hz <= band[1]);
        // The worst corner's capacitance is the typical one times the temperature limit and an end of the
        // tolerance, and its |Z| is finite.
        let w = analyze_rail(&board, 0, &AnalysisOptions { band_points: 50, corner: Corner::Worst, ..Default::default() }).unwrap();
        prop_assert!(w.worst_ohm.is_finite());
        for (gw, gn) in w.groups.iter().zip(&a.groups) {
            let (Some(dw), Some(p)) = (&gw.derating, board.part(&gw.part)) else { continue };
            let tol = p.c_tolerance();
            prop_assert!(dw.tolerance == 1.0 - tol || dw.tolerance == 1.0 + tol || dw.tolerance == 1.0);
            let expected = gn.effective_c_f * dw.temperature * dw.tolerance;
            prop_assert!((gw.effective_c_f - expected).abs() <= 1e-12 * expected.abs());
        }
        prop_assert_eq!(a.meets_target, a.violations.is_empty());
        for w in a.antiresonances.windows(2) { prop_assert!(w[0].freq_hz < w[1].freq_hz); }
        for w in a.violations.windows(2) { prop_assert!(w[0].to_hz <= w[1].from_hz); }
    }

    /// Load, save, load gives the same board, and saving twice gives the same text (stable files).
    #[test]
    fn save_load_round_trip(board in board_strategy()) {
        let text = board_to_string(&board);
        let back = parse_board(&text, "memory").map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(&back, &board);
        prop_assert_eq!(board_to_string(&back), text);
    }

    /// Any bytes into the board parser give a board or an error, never a panic.
    #[test]
    fn parser_never_panics_on_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let text = String::from_utf8_lossy(&bytes);
        let _ = parse_board(&text, "fuzz.json");
    }

    /// JSON-shaped garbage (the harder case: it gets past the syntax check) gives a board or errors with places.
    #[test]
    fn parser_never_panics_on_json(value in json_strategy()) {
        let text = value.to_string();
        if let Err(e) = parse_board(&text, "fuzz.json") {
            prop_assert!(!e.problems.is_empty());
        }
    }

    /// Format then parse gives the value back within the rounding of 3 significant digits.
    #[test]
    fn format_then_parse(exp in -14.0f64..13.0, mant in 1.0f64..10.0, neg in any::<bool>()) {
        let v = if neg { -mant * 10f64.powf(exp.floor()) } else { mant * 10f64.powf(exp.floor()) };
        for unit in [Unit::Farad, Unit::Ohm, Unit::Henry, Unit::Hertz, Unit::None] {
            let text = format(v, unit);
            let back = parse(&text, unit).map_err(|e| TestCaseError::fail(e.to_string()))?;
            prop_assert!((back - v).abs() <= 5e-3 * v.abs(), "{v} -> {text} -> {back}");
            let text6 = format_sig(v, unit, 6);
            let back6 = parse(&text6, unit).map_err(|e| TestCaseError::fail(e.to_string()))?;
            prop_assert!((back6 - v).abs() <= 5e-6 * v.abs(), "{v} -> {text6} -> {back6}");
        }
    }

    /// Any text into the quantity parser gives a value or a reason, never a panic.
    #[test]
    fn unit_parser_never_panics(text in ".{0,20}") {
        if let Err(e) = parse(&text, Unit::Farad) { prop_assert!(!e.reason.is_empty()); }
    }
}

fn json_strategy() -> impl Strategy<Value = serde_json::Value> {
    use serde_json::{Value, json};
    let leaf = prop_oneof![
        Just(Value::Null),
        any::<bool>().prop_map(Value::Bool),
        any::<f64>().prop_filter("finite", |x| x.is_finite()).prop_map(|x| json!(x)),
        (-5i64..100).prop_map(|x| json!(x)),
        "[a-z_]{0,12}".prop_map(Value::String),
        Just(json!("hushrail-board")),
        Just(json!("ceramic")),
    ];
    let keys = prop_oneof![
        Just("format".to_string()),
        Just("version".to_string()),
        Just("name".to_string()),
        Just("parts".to_string()),
        Just("rails".to_string()),
        Just("id".to_string()),
        Just("kind".to_string()),
        Just("capacitance_f".to_string()),
        Just("esr_ohm".to_string()),
        Just("esl_h".to_string()),
        Just("voltage_v".to_string()),
        Just("ripple_pct".to_string()),
        Just("band_hz".to_string()),
        Just("loads".to_string()),
        Just("decaps".to_string()),
        Just("part".to_string()),
        Just("count".to_string()),
        Just("mounting_h".to_string()),
        Just("step_a".to_string()),
        Just("source".to_string()),
        Just("plane".to_string()),
        "[a-z]{1,6}",
    ];
    leaf.prop_recursive(4, 64, 8, move |inner| {
        prop_oneof![
            proptest::collection::vec(inner.clone(), 0..4).prop_map(Value::Array),
            proptest::collection::btree_map(keys.clone(), inner, 0..6)
                .prop_map(|m| Value::Object(m.into_iter().collect())),
        ]
    })
}

/// A value anywhere in a documented range: log-uniform between its ends, the ends themselves, or 0 where the
/// range takes 0.
fn in_range(r: &'static hushrail::model::ranges::Range) -> BoxedStrategy<f64> {
    let (lo, hi) = (r.min.max(1e-300).log10(), r.max.log10());
    let mut choices: Vec<(u32, BoxedStrategy<f64>)> = vec![
        (6, (lo..=hi).prop_map(|e| 10f64.powf(e).clamp(r.min, r.max)).boxed()),
        (1, Just(r.min).boxed()),
        (1, Just(r.max).boxed()),
    ];
    if r.zero_ok {
        choices.push((1, Just(0.0).boxed()));
    }
    proptest::strategy::Union::new_weighted(choices).boxed()
}

/// A board whose every value is drawn from the whole of its documented range, ends included.
fn extreme_board_strategy() -> impl Strategy<Value = Board> {
    use hushrail::model::ranges::*;
    let part = (in_range(&CAPACITANCE), in_range(&RESISTANCE), in_range(&INDUCTANCE))
        .prop_map(|(c, r, l)| Part::new("p", PartKind::Ceramic, c, r, l));
    let rail = (
        (in_range(&RAIL_VOLTAGE), in_range(&RIPPLE_PCT), in_range(&LOAD_STEP)),
        (in_range(&FREQUENCY), in_range(&FREQUENCY)),
        (in_range(&RESISTANCE), in_range(&SOURCE_INDUCTANCE)),
        (in_range(&PLANE_CAPACITANCE), in_range(&RESISTANCE), in_range(&INDUCTANCE)),
        (in_range(&RESISTANCE), in_range(&INDUCTANCE), in_range(&DIE_CAPACITANCE), in_range(&RESISTANCE)),
        (0u32..=1_000_000, in_range(&INDUCTANCE)),
        any::<[bool; 3]>(),
        proptest::option::of((in_range(&LOOP_CROSSOVER), in_range(&LOOP_PHASE_MARGIN))),
    );
    (part, rail).prop_map(|(part, (vrs, band, src, plane, pkg, group, on, control))| {
        let (lo, hi) = if band.0 < band.1 { band } else { (band.1, band.0) };
        let hi = if hi > lo { hi } else { lo * 2.0 };
        Board {
            parts: vec![part],
            rails: vec![Rail {
                name: "R".into(),
                voltage_v: vrs.0,
                ripple_pct: vrs.1,
                band_hz: Some([lo, hi.min(FREQUENCY.max)]),
                combine: Combine::Sum,
                source: on[0].then_some(Source {
                    control: control
                        .map(|(crossover_hz, phase_margin_deg)| SourceLoop { crossover_hz, phase_margin_deg }),
                    ..Source::rl(src.0, src.1)
                }),
                plane: on[1].then_some(Plane { capacitance_f: plane.0, esr_ohm: plane.1, esl_h: plane.2 }),
                package: on[2].then_some(Package { r_ohm: pkg.0, l_h: pkg.1 }),
                die: on[2].then_some(Die { capacitance_f: pkg.2, esr_ohm: pkg.3 }),
                loads: vec![Load::new("L", vrs.2, None)],
                decaps: vec![DecapGroup::new("p", group.0.max(1), group.1)],
                placement: None,
            }],
            ..Board::named("extreme")
        }
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    /// Any board inside the documented ranges (README, "Ranges"), ends included, computes finite figures: the
    /// ranges are what makes every answer a number.
    #[test]
    fn boards_inside_the_ranges_give_finite_answers(board in extreme_board_strategy()) {
        let problems = validate_board(&board);
        prop_assume!(problems.is_empty());
        for corner in [Corner::Typical, Corner::Worst] {
            for view in [Some(View::Board), Some(View::Die)] {
                let options = AnalysisOptions { band_points: 60, corner, view, ..Default::default() };
                let a = analyze_rail(&board, 0, &options).unwrap();
                prop_assert!(a.target_ohm.is_finite() && a.target_ohm > 0.0, "target {}", a.target_ohm);
                prop_assert!(a.worst_ohm.is_finite() && a.margin_db.is_finite() && a.margin_ratio.is_finite(),
                    "worst {} margin {} dB", a.worst_ohm, a.margin_db);
                for z in &a.scan.z { prop_assert!(z.re.is_finite() && z.im.is_finite()); }
                for v in &a.violations { prop_assert!(v.from_hz.is_finite() && v.to_hz.is_finite() && v.peak_ohm.is_finite()); }
                for p in &a.antiresonances { prop_assert!(p.freq_hz.is_finite() && p.z_ohm.is_finite()); }
                for f in hushrail::analysis::explain(&board, &board.rails[0], &a) { prop_assert!(!f.text.contains("NaN") && !f.text.contains(" inf")); }
            }
        }
        // The time domain too (a regulator's loop included): a figure is a number, or a refusal says why.
        if let Ok(d) = hushrail::analysis::droop(&board, 0, &hushrail::analysis::DroopOptions { points: Some(50), ..Default::default() }) {
            prop_assert!(d.droop_v.is_finite() && d.final_v.is_finite() && d.t_min_s.is_finite(), "droop {} final {}", d.droop_v, d.final_v);
            prop_assert!(d.waveform.iter().all(|p| p[0].is_finite() && p[1].is_finite()));
            prop_assert!(d.worst_case_droop_v().is_none_or(f64::is_finite));
        }
    }

    /// The scan is total: any samples at all (NaN, infinities, zeros, huge values) give an answer, with no panic and
    /// no endless loop, and a sample that is not a number can only fail the band, never pass it.
    #[test]
    fn the_scan_is_total(samples in proptest::collection::vec(
        prop_oneof![Just(f64::NAN), Just(f64::INFINITY), Just(0.0), Just(1e308), any::<f64>(), 0.0f64..2.0], 3..40),
        target in prop_oneof![Just(f64::NAN), 0.0f64..2.0]) {
        let n = samples.len();
        let z_at = |f: f64| {
            // Piecewise constant in ln f over [1, e^n): any sequence, refined points included.
            let i = (f.ln().max(0.0) as usize).min(n - 1);
            num_complex::Complex64::new(samples[i], 0.0)
        };
        let s = hushrail::analysis::scan(&z_at, [1.0, (n as f64).exp()], 3 * n, target);
        if samples.iter().any(|m| m.is_nan()) {
            prop_assert!(s.worst.z_ohm.is_nan() || target.is_nan() || s.worst.z_ohm > target);
        }
    }
}

/// A random valid board of [`board_strategy`] with its rail placed on a random plane pair: a rectangle of 30 to
/// 150 mm a side, every port at a random spot kept clear of the edges (the widest default port, a load's 5 mm pin
/// field, fits), the rail's package and die moved to each load (a placed rail carries them per load).
fn placed_board_strategy() -> impl Strategy<Value = Board> {
    let spot = (0.15f64..0.85, 0.15f64..0.85);
    let pair = (
        (0.03f64..0.15, 0.03f64..0.15),
        log_value(-4.7, -3.3),
        2.0f64..10.0,
        proptest::option::of(0.0f64..0.05),
        proptest::option::of(log_value(-5.5, -4.3)),
    );
    (board_strategy(), pair, proptest::collection::vec(spot, 16)).prop_map(|(mut board, pair, spots)| {
        let ((a, b), d, er, tan, copper) = pair;
        let at = |k: usize| [spots[k].0 * a, spots[k].1 * b];
        let rail = &mut board.rails[0];
        let (package, die) = (rail.package.take(), rail.die.take());
        rail.plane = None;
        rail.placement = Some(Placement {
            plane_pair: PlanePair {
                size_m: [a, b],
                dielectric_m: d,
                er,
                loss_tangent: tan,
                copper_m: copper,
                conductivity_s_m: None,
            },
            source: rail.source.as_ref().map(|_| SourcePlacement { at_m: at(0), port_m: None }),
            groups: (0..rail.decaps.len())
                .map(|g| GroupPlacement { spots: GroupSpots::At(at(1 + g)), port_m: None })
                .collect(),
            loads: (0..rail.loads.len())
                .map(|l| LoadPlacement {
                    at_m: at(12 + l),
                    pins_m: None,
                    package,
                    die: die.filter(|_| package.is_some()),
                })
                .collect(),
        });
        board
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    /// Any valid placed rail gives, at every load, a finite self-impedance with Re(Z) >= 0 (the plane pair and its
    /// branches are passive) and reciprocal transfer impedances (Z_kl = Z_lk), finite figures from the check, and a
    /// droop that is a number at every load or a refusal that says why.
    #[test]
    fn placed_rails_give_finite_passive_answers(board in placed_board_strategy()) {
        prop_assert!(validate_board(&board).is_empty(), "{:?}", validate_board(&board));
        let rail = &board.rails[0];
        let grid = hushrail::analysis::log_grid(1e3, 3e9, 60);
        let n = rail.loads.len();
        for k in 0..n {
            let z = hushrail::analysis::placed::load_sweep(&board, rail, k, None, &grid, Corner::Typical).unwrap();
            for (f, z) in grid.iter().zip(&z) {
                prop_assert!(z.re.is_finite() && z.im.is_finite(), "Z_{k}{k}({f}) = {z}");
                prop_assert!(z.re >= -1e-9 * z.norm(), "Re Z_{k}{k}({f}) = {} < 0", z.re);
            }
            for l in 0..k {
                let kl = hushrail::analysis::placed::load_sweep(&board, rail, k, Some(l), &grid, Corner::Typical).unwrap();
                let lk = hushrail::analysis::placed::load_sweep(&board, rail, l, Some(k), &grid, Corner::Typical).unwrap();
                for (a, b) in kl.iter().zip(&lk) {
                    prop_assert!((a - b).norm() <= 1e-9 * a.norm().max(b.norm()) + 1e-300, "Z_{k}{l} {a} vs Z_{l}{k} {b}");
                }
            }
        }
        let a = analyze_rail(&board, 0, &AnalysisOptions { band_points: 120, ..Default::default() }).unwrap();
        prop_assert!(a.worst_ohm.is_finite() && a.margin_db.is_finite(), "worst {} margin {} dB", a.worst_ohm, a.margin_db);
        for f in hushrail::analysis::explain(&board, rail, &a) { prop_assert!(!f.text.contains("NaN") && !f.text.contains(" inf")); }
        if let Ok(d) = hushrail::analysis::droop(&board, 0, &hushrail::analysis::DroopOptions { points: Some(50), ..Default::default() }) {
            prop_assert_eq!(d.loads.len(), n);
            for l in &d.loads {
                prop_assert!(l.droop_v.is_finite() && l.min_v.is_finite() && l.fit_error.is_finite(), "{}: droop {}", l.name, l.droop_v);
                prop_assert!(l.waveform.iter().all(|p| p[0].is_finite() && p[1].is_finite()));
                prop_assert!(l.worst_case_droop_v().is_none_or(f64::is_finite));
            }
        }
    }
}
