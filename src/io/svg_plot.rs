//! A rail's |Z(f)| against its target as an SVG picture (drawn with the general-purpose `plotters` crate), for
//! the review report. Log-log: the axes carry log10 of the values, with a bold grid line and an engineering-notation
//! label at every decade and light lines at 2..9 × each decade.

use crate::analysis::RailAnalysis;
use crate::units::{Unit, format, format_sig};
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use std::ops::Range;

/// Size of the picture, px.
pub const PLOT_SIZE: (u32, u32) = (760, 380);

/// Points of the display sweep a report draws.
pub const PLOT_POINTS: usize = 600;

/// The display range of a rail's plot, Hz: from the decade at or below the band's low edge to one decade above
/// the decade holding its high edge, so the inductive rise past the band shows.
pub fn plot_range_hz(band_hz: [f64; 2]) -> (f64, f64) {
    let (lo, hi) = decades(band_hz);
    (10f64.powi(lo), 10f64.powi(hi))
}

fn decades(band_hz: [f64; 2]) -> (i32, i32) {
    let lo = band_hz[0].log10().floor() as i32;
    let hi = (band_hz[1].log10().ceil() as i32 + 1).max(lo + 1);
    (lo, hi)
}

/// Bold key points at each decade of `[lo, hi]` and light ones at 2..9 × each decade, all in log10.
fn key_points(lo: i32, hi: i32) -> (Vec<f64>, Vec<f64>) {
    let bold = (lo..=hi).map(f64::from).collect();
    let light = (lo..hi).flat_map(|d| (2..=9).map(move |m| f64::from(d) + f64::from(m).log10())).collect();
    (bold, light)
}

/// A log10 axis: whole decades as bold key points (grid lines with labels), 2..9 × each decade as light ones.
/// Its own type rather than plotters' key-point wrapper, which cannot take a label formatter over an f64 range.
#[derive(Clone)]
struct DecadeAxis {
    linear: RangedCoordf64,
    bold: Vec<f64>,
    light: Vec<f64>,
}

impl DecadeAxis {
    fn new(lo: i32, hi: i32) -> DecadeAxis {
        let (bold, light) = key_points(lo, hi);
        DecadeAxis { linear: (f64::from(lo)..f64::from(hi)).into(), bold, light }
    }
}

impl Ranged for DecadeAxis {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        self.linear.map(value, limit)
    }

    fn key_points<Hint: KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        if hint.weight().allow_light_points() { self.light.clone() } else { self.bold.clone() }
    }

    fn range(&self) -> Range<f64> {
        self.linear.range()
    }
}

/// Draw the analysis' display curve (`analysis.curve`, which must span [`plot_range_hz`] of the band) with the
/// target over the band and the violation bands shaded. Returns the `<svg>` element's text.
pub fn impedance_svg(analysis: &RailAnalysis) -> Result<String, String> {
    impedance_svg_titled(analysis, PLOT_SIZE, None)
}

/// A plot for a reviewer to paste into a document: the same drawing as the report's at `size` pixels, with a title
/// and the rail's verdict line above it when `title` is given (title, verdict).
pub fn impedance_svg_titled(
    analysis: &RailAnalysis,
    size: (u32, u32),
    title: Option<(&str, &str)>,
) -> Result<String, String> {
    let size = checked_size(size)?;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        draw_impedance(&root, analysis, title)?;
    }
    Ok(svg)
}

/// The same plot as [`impedance_svg_titled`] as a PNG file's bytes, drawn by the same code on a bitmap (text in
/// egui's own font, so the picture needs no font from the system).
pub fn impedance_png(
    analysis: &RailAnalysis,
    size: (u32, u32),
    title: Option<(&str, &str)>,
) -> Result<Vec<u8>, String> {
    let (w, h) = checked_size(size)?;
    let mut rgb = vec![0u8; w as usize * h as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area();
        draw_impedance(&root, analysis, title)?;
    }
    let rgba: Vec<u8> = rgb.chunks_exact(3).flat_map(|p| [p[0], p[1], p[2], 255]).collect();
    super::png_image::png_bytes(w, h, &rgba)
}

/// The smallest and largest picture sizes the plot is drawn at, pixels (a bound on memory as well as on sense).
pub const SIZE_LIMITS: (u32, u32) = (320, 8000);

fn checked_size((w, h): (u32, u32)) -> Result<(u32, u32), String> {
    let (lo, hi) = SIZE_LIMITS;
    if (lo..=hi).contains(&w) && (lo..=hi).contains(&h) {
        Ok((w, h))
    } else {
        Err(format!("a plot is from {lo} to {hi} pixels wide and high, not {w} × {h}"))
    }
}

/// The bitmap backend draws text through ab_glyph from registered fonts; register egui's own once.
fn register_font() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        for style in [FontStyle::Normal, FontStyle::Bold] {
            let _ = plotters::style::register_font("sans-serif", style, epaint_default_fonts::UBUNTU_LIGHT);
        }
    });
}

fn draw_impedance<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    analysis: &RailAnalysis,
    title: Option<(&str, &str)>,
) -> Result<(), String> {
    register_font();
    let curve = analysis.curve.as_ref().ok_or("the analysis has no display curve")?;
    let (xlo, xhi) = decades(analysis.band_hz);
    let target = analysis.target_ohm;
    let points: Vec<(f64, f64)> = curve
        .freq_hz
        .iter()
        .zip(&curve.z)
        .map(|(f, z)| (f.log10(), z.norm().log10()))
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .collect();
    if points.is_empty() || !(target > 0.0 && target.is_finite()) {
        return Err("nothing finite to draw".into());
    }
    // The y range: whole decades around the curve and the target, but no more than four decades below the
    // target (a lossless dip would otherwise squash the picture).
    let ty = target.log10();
    let ymin_data = points.iter().map(|p| p.1).fold(ty, f64::min);
    let ymax_data = points.iter().map(|p| p.1).fold(ty, f64::max);
    let ylo = (ymin_data.floor() as i32).max(ty.floor() as i32 - 4);
    let yhi = (ymax_data.ceil() as i32).max(ylo + 1);
    let (ylo_f, yhi_f) = (f64::from(ylo), f64::from(yhi));
    let clamp = |y: f64| y.clamp(ylo_f, yhi_f);

    {
        let e = |e: DrawingAreaErrorKind<_>| e.to_string();
        root.fill(&WHITE).map_err(e)?;
        // A title and the verdict above the chart, when asked for.
        let area = match title {
            Some((heading, verdict)) => {
                let (top, rest) = root.split_vertically(64);
                top.draw(&Text::new(heading.to_string(), (14, 8), ("sans-serif", 22).into_font().color(&BLACK)))
                    .map_err(e)?;
                top.draw(&Text::new(verdict.to_string(), (14, 38), ("sans-serif", 16).into_font().color(&BLACK)))
                    .map_err(e)?;
                rest
            }
            None => root.clone(),
        };
        let mut chart = ChartBuilder::on(&area)
            .margin(14)
            .margin_right(34)
            .x_label_area_size(56)
            .y_label_area_size(90)
            .build_cartesian_2d(DecadeAxis::new(xlo, xhi), DecadeAxis::new(ylo, yhi))
            .map_err(e)?;
        chart
            .configure_mesh()
            .x_label_formatter(&|v| format_sig(10f64.powf(*v), Unit::Hertz, 1))
            .y_label_formatter(&|v| format_sig(10f64.powf(*v), Unit::Ohm, 1))
            .label_style(("sans-serif", 16))
            .axis_desc_style(("sans-serif", 17))
            .x_desc("frequency")
            .y_desc("|Z|")
            .bold_line_style(RGBColor(190, 190, 190))
            .light_line_style(RGBColor(232, 232, 232))
            .draw()
            .map_err(e)?;
        // Solid tints rather than transparency, so that every SVG renderer shows the same picture.
        let shade = RGBColor(252, 222, 222).filled();
        chart
            .draw_series(
                analysis
                    .violations
                    .iter()
                    .map(|v| Rectangle::new([(v.from_hz.log10(), ylo_f), (v.to_hz.log10(), yhi_f)], shade)),
            )
            .map_err(e)?;
        let [blo, bhi] = analysis.band_hz;
        let target_style = RED.stroke_width(2);
        chart
            .draw_series(LineSeries::new([(blo.log10(), clamp(ty)), (bhi.log10(), clamp(ty))], target_style))
            .map_err(e)?
            .label(format!("target {}", format(target, Unit::Ohm)))
            .legend(move |(x, y)| PathElement::new([(x, y), (x + 20, y)], target_style));
        let z_style = BLUE.stroke_width(2);
        chart
            .draw_series(LineSeries::new(points.iter().map(|&(x, y)| (x, clamp(y))), z_style))
            .map_err(e)?
            .label(format!("|Z| at the {}", analysis.view.name()))
            .legend(move |(x, y)| PathElement::new([(x, y), (x + 20, y)], z_style));
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .background_style(WHITE)
            .border_style(RGBColor(160, 160, 160))
            .label_font(("sans-serif", 16))
            .draw()
            .map_err(e)?;
        root.present().map_err(e)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn range_spans_whole_decades_past_the_band() {
        assert_eq!(plot_range_hz([1e3, 2e7]), (1e3, 1e9));
        assert_eq!(plot_range_hz([3e3, 5e7]), (1e3, 1e9));
        let (bold, light) = key_points(3, 5);
        assert_eq!(bold, vec![3.0, 4.0, 5.0]);
        assert_eq!(light.len(), 16);
    }
}
