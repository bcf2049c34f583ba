//! Colours and spacing for the dark and light themes. Meeting and missing the target are told apart by word and
//! symbol as well as by colour, so the verdict reads without colour vision.

use egui::{Color32, Context, Theme};

/// The colours the panels and the plot use. Every colour used for text has a contrast of at least 4.5:1 against
/// its theme's background (WCAG 2.1 AA for normal text, common practice); `tests` checks it.
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
            note: Color32::from_rgb(150, 95, 0),
            curve: Color32::from_rgb(20, 80, 200),
            target: Color32::from_rgb(20, 20, 20),
            band_edge: Color32::from_gray(110),
            violation_fill: Color32::from_rgba_unmultiplied(220, 40, 30, 35),
            highlight: Color32::from_rgba_unmultiplied(240, 190, 0, 70),
            branch: Color32::from_rgba_unmultiplied(60, 60, 60, 70),
            worst: Color32::from_rgb(180, 75, 0),
            other_view: Color32::from_rgb(30, 130, 60),
            pins: [
                Color32::from_rgb(150, 40, 190),
                Color32::from_rgb(0, 120, 120),
                Color32::from_rgb(180, 80, 0),
                Color32::from_rgb(60, 115, 0),
                Color32::from_rgb(200, 40, 120),
                Color32::from_rgb(120, 110, 30),
            ],
        }
    }
}

/// Switch the whole window to the dark or the light theme.
pub fn apply(ctx: &Context, dark: bool) {
    ctx.set_theme(if dark { Theme::Dark } else { Theme::Light });
    // egui's weak text (hints, notes) is the text colour at 60 % alpha: about 3:1 on the light panel. Give each
    // theme a weak colour that still reaches 4.5:1 (WCAG 2.1 AA, common practice).
    ctx.style_mut_of(Theme::Light, |s| s.visuals.weak_text_color = Some(WEAK_LIGHT));
    ctx.style_mut_of(Theme::Dark, |s| s.visuals.weak_text_color = Some(WEAK_DARK));
    for theme in [Theme::Light, Theme::Dark] {
        ctx.style_mut_of(theme, readable_sizes);
    }
}

/// The smallest text the window draws, in points: the body size less a little. egui's small style is 9 points
/// (about 8 px at 100 %), too small to read comfortably for the figures and notes drawn with it.
pub const SMALLEST_TEXT: f32 = 11.0;

/// Raise every text style below [`SMALLEST_TEXT`] to it (small notes stay a step below the body, still readable).
pub fn readable_sizes(style: &mut egui::Style) {
    for font in style.text_styles.values_mut() {
        font.size = font.size.max(SMALLEST_TEXT);
    }
}

/// Weak (secondary) text in the light theme.
pub const WEAK_LIGHT: Color32 = Color32::from_gray(105);
/// Weak (secondary) text in the dark theme.
pub const WEAK_DARK: Color32 = Color32::from_gray(160);

/// Colours for each group's own curve, in turn: distinct from each other and from the total's, target's and
/// pins' colours as far as eight allow, each readable against the theme's background.
pub fn group_colors(dark: bool) -> [Color32; 8] {
    if dark {
        [
            Color32::from_rgb(255, 160, 80),
            Color32::from_rgb(200, 150, 255),
            Color32::from_rgb(120, 220, 130),
            Color32::from_rgb(255, 120, 170),
            Color32::from_rgb(230, 210, 90),
            Color32::from_rgb(90, 220, 210),
            Color32::from_rgb(200, 200, 200),
            Color32::from_rgb(160, 190, 120),
        ]
    } else {
        [
            Color32::from_rgb(180, 80, 0),
            Color32::from_rgb(130, 60, 170),
            Color32::from_rgb(30, 110, 40),
            Color32::from_rgb(170, 40, 110),
            Color32::from_rgb(110, 90, 20),
            Color32::from_rgb(0, 120, 120),
            Color32::from_rgb(90, 90, 90),
            Color32::from_rgb(0, 110, 160),
        ]
    }
}

/// The contrast ratio of two colours (WCAG 2.1 relative luminance), 1 to 21.
pub fn contrast(a: Color32, b: Color32) -> f64 {
    let lum = |c: Color32| {
        let lin = |v: u8| {
            let v = v as f64 / 255.0;
            if v <= 0.03928 { v / 12.92 } else { ((v + 0.055) / 1.055).powf(2.4) }
        };
        0.2126 * lin(c.r()) + 0.7152 * lin(c.g()) + 0.0722 * lin(c.b())
    };
    let (la, lb) = (lum(a), lum(b));
    (la.max(lb) + 0.05) / (la.min(lb) + 0.05)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_colours_meet_wcag_aa_in_both_themes() {
        // WCAG 2.1 success criterion 1.4.3: at least 4.5:1 for normal text. The backgrounds are egui's panel
        // fills of each theme (and pure white/black as the extremes the plot may show).
        for dark in [true, false] {
            let visuals = if dark { egui::Visuals::dark() } else { egui::Visuals::light() };
            let p = palette(dark);
            let mut text = vec![p.ok, p.fail, p.note, p.curve, p.worst, p.other_view];
            text.push(if dark { WEAK_DARK } else { WEAK_LIGHT });
            text.extend(p.pins);
            text.extend(group_colors(dark));
            for bg in [visuals.panel_fill, visuals.extreme_bg_color] {
                for c in &text {
                    assert!(
                        contrast(*c, bg) >= 4.5,
                        "{c:?} on {bg:?} ({}): {}",
                        if dark { "dark" } else { "light" },
                        contrast(*c, bg)
                    );
                }
            }
        }
        assert!((contrast(Color32::WHITE, Color32::BLACK) - 21.0).abs() < 1e-9);
    }

    #[test]
    fn no_text_style_is_smaller_than_the_body_less_a_little() {
        let ctx = Context::default();
        for dark in [true, false] {
            apply(&ctx, dark);
            let style = ctx.style_of(if dark { Theme::Dark } else { Theme::Light });
            let body = style.text_styles[&egui::TextStyle::Body].size;
            for (name, font) in &style.text_styles {
                assert!(font.size >= SMALLEST_TEXT && font.size >= body - 2.0, "{name:?} at {} pt", font.size);
            }
        }
    }
}
