//! Pins: frozen copies of a rail's curve kept on the plot to compare a what-if against. A pin is not part of the
//! board (not in the board file, not undone); it belongs to the window, to one rail by name. The window's store
//! keeps a board file's pins beside its other session files, keyed by the file's path (`files::Store::save_pins`),
//! and gives them back when that file is opened again.

use super::app::App;
use super::results::RailResult;
use super::theme;
use egui::{Color32, RichText, Ui};
use serde::{Deserialize, Serialize};

/// A frozen curve with the figures it had.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Pin {
    /// A name the user can change.
    pub name: String,
    /// The rail it was taken from.
    pub rail: String,
    /// Its place in the theme's pin colours: the colour itself is taken from the theme in use, so a pin made in
    /// the dark theme stays readable in the light one.
    pub slot: usize,
    /// Drawn or hidden.
    pub visible: bool,
    /// The curve as [log10 f, log10 |Z|].
    pub points: Vec<[f64; 2]>,
    /// Worst |Z| over the band when pinned, Ω.
    pub worst_ohm: f64,
    /// Where, Hz.
    pub worst_hz: f64,
    /// Margin when pinned, dB.
    pub margin_db: f64,
    /// Whether the rail met its target then.
    pub meets: bool,
}

impl Pin {
    /// A pin of a rail's current result.
    pub fn of(name: String, rail: String, slot: usize, result: &RailResult) -> Pin {
        let a = &result.analysis;
        Pin {
            name,
            rail,
            slot,
            visible: true,
            points: result.plot.total.clone(),
            worst_ohm: a.worst_ohm,
            worst_hz: a.worst_hz,
            margin_db: a.margin_db,
            meets: a.meets_target,
        }
    }
}

impl Pin {
    /// Its colour in the theme in use.
    pub fn color(&self, dark: bool) -> Color32 {
        let pins = theme::palette(dark).pins;
        pins[self.slot % pins.len()]
    }
}

/// The width of one pin's controls on the pins' lines (points, body font).
const PIN_W: f32 = 225.0;
/// The width of the "pins:" label.
const PINS_LABEL_W: f32 = 44.0;

impl App {
    /// Pin the selected rail's current curve.
    pub fn pin_current(&mut self) {
        let Some(rail) = self.doc.board.rails.get(self.view.selected_rail) else { return };
        let Some(result) = self.view.results.get(self.view.selected_rail) else { return };
        let slot = self.view.next_pin - 1;
        let name = format!("pin {}", self.view.next_pin);
        self.view.next_pin += 1;
        self.view.pins.push(Pin::of(name, rail.name.clone(), slot, result));
    }

    /// The pin button and the selected rail's pins: show/hide, name, figures, remove.
    pub(super) fn pins_bar(&mut self, ui: &mut Ui) {
        let Some(rail) = self.doc.board.rails.get(self.view.selected_rail) else { return };
        let rail_name = rail.name.clone();
        let mut remove = None;
        let dark = ui.visuals().dark_mode;
        let pal = theme::palette(dark);
        if !self.view.pins.iter().any(|p| p.rail == rail_name) {
            return;
        }
        // A pin's controls stay together; as many pins a line as fit, counted before drawing (a wrapped row
        // would split a pin from its name or its verdict).
        let per_line = ((ui.available_width() - PINS_LABEL_W) / PIN_W).floor().max(1.0) as usize;
        let shown: Vec<usize> = (0..self.view.pins.len()).filter(|&i| self.view.pins[i].rail == rail_name).collect();
        for (line, chunk) in shown.chunks(per_line).enumerate() {
            ui.horizontal(|ui| {
                // Only the first line says "pins:"; the others keep their pins aligned under it.
                let size = egui::vec2(PINS_LABEL_W - 8.0, 14.0);
                if line == 0 {
                    ui.add_sized(size, egui::Label::new(RichText::new("pins:").weak()));
                } else {
                    ui.allocate_exact_size(size, egui::Sense::hover());
                }
                for &i in chunk {
                    let pin = &mut self.view.pins[i];
                    let shown = ui.checkbox(&mut pin.visible, "").on_hover_text("Show or hide this pin");
                    let show_label = format!("show {}", pin.name);
                    shown.widget_info(|| {
                        egui::WidgetInfo::selected(egui::Role::CheckBox, true, pin.visible, &show_label)
                    });
                    let (rect, _) = ui.allocate_exact_size(egui::vec2(14.0, 14.0), egui::Sense::hover());
                    ui.painter().rect_filled(rect, 3.0, pin.color(dark));
                    ui.add(egui::TextEdit::singleline(&mut pin.name).desired_width(70.0)).on_hover_text(format!(
                        "worst |Z| {} at {}, margin {:+.1} dB when pinned",
                        crate::units::format(pin.worst_ohm, crate::units::Unit::Ohm),
                        crate::units::format(pin.worst_hz, crate::units::Unit::Hertz),
                        pin.margin_db
                    ));
                    let (verdict, color) = if pin.meets { ("meets", pal.ok) } else { ("misses", pal.fail) };
                    ui.label(RichText::new(format!("{:+.1} dB, {verdict}", pin.margin_db)).small().color(color));
                    let remove_button = ui.small_button("×").on_hover_text("Remove this pin");
                    let label = format!("remove {}", pin.name);
                    remove_button.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &label));
                    if remove_button.clicked() {
                        remove = Some(i);
                    }
                    ui.add_space(6.0);
                }
            });
        }
        if let Some(i) = remove {
            self.view.pins.remove(i);
        }
    }
}
