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
        "Corners, yield and sensitivity",
        &[
            "The verdict takes the typical corner: each part's capacitance at the rail's DC voltage (its own DC-bias \
             curve, or the generic class II model), at room temperature, with no tolerance. \"As given\" takes the \
             values exactly as typed. The worst corner adds the temperature class limit over the board's range and \
             searches the ends of every group's capacitance and ESR tolerance for the highest |Z| in the band.",
            "The yield draws random boards, each group's capacitance and ESR once and uniformly within their \
             tolerances (a group's parts come from one reel), and counts those that meet target. Beside each \
             group, how much the worst |Z| moves with one part more or one fewer shows which group the verdict \
             hangs on.",
            "A part rated below its rail's voltage fails the rail whatever the impedance.",
        ],
    ),
];

/// Draw the help page: the method in brief, then the cautions every face gives (`crate::notes`).
pub fn help(ui: &mut Ui) {
    let notes: [(&str, &[&str]); 2] =
        [("What the model leaves out", crate::notes::LEAVES_OUT), ("Cautions", crate::notes::SAFETY)];
    for (title, paragraphs) in SECTIONS.iter().copied().chain(notes) {
        ui.add_space(6.0);
        ui.label(RichText::new(title).strong().size(15.0));
        for p in paragraphs {
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
