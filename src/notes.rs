//! The cautions every face gives, written once: what the model leaves out, and how to use its answers safely.
//! The help page, the report and `hushrail check` show these; README.md repeats them word for word (a test holds
//! the two together).

/// What a position on a placed rail stands for (the board map shows it beside its legend).
pub const POSITIONS: &str = "On the board map and in the file, a position is the centre of a square port seen from the top (a part's \
     port 0.5 mm, the regulator's 2 mm and a load's pin field 5 mm × 5 mm unless the file gives them): the pads' \
     own shapes, the layer a part sits on and its rotation are not in the model, and the plane's edges are ideal \
     (no current crosses them).";

/// What the model really leaves out (and what it does include, so nobody thinks it is missing).
pub const LEAVES_OUT: &[&str] = &[
    "On a lumped rail the model is one node: each capacitor group is one series R-L-C (or its measured data), \
     the planes one capacitance, the regulator one R-L (in series with its control loop's crossover tank when the source gives \
     its crossover and phase margin), the package one R-L and the die one R-C. It includes \
     the mounting inductance, the view at the die through the package, each part's loss of capacitance under \
     DC bias, the temperature class limits and the tolerances of capacitance and ESR.",
    "A placed rail (one with a plane_pair) adds where each part sits: the plane pair as an ideal-edged \
     rectangular cavity, so the spreading inductance between each part and each load and the plane's own \
     resonances are in it. It leaves out fringing and radiation at the plane's edges, antipads and cut-outs, \
     non-rectangular outlines and several plane pairs joined by vias. The droop is taken at each load, every \
     load's step through the plane pair's self and transfer impedances (fitted as poles and residues, every load \
     stepping at once), and so are the worst on/off pattern, the check, suggest, the report and the window's \
     plot and time view.",
    POSITIONS,
    "Both leave out a regulator's control loop beyond a second-order loop of a given crossover and phase \
     margin (without them, beyond its output R-L), ageing of class II ceramics, ESR and \
     ESL changing with frequency and bias, and any coupling between rails.",
    "The sample boards and the shelf's parts are invented, and the generic DC-bias model and the temperature \
     class limits are typical values from memory: none is data of any product. Replace them with your parts' \
     own data, a dc_bias curve for each ceramic part. Measured parts are used as measured, at the bias of \
     their measurement.",
];

/// How to use the answers safely.
pub const SAFETY: &[&str] = &[
    "Check the results against the parts' own data and against a measurement of the built board before relying \
     on them.",
    "Derate voltage: a part must be rated above the rail it sits on, with the margin its data ask for; a part \
     rated below its rail fails the check.",
    "Mind polarised parts (tantalum, polymer, aluminium electrolytic): reversed or over-voltage, they can fail \
     short, overheat or burn.",
    "Capacitors store energy and can stay charged after power is removed; large ones on high-voltage rails can \
     hurt when discharged through a person or a tool.",
    "Where mains or high energy are near, follow local codes and licensed practice; this tool does not replace \
     either.",
];

/// Every caution, the model's limits first.
pub fn all() -> impl Iterator<Item = &'static str> {
    LEAVES_OUT.iter().chain(SAFETY).copied()
}
