//! The method in brief and the cautions, in plain words.

use egui::{RichText, Ui};

/// Sections of the help page: a title and its paragraphs.
pub const SECTIONS: &[(&str, &[&str])] = &[
    (
        "What the plot shows",
        &[
            "The impedance |Z| a chip sees when it looks into the rail, against frequency, on log-log axes. The \
             regulator, the plane pair and every decap group are branches in parallel between the rail and ground; \
             each group of N identical parts is one series R-L-C (the part's ESR and ESL, plus the mounting \
             inductance of its pads and vias).",
            "Drag a count (or click it and type) and the curve, the verdict and the findings follow. Pin a curve to \
             compare a change against it.",
        ],
    ),
    (
        "Target impedance",
        &[
            "A rail may move only by its allowed ripple when its loads step their current. So its impedance must \
             stay under Z_target = V × ripple ÷ ΔI across the band where those steps have energy. ΔI is the sum of \
             the loads' steps: the worst case, every step at once.",
            "A rail meets target when its worst |Z| over the band is at or below the target. The margin is \
             20·log10(target ÷ worst |Z|): positive means headroom.",
        ],
    ),
    (
        "Anti-resonance",
        &[
            "Each group is capacitive below its self-resonance and inductive above it. Where one group has turned \
             inductive and the next is still capacitive, the two form a parallel resonance: a peak in |Z|. These \
             peaks are where rails fail. They are marked on the plot; hovering one names the two branches that \
             make it.",
            "The usual cures: a value between the two, more of the smaller part, a part with more ESR to damp the \
             peak, or less mounting inductance.",
        ],
    ),
    (
        "What the model leaves out",
        &["The model is lumped and idealised: one node, ideal parallel branches. It leaves out where each part \
             sits on the plane (spreading inductance), the package and the die, plane cavity resonances, a ceramic \
             part's loss of capacitance under DC bias, temperature and ageing, tolerance, and the regulator's \
             control loop beyond its output R-L."],
    ),
    (
        "Cautions",
        &[
            "Check every result against the parts' own data and against a measurement of the board before relying \
             on it. The sample boards and their values are invented.",
            "Derate voltage: keep each part well under its rated voltage as its data says. Ceramic parts lose much \
             of their capacitance under DC bias.",
            "Mind polarised parts (tantalum, polymer, electrolytic): fitted the wrong way round they can fail \
             violently.",
            "Large capacitor banks store energy: discharge them before handling a board.",
            "Where mains or high energy are near, follow local codes and licensed practice; this tool does not \
             replace either.",
        ],
    ),
];

/// Draw the help page.
pub fn help(ui: &mut Ui) {
    for (title, paragraphs) in SECTIONS {
        ui.add_space(6.0);
        ui.label(RichText::new(*title).strong().size(15.0));
        for p in *paragraphs {
            ui.label(*p);
            ui.add_space(3.0);
        }
    }
    ui.add_space(6.0);
    ui.label(RichText::new("Keys").strong().size(15.0));
    egui::Grid::new("keys").num_columns(2).show(ui, |ui| {
        for (k, what) in [
            ("Ctrl+O", "open a board"),
            ("Ctrl+S / Ctrl+Shift+S", "save / save as"),
            ("Ctrl+Z", "undo"),
            ("Ctrl+Shift+Z or Ctrl+Y", "redo"),
            ("double-click the plot", "see the whole band again"),
        ] {
            ui.monospace(k);
            ui.label(what);
            ui.end_row();
        }
    });
}
