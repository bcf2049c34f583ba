//! Colours and spacing for the dark and light themes. Meeting and missing the target are told apart by word and
//! symbol as well as by colour, so the verdict reads without colour vision.

use egui::{Color32, Context, Theme};

/// The colours the panels and the plot use.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Palette {
    /// A rail that meets its target.
    pub ok: Color32,
    /// A rail that misses its target; refused entries.
    pub fail: Color32,
    /// Notes: anti-resonances under target, cautions.
    pub note: Color32,
    /// The total |Z| curve.
    pub curve: Color32,
    /// The target line.
    pub target: Color32,
    /// Band edges.
    pub band_edge: Color32,
    /// Fill of a range above target.
    pub violation_fill: Color32,
    /// Fill and outline of the selected finding.
    pub highlight: Color32,
    /// Each branch's own curve, drawn faintly.
    pub branch: Color32,
    /// The worst derating corner's curve.
    pub worst: Color32,
    /// The curve seen from the other node (board or die).
    pub other_view: Color32,
    /// Colours given to pins in turn.
    pub pins: [Color32; 6],
}

/// The palette of a theme.
pub fn palette(dark: bool) -> Palette {
    if dark {
        Palette {
            ok: Color32::from_rgb(90, 200, 120),
            fail: Color32::from_rgb(255, 110, 100),
            note: Color32::from_rgb(240, 190, 80),
            curve: Color32::from_rgb(120, 180, 255),
            target: Color32::from_rgb(255, 255, 255),
            band_edge: Color32::from_gray(150),
            violation_fill: Color32::from_rgba_unmultiplied(255, 90, 80, 40),
            highlight: Color32::from_rgba_unmultiplied(255, 230, 90, 60),
            branch: Color32::from_rgba_unmultiplied(200, 200, 200, 70),
            worst: Color32::from_rgb(255, 150, 60),
            other_view: Color32::from_rgb(150, 220, 160),
            pins: [
                Color32::from_rgb(230, 140, 255),
                Color32::from_rgb(80, 220, 220),
                Color32::from_rgb(255, 170, 90),
                Color32::from_rgb(170, 230, 90),
                Color32::from_rgb(255, 130, 180),
                Color32::from_rgb(200, 200, 120),
            ],
        }
    } else {
        Palette {
            ok: Color32::from_rgb(20, 130, 50),
            fail: Color32::from_rgb(200, 30, 30),
            note: Color32::from_rgb(170, 110, 0),
            curve: Color32::from_rgb(20, 80, 200),
            target: Color32::from_rgb(20, 20, 20),
            band_edge: Color32::from_gray(110),
            violation_fill: Color32::from_rgba_unmultiplied(220, 40, 30, 35),
            highlight: Color32::from_rgba_unmultiplied(240, 190, 0, 70),
            branch: Color32::from_rgba_unmultiplied(60, 60, 60, 70),
            worst: Color32::from_rgb(200, 90, 0),
            other_view: Color32::from_rgb(30, 130, 60),
            pins: [
                Color32::from_rgb(150, 40, 190),
                Color32::from_rgb(0, 140, 140),
                Color32::from_rgb(210, 100, 0),
                Color32::from_rgb(80, 140, 0),
                Color32::from_rgb(200, 40, 120),
                Color32::from_rgb(120, 110, 30),
            ],
        }
    }
}

/// Switch the whole window to the dark or the light theme.
pub fn apply(ctx: &Context, dark: bool) {
    ctx.set_theme(if dark { Theme::Dark } else { Theme::Light });
}
