//! A droop's figures in words: the one text the command line, the window and the report all show.

use super::{Droop, LINEAR_LIMIT, LoadDroop, WorstCase};
use crate::analysis::View;
use crate::units::{Unit, format};

/// The words for a droop of `v`: the figure, or, past [`LINEAR_LIMIT`] of the rail's voltage, that it is beyond
/// what the model can say.
pub fn droop_figure(d: &Droop, v: f64) -> String {
    if d.beyond_model(v) {
        format!(
            "beyond {:.0} % of the rail (over {}), where the linear, constant-current model no longer holds",
            LINEAR_LIMIT * 100.0,
            format(LINEAR_LIMIT * d.nominal_v, Unit::Volt)
        )
    } else {
        format(v, Unit::Volt)
    }
}

/// The stimulus in one line.
pub fn stimulus_line(d: &Droop) -> String {
    format!(
        "step {} with a {} 10-90 % rise (a linear ramp over {}), from {}",
        format(d.step_a, Unit::Ampere),
        format(d.rise_s, Unit::Second),
        format(d.ramp_s, Unit::Second),
        format(d.nominal_v, Unit::Volt)
    )
}

/// What was done to keep the time domain to the verdict's band, when anything was.
pub fn filter_line(d: &Droop) -> Option<String> {
    d.filter.map(|f| {
        format!(
            "the load's current is filtered to the band: its edges reach {} (0.35/rise, common practice), past the \
             band's upper edge {}; a low-pass 3 dB down there (poles at {} and {}) keeps both domains to one band",
            format(f.load_edge_hz, Unit::Hertz),
            format(f.edge_hz, Unit::Hertz),
            format(f.poles_hz[0], Unit::Hertz),
            format(f.poles_hz[1], Unit::Hertz)
        )
    })
}

/// The step's verdict: within or outside the allowed band, where, and the figures.
pub fn verdict_line(d: &Droop) -> String {
    let at = match (d.node, d.worst_load()) {
        (View::Board, None) => "at the board".to_string(),
        (View::Die, None) => "at the die".to_string(),
        (View::Board, Some(l)) => format!("at the worst load, {}'s pins", l.name),
        (View::Die, Some(l)) => format!("at the worst load, {}'s die", l.name),
    };
    let verdict = if d.meets { "WITHIN" } else { "OUTSIDE" };
    format!(
        "{verdict} the allowed band {at}: droop {} (lowest {} at {}), allowed {}",
        droop_figure(d, d.droop_v),
        format(d.min_v, Unit::Volt),
        format(d.t_min_s, Unit::Second),
        format(d.allowed_v, Unit::Volt)
    )
}

/// When the voltage settles, or that it never does.
pub fn settling_line(d: &Droop) -> String {
    match d.settling_s {
        Some(t) => format!(
            "settles to {} (within 10 % of the droop) after {}",
            format(d.final_v, Unit::Volt),
            format(t, Unit::Second)
        ),
        None => {
            format!("never settles: a resonance without damping keeps ringing about {}", format(d.final_v, Unit::Volt))
        }
    }
}

/// The worst on/off pattern and what bounds it.
pub fn worst_case_line(d: &Droop) -> String {
    match &d.worst_case {
        WorstCase::Unbounded => "worst on/off pattern: unbounded (a resonance without damping: a load toggling at its \
                                 frequency pumps it without limit)"
            .to_string(),
        WorstCase::Bounded { droop_v, pattern, t_s, dominant_hz } => {
            let verdict = if d.worst_case_meets { "within" } else { "OUTSIDE" };
            let pulses = if pattern.len() == 1 { "1 pulse".to_string() } else { format!("{} pulses", pattern.len()) };
            let dominant = dominant_hz.map_or(String::new(), |f| format!(" at about {}", format(f, Unit::Hertz)));
            format!(
                "worst on/off pattern: droop {} ({verdict} the allowed band), {pulses}{dominant}, each on and off \
                 interval at least {} ({}), lowest at {}",
                droop_figure(d, *droop_v),
                format(d.min_interval_s, Unit::Second),
                d.min_interval_from,
                format(*t_s, Unit::Second)
            )
        }
    }
}

/// The sustained-resonance estimate, when the band has a peak.
pub fn sustained_line(d: &Droop) -> Option<String> {
    d.sustained.as_ref().map(|s| {
        format!(
            "sustained resonance at the highest in-band peak ({}, {}): ΔI·((2/π)|Z| + R_dc/2) = {} (square wave's \
             fundamental plus its mean, common practice). {}",
            format(s.peak_hz, Unit::Hertz),
            format(s.z_ohm, Unit::Ohm),
            droop_figure(d, s.droop_v),
            s.cause
        )
    })
}

/// One load's droop on a placed rail, as the command line lists them under the rail's.
pub fn load_line(d: &Droop, l: &LoadDroop) -> String {
    let verdict = if l.meets { "WITHIN" } else { "OUTSIDE" };
    let at = match l.view {
        View::Board => "at its pins",
        View::Die => "at its die",
    };
    let pattern = match l.worst_case_droop_v() {
        Some(v) => format!("worst on/off pattern {}", droop_figure(d, v)),
        None => "worst on/off pattern unbounded".to_string(),
    };
    format!(
        "load {}: {verdict} {at}: droop {} (lowest {} at {}); {pattern}; fit to the plane pair within {:.2} %",
        l.name,
        droop_figure(d, l.droop_v),
        format(l.min_v, Unit::Volt),
        format(l.t_min_s, Unit::Second),
        100.0 * l.fit_error
    )
}

/// Every line, in the order shown: the figures, then the notes.
pub fn lines(d: &Droop) -> Vec<String> {
    let mut out = vec![stimulus_line(d)];
    out.extend(filter_line(d));
    out.push(verdict_line(d));
    out.extend(d.loads.iter().map(|l| format!("  {}", load_line(d, l))));
    if let Some(b) = &d.board_node {
        out.push(format!(
            "at the board: droop {} (lowest {} at {})",
            droop_figure(d, b.droop_v),
            format(b.min_v, Unit::Volt),
            format(b.t_min_s, Unit::Second)
        ));
    }
    out.push(settling_line(d));
    out.push(worst_case_line(d));
    out.extend(sustained_line(d));
    out.extend(d.warnings.iter().map(|w| format!("note: {w}")));
    out
}
