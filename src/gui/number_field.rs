//! Text fields that accept engineering notation ("4u7", "100n", "10m") and refuse bad entries at the field.
//!
//! While the user types, the text lives here, not in the board. On Enter or when the field loses focus the text
//! is parsed with `units::parse` and handed to the caller, who turns it into an edit; if parsing or the edit is
//! refused, the reason shows under the field in the warning colour and the typed text stays for correction.
//! Escape puts the board's value back. Nothing reaches the board that did not pass both checks.

use crate::model::Problem;
use crate::units::{self, Unit};
use egui::{Id, Response, RichText, TextEdit, Ui};
use std::collections::HashMap;

/// One field being edited: the text as typed and, after a refused commit, why.
#[derive(Debug, Clone, Default)]
struct Entry {
    text: String,
    error: Option<String>,
}

/// The editing state of every field of the window, keyed by the board path of the value it edits (such as
/// `rails[0].voltage_v`), so a message stays with its field.
#[derive(Debug, Clone, Default)]
pub struct Fields {
    entries: HashMap<String, Entry>,
}

impl Fields {
    /// The refusal shown at a field, if any.
    pub fn error(&self, key: &str) -> Option<&str> {
        self.entries.get(key).and_then(|e| e.error.as_deref())
    }

    /// Show a refusal at a field that has no entry of its own (a drag or a button refused).
    pub fn set_error(&mut self, key: &str, text: String, reason: String) {
        self.entries.insert(key.to_string(), Entry { text, error: Some(reason) });
    }

    /// Forget a field's typed text and refusal.
    pub fn forget(&mut self, key: &str) {
        self.entries.remove(key);
    }

    /// Forget every typed text and refusal (the board was replaced, or changed by undo/redo, so the typed texts
    /// no longer belong to the values on screen).
    pub fn clear(&mut self) {
        self.entries.clear();
    }

    /// True when some field shows a refusal.
    pub fn has_errors(&self) -> bool {
        self.entries.values().any(|e| e.error.is_some())
    }
}

/// The text a value is shown with: lengths in mm or µm ([`units::format_length`]); whole plain numbers as whole
/// numbers ("1", never "1.00"); otherwise three significant digits, or up to six when that shows the stored value
/// (so 1.2345 V reads as typed), and never floating-point noise (a value that no short text gives back exactly is
/// shown to four digits). Rounding here never reaches the board: committing the text as shown changes nothing.
pub fn display(value: f64, unit: Unit) -> String {
    if unit == Unit::Metre {
        return units::format_length(value);
    }
    if unit == Unit::None && value.fract() == 0.0 && value.abs() < 1e15 {
        return format!("{value:.0}");
    }
    for digits in 3..=6 {
        let text = units::format_sig(value, unit, digits);
        if units::parse(&text, unit).is_ok_and(|v| v == value || (v - value).abs() <= 1e-12 * value.abs()) {
            return text;
        }
    }
    units::format_sig(value, unit, 4)
}

/// A refusal in the words the user typed: the engine's reason names the value at full precision ("not
/// -5e-9"); the field shows the text typed instead ("not -5n").
fn in_typed_words(reason: String, value: f64, typed: &str) -> String {
    reason.replace(&units::full_precision(value), typed.trim())
}

/// The reason to show at a field from an edit's refusal: the problems at this field's path first, else all.
pub fn refusal_text(key: &str, problems: &[Problem]) -> String {
    // A field's own problems are at its path or below it; a band edge's field (`band_hz[0]`) owns the problems
    // of the pair (`band_hz`).
    let here: Vec<&str> = problems
        .iter()
        .filter(|p| {
            p.path == key
                || p.path.starts_with(&format!("{key}."))
                || key.strip_prefix(p.path.as_str()).is_some_and(|rest| rest.starts_with('[') && !rest.contains('.'))
        })
        .map(|p| p.reason.as_str())
        .collect();
    // One message per bad entry: the first rule it breaks (a value below a range often breaks two rules that say
    // the same thing).
    match here.first() {
        Some(reason) => reason.to_string(),
        None => problems.first().map(|p| p.to_string()).unwrap_or_default(),
    }
}

/// A single-line field for any text the caller checks. `shown` is the board's current value as text; `commit`
/// gets the typed text when the user commits a change and says whether it landed.
pub fn text_field(
    ui: &mut Ui,
    fields: &mut Fields,
    key: &str,
    labelled_by: Id,
    shown: &str,
    width: f32,
    commit: impl FnOnce(&str) -> Result<(), String>,
) -> Response {
    let id = Id::unique(("hushrail-field", key));
    let entry = fields.entries.get(key).cloned();
    let mut text = entry.as_ref().map(|e| e.text.clone()).unwrap_or_else(|| shown.to_string());
    let error = entry.as_ref().and_then(|e| e.error.clone());
    let fail = super::theme::palette(ui.visuals().dark_mode).fail;

    let inner = ui.vertical(|ui| {
        // Inside a grid the cell's width comes from the last frame; claim the field's width so it is never
        // squeezed to its column header.
        ui.set_min_width(width);
        let mut edit = TextEdit::singleline(&mut text).id(id).desired_width(width);
        if error.is_some() {
            edit = edit.text_color(fail);
        }
        let response = ui.add(edit).labelled_by(labelled_by);
        if let Some(reason) = &error {
            ui.set_max_width(width.max(160.0));
            ui.label(RichText::new(format!("Refused: {reason}")).color(fail).small());
        }
        response
    });
    let response = inner.inner;

    if response.changed() {
        let e = fields.entries.entry(key.to_string()).or_default();
        e.text = text.clone();
    }
    if response.lost_focus() {
        // Escape puts the board's value back; committing the text already shown changes nothing.
        if ui.input(|i| i.key_pressed(egui::Key::Escape)) || text == shown {
            fields.forget(key);
        } else {
            match commit(&text) {
                Ok(()) => fields.forget(key),
                Err(reason) => fields.set_error(key, text, reason),
            }
        }
    } else if !response.has_focus() && error.is_none() && fields.entries.contains_key(key) {
        // Text typed into a field that lost focus without a commit (the panel was switched away): drop it.
        fields.forget(key);
    }
    response
}

/// A field for a quantity in engineering notation.
#[allow(clippy::too_many_arguments)]
pub fn number_field(
    ui: &mut Ui,
    fields: &mut Fields,
    key: &str,
    labelled_by: Id,
    value: f64,
    unit: Unit,
    width: f32,
    apply: impl FnOnce(f64) -> Result<(), String>,
) -> Response {
    let shown = display(value, unit);
    text_field(ui, fields, key, labelled_by, &shown, width, |text| {
        let v = units::parse(text, unit).map_err(|e| e.reason)?;
        apply(v).map_err(|reason| in_typed_words(reason, v, text))
    })
}

/// A field for an optional quantity: empty means "not given".
#[allow(clippy::too_many_arguments)]
pub fn optional_number_field(
    ui: &mut Ui,
    fields: &mut Fields,
    key: &str,
    labelled_by: Id,
    value: Option<f64>,
    unit: Unit,
    width: f32,
    apply: impl FnOnce(Option<f64>) -> Result<(), String>,
) -> Response {
    let shown = value.map(|v| display(v, unit)).unwrap_or_default();
    text_field(ui, fields, key, labelled_by, &shown, width, |text| {
        if text.trim().is_empty() {
            return apply(None);
        }
        let v = units::parse(text, unit).map_err(|e| e.reason)?;
        apply(Some(v)).map_err(|reason| in_typed_words(reason, v, text))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_shows_the_value_without_noise() {
        assert_eq!(display(4.7e-6, Unit::Farad), "4.70 µF");
        assert_eq!(display(0.85, Unit::Volt), "850 mV");
        assert_eq!(display(1.2345, Unit::Volt), "1.2345 V");
        assert_eq!(display(f64::from_bits(5e-4f64.to_bits() + 1), Unit::Metre), "500 µm");
        assert_eq!(display(2.0 / 3.0 * 1e-9, Unit::Henry), "666.7 pH");
        assert_eq!(display(1.0, Unit::None), "1");
        assert_eq!(display(5.0, Unit::None), "5");
        assert_eq!(display(2.5, Unit::None), "2.50");
        for v in [1.0 / 3.0, 2.2e-12, 123456.7, 6.02e-9] {
            let back = units::parse(&display(v, Unit::Henry), Unit::Henry).unwrap();
            assert!((back - v).abs() <= 1e-3 * v, "{v} shown as {}", display(v, Unit::Henry));
        }
        assert_eq!(
            in_typed_words("must be from 1 mV to 100 kV, not -5e-9".into(), -5e-9, " -5n"),
            "must be from 1 mV to 100 kV, not -5n"
        );
    }

    #[test]
    fn refusal_prefers_the_fields_own_problem() {
        let problems = vec![
            Problem::new("rails[0].band_hz", "must be [low, high]"),
            Problem::new("rails[0].voltage_v", "must be > 0"),
        ];
        assert_eq!(refusal_text("rails[0].voltage_v", &problems), "must be > 0");
        assert!(refusal_text("rails[0].name", &problems).contains("band_hz"));
        // One message per entry.
        let two =
            vec![Problem::new("rails[0].voltage_v", "must be > 0"), Problem::new("rails[0].voltage_v", "out of range")];
        assert_eq!(refusal_text("rails[0].voltage_v", &two), "must be > 0");
    }
}
