//! A small tool beside the planner: size a series coupling capacitor from the impedance it drives, the lowest
//! frequency to pass and how far below it the corner should sit. The figures come from
//! [`crate::physics::coupling::size_coupling`]; the notes (polarity, dielectric, rating) always show.

use super::app::App;
use super::theme;
use crate::physics::coupling::{COUPLING_NOTES, ESeries, size_coupling};
use crate::units::{Unit, format, parse};
use egui::{RichText, Ui};

/// The tool's entries as typed, so that a half-typed value is kept while the user types.
#[derive(Debug, Clone)]
pub struct CouplingTool {
    /// Shown or not.
    pub open: bool,
    /// The impedance the capacitor drives, as typed.
    pub impedance: String,
    /// The lowest frequency to pass, as typed.
    pub lowest: String,
    /// How far below the lowest frequency the corner sits, as typed.
    pub factor: String,
    /// The preferred-value series.
    pub series: ESeries,
}

impl Default for CouplingTool {
    fn default() -> Self {
        // The factor of ten is common practice.
        CouplingTool {
            open: false,
            impedance: "100".into(),
            lowest: "20".into(),
            factor: "10".into(),
            series: ESeries::E12,
        }
    }
}

/// A positive number read from an entry, or why not.
fn positive(text: &str, unit: Unit, what: &str) -> Result<f64, String> {
    match parse(text, unit) {
        Ok(v) if v > 0.0 && v.is_finite() => Ok(v),
        Ok(v) => Err(format!("the {what} must be above zero, not {v}")),
        Err(e) => Err(format!("the {what}: {}", e.reason)),
    }
}

impl App {
    /// The coupling-capacitor window, when open.
    pub(super) fn coupling_window(&mut self, ctx: &egui::Context) {
        let mut open = self.coupling.open;
        egui::Window::new("Coupling capacitor")
            .open(&mut open)
            .resizable(false)
            .default_width(380.0)
            .show(ctx, |ui| self.coupling_body(ui));
        self.coupling.open = open;
    }

    fn coupling_body(&mut self, ui: &mut Ui) {
        let pal = theme::palette(ui.visuals().dark_mode);
        let t = &mut self.coupling;
        ui.label(RichText::new("C = 1 / (2π · Z · f_lowest / factor), then the next preferred value up.").small());
        egui::Grid::new("coupling-grid").num_columns(2).spacing([10.0, 6.0]).show(ui, |ui| {
            for (label, text) in [
                ("Impedance it drives (Ω)", &mut t.impedance),
                ("Lowest frequency to pass (Hz)", &mut t.lowest),
                ("Corner this far below it (×)", &mut t.factor),
            ] {
                let l = ui.label(label);
                ui.add(egui::TextEdit::singleline(text).desired_width(90.0)).labelled_by(l.id);
                ui.end_row();
            }
            ui.label("Preferred values");
            ui.horizontal(|ui| {
                for s in [ESeries::E6, ESeries::E12, ESeries::E24, ESeries::E96] {
                    ui.radio_value(&mut t.series, s, s.name());
                }
            });
            ui.end_row();
        });
        let entries = positive(&t.impedance, Unit::Ohm, "impedance").and_then(|z| {
            let f = positive(&t.lowest, Unit::Hertz, "lowest frequency")?;
            let k = positive(&t.factor, Unit::None, "factor")?;
            Ok((z, f, k))
        });
        ui.separator();
        match entries {
            Err(reason) => {
                ui.label(RichText::new(reason).color(pal.fail));
            }
            Ok((z, f, k)) => {
                let c = size_coupling(z, f, k, t.series);
                ui.label(RichText::new(format!("C = {}", format(c.exact_f, Unit::Farad))).strong());
                ui.label(format!("for a corner at {}", format(c.target_corner_hz, Unit::Hertz)));
                ui.label(
                    RichText::new(format!(
                        "preferred value {} ({})",
                        format(c.preferred_f, Unit::Farad),
                        t.series.name()
                    ))
                    .strong(),
                );
                ui.label(format!("its corner {}", format(c.corner_hz, Unit::Hertz)));
                ui.label(format!("loss at {} {:.2} dB", format(f, Unit::Hertz), c.loss_db));
            }
        }
        ui.separator();
        for note in COUPLING_NOTES {
            ui.label(RichText::new(note).small().color(pal.note));
        }
    }
}
