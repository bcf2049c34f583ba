//! Choosing one of a placed rail's loads, or none (the worst): the plot's load and where suggested parts go.

use crate::model::Rail;
use egui::Ui;

/// A labelled drop-down of `rail`'s loads by name, with `none_words` for `None`, editing `choice` in place.
pub(super) fn load_choice(
    ui: &mut Ui,
    id_salt: &str,
    label: &str,
    rail: &Rail,
    none_words: &str,
    choice: &mut Option<usize>,
) {
    let name = |k: Option<usize>| match k.and_then(|k| rail.loads.get(k)) {
        Some(load) => load.name.clone(),
        None => none_words.to_string(),
    };
    let l = ui.label(label);
    egui::ComboBox::from_id_salt(id_salt)
        .selected_text(name(*choice))
        .show_ui(ui, |ui| {
            ui.selectable_value(choice, None, name(None));
            for k in 0..rail.loads.len() {
                ui.selectable_value(choice, Some(k), name(Some(k)));
            }
        })
        .response
        .labelled_by(l.id);
}
