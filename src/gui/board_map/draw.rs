//! Drawing the board map: the plane, the voltage field under it, the loads' pin fields, the regulator, the parts
//! in their groups' colours, a legend that says which colour is which group, a scale bar and the field's scale.

use super::geometry::{Item, MIN_SIDE, Thing, Transform, scale_bar_m};
use crate::analysis::placed::PlaneField;
use crate::gui::theme;
use crate::model::Rail;
use crate::units::{Unit, format, format_length};
use egui::{Align2, Color32, FontId, Painter, Rect, Stroke, StrokeKind, pos2, vec2};

/// Everything one frame of the map draws.
pub struct Scene<'a> {
    /// The rail.
    pub rail: &'a Rail,
    /// Its items (from [`super::items`]).
    pub items: &'a [Item],
    /// The load whose impedance the plot shows (drawn with a heavier outline).
    pub shown_load: usize,
    /// The item under the pointer or being dragged.
    pub highlighted: Option<Thing>,
    /// The plane's voltage, when shown.
    pub field: Option<&'a PlaneField>,
    /// The theme's colours.
    pub visuals: &'a egui::Visuals,
}

/// The field's colour scale spans this many dB below its highest value.
const FIELD_RANGE_DB: f64 = 40.0;

/// Viridis (van der Walt and Smith's perceptually uniform colour map for matplotlib, designed to stay readable
/// with the common colour-vision deficiencies), nine stops from 0 to 1 (values from memory).
const VIRIDIS: [[u8; 3]; 9] = [
    [0x44, 0x01, 0x54],
    [0x47, 0x2d, 0x7b],
    [0x3b, 0x52, 0x8b],
    [0x2c, 0x72, 0x8e],
    [0x21, 0x91, 0x8c],
    [0x28, 0xae, 0x80],
    [0x5e, 0xc9, 0x62],
    [0xad, 0xdc, 0x30],
    [0xfd, 0xe7, 0x25],
];

/// The colour of `t` in 0..=1 on the field's scale.
pub fn field_colour(t: f64) -> Color32 {
    let t = if t.is_finite() { t.clamp(0.0, 1.0) } else { 0.0 };
    let x = t * (VIRIDIS.len() - 1) as f64;
    let i = (x.floor() as usize).min(VIRIDIS.len() - 2);
    let f = x - i as f64;
    let mix = |a: u8, b: u8| (a as f64 + (b as f64 - a as f64) * f).round() as u8;
    let (a, b) = (VIRIDIS[i], VIRIDIS[i + 1]);
    Color32::from_rgb(mix(a[0], b[0]), mix(a[1], b[1]), mix(a[2], b[2]))
}

/// Where a voltage sits on the field's scale: 0 at 40 dB below the highest, 1 at the highest.
pub fn field_position(v: f64, max_v: f64) -> f64 {
    if !(max_v > 0.0 && v > 0.0) {
        return 0.0;
    }
    (1.0 + 20.0 * (v / max_v).log10() / FIELD_RANGE_DB).clamp(0.0, 1.0)
}

/// Draw the whole map into `rect`.
pub fn map(painter: &Painter, rect: Rect, t: &Transform, scene: &Scene<'_>) {
    let painter = painter.with_clip_rect(rect);
    let v = scene.visuals;
    let dark = v.dark_mode;
    let text = v.text_color();
    let Some(p) = &scene.rail.placement else { return };
    let plane = Rect::from_two_pos(t.to_screen([0.0, 0.0]), t.to_screen(p.plane_pair.size_m));
    painter.rect_filled(plane, 0.0, if dark { Color32::from_gray(38) } else { Color32::from_gray(236) });
    if let Some(field) = scene.field {
        field_cells(&painter, t, p.plane_pair.size_m, field);
    }
    painter.rect_stroke(plane, 0.0, Stroke::new(1.5, text), StrokeKind::Outside);

    let outline = if dark { Color32::BLACK } else { Color32::WHITE };
    let highlight = theme::palette(dark).note;
    for item in scene.items {
        let r = t.rect_of(item.at_m, item.size_m, MIN_SIDE);
        let lit = scene.highlighted == Some(item.thing);
        match item.thing {
            Thing::Load(k) => {
                let shown = k == scene.shown_load;
                let fill = if dark {
                    Color32::from_rgba_unmultiplied(255, 255, 255, 28)
                } else {
                    Color32::from_rgba_unmultiplied(0, 0, 0, 22)
                };
                painter.rect_filled(r, 2.0, fill);
                let stroke = Stroke::new(if shown { 3.0 } else { 1.5 }, if lit { highlight } else { text });
                painter.rect_stroke(r, 2.0, stroke, StrokeKind::Inside);
            }
            Thing::Source => {
                painter.rect_filled(r, 0.0, if dark { Color32::from_gray(170) } else { Color32::from_gray(80) });
                painter.rect_stroke(
                    r,
                    0.0,
                    Stroke::new(if lit { 2.5 } else { 1.0 }, if lit { highlight } else { outline }),
                    StrokeKind::Outside,
                );
            }
            Thing::Part { group, .. } => {
                swatch(&painter, r, group, dark);
                if lit {
                    painter.rect_stroke(r.expand(3.0), 2.0, Stroke::new(2.0, highlight), StrokeKind::Outside);
                }
            }
        }
    }
    // Names last, over every shape: a load's above its pin field (else below), the regulator's beside it, a part's
    // designator under it where there is room; a name that would cover another is left to the tooltip.
    let mut taken: Vec<Rect> = Vec::new();
    for item in scene.items {
        let r = t.rect_of(item.at_m, item.size_m, MIN_SIDE);
        let places: Vec<(egui::Pos2, Align2)> = match item.thing {
            Thing::Load(_) => vec![
                (pos2(r.center().x, r.top() - 3.0), Align2::CENTER_BOTTOM),
                (pos2(r.center().x, r.bottom() + 3.0), Align2::CENTER_TOP),
            ],
            Thing::Source => vec![(pos2(r.right() + 4.0, r.center().y), Align2::LEFT_CENTER)],
            Thing::Part { .. } if r.width() >= 14.0 => vec![(pos2(r.center().x, r.bottom() + 2.0), Align2::CENTER_TOP)],
            Thing::Part { .. } => Vec::new(),
        };
        for (pos, align) in places {
            let size = label_size(&painter, &item.label);
            let spot = align.anchor_size(pos, size);
            if taken.iter().all(|t| !t.intersects(spot)) {
                label(&painter, pos, align, &item.label, v);
                taken.push(spot);
                break;
            }
        }
    }
    scale_bar(&painter, rect, t, v);
    if let Some(field) = scene.field {
        field_scale(&painter, rect, scene.rail, field, v);
    }
}

/// The size a name takes on the map, points.
fn label_size(painter: &Painter, words: &str) -> egui::Vec2 {
    painter.layout_no_wrap(words.to_string(), FontId::proportional(12.5), Color32::WHITE).size() + vec2(3.0, 3.0)
}

/// Text with the panel's colour behind it, so it reads over the field and the parts in both themes.
fn label(painter: &Painter, pos: egui::Pos2, align: Align2, words: &str, v: &egui::Visuals) {
    let font = FontId::proportional(12.5);
    let galley = painter.layout_no_wrap(words.to_string(), font, v.text_color());
    let r = align.anchor_size(pos, galley.size()).expand(1.5);
    painter.rect_filled(r, 2.0, v.panel_fill.gamma_multiply(0.85));
    painter.galley(r.min + vec2(1.5, 1.5), galley, v.text_color());
}

fn field_cells(painter: &Painter, t: &Transform, size_m: [f64; 2], field: &PlaneField) {
    let [nx, ny] = field.cells;
    let (dx, dy) = (size_m[0] / nx as f64, size_m[1] / ny as f64);
    for iy in 0..ny {
        for ix in 0..nx {
            let v = field.volts[iy * nx + ix];
            let lo = t.to_screen([ix as f64 * dx, iy as f64 * dy]);
            let hi = t.to_screen([(ix + 1) as f64 * dx, (iy + 1) as f64 * dy]);
            // Cells overlap by a hair so no seam of background shows between them.
            let r = Rect::from_two_pos(lo, hi).expand(0.3);
            painter.rect_filled(r, 0.0, field_colour(field_position(v, field.max_v)));
        }
    }
}

/// One group's swatch: its colour, square for the first eight groups and round for the next eight.
pub fn swatch(painter: &Painter, r: Rect, group: usize, dark: bool) {
    let groups = theme::group_colors(dark);
    let outline = if dark { Color32::BLACK } else { Color32::WHITE };
    let fill = groups[group % groups.len()];
    if (group / groups.len()) % 2 == 1 {
        painter.circle_filled(r.center(), r.width() / 2.0, fill);
        painter.circle_stroke(r.center(), r.width() / 2.0, Stroke::new(1.0, outline));
    } else {
        painter.rect_filled(r, 1.0, fill);
        painter.rect_stroke(r, 1.0, Stroke::new(1.0, outline), StrokeKind::Outside);
    }
}

fn scale_bar(painter: &Painter, rect: Rect, t: &Transform, v: &egui::Visuals) {
    let length_m = scale_bar_m(140.0 / t.scale);
    let px = (length_m * t.scale) as f32;
    let y = rect.bottom() - 12.0;
    let x0 = rect.left() + 12.0;
    let stroke = Stroke::new(2.0, v.text_color());
    painter.line_segment([pos2(x0, y), pos2(x0 + px, y)], stroke);
    for x in [x0, x0 + px] {
        painter.line_segment([pos2(x, y - 5.0), pos2(x, y + 1.0)], stroke);
    }
    label(painter, pos2(x0 + px / 2.0, y - 5.0), Align2::CENTER_BOTTOM, &format_length(length_m), v);
}

fn field_scale(painter: &Painter, rect: Rect, rail: &Rail, field: &PlaneField, v: &egui::Visuals) {
    let bar = Rect::from_min_size(pos2(rect.right() - 26.0, rect.top() + 30.0), vec2(14.0, 140.0));
    let steps = 40;
    for i in 0..steps {
        let t0 = i as f32 / steps as f32;
        let r = Rect::from_min_max(
            pos2(bar.left(), bar.bottom() - bar.height() * (t0 + 1.0 / steps as f32)),
            pos2(bar.right(), bar.bottom() - bar.height() * t0 + 0.5),
        );
        painter.rect_filled(r, 0.0, field_colour(t0 as f64 + 0.5 / steps as f64));
    }
    painter.rect_stroke(bar, 0.0, Stroke::new(1.0, v.text_color()), StrokeKind::Outside);
    for (frac, value) in [(1.0, field.max_v), (0.5, field.max_v / 10.0), (0.0, field.max_v / 100.0)] {
        let y = bar.bottom() - bar.height() * frac;
        label(painter, pos2(bar.left() - 4.0, y), Align2::RIGHT_CENTER, &format(value, Unit::Volt), v);
    }
    let load = rail.loads.get(field.load).map_or("", |l| l.name.as_str());
    let words = format!(
        "plane voltage at {} for {load}'s step of {}",
        format(field.f_hz, Unit::Hertz),
        format(field.step_a, Unit::Ampere)
    );
    label(painter, pos2(rect.right() - 6.0, rect.top() + 6.0), Align2::RIGHT_TOP, &words, v);
}
