//! What the window hands out besides the board file: the review report (the same HTML as `hushrail report`) and
//! a PNG of the plot as it is on screen. Both are written atomically.

use super::app::{App, NO_FILE_CHOSEN};
use super::files;
use crate::analysis::{DroopOptions, droop};
use crate::io::{ReportContext, board_sha256, report_html, utc_date_today, write_png, write_report};
use egui::{ColorImage, Context, Rect};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::{Receiver, TryRecvError, channel};

/// A screenshot asked for, waiting for the renderer's pixels.
pub struct PendingShot {
    /// Where the PNG goes.
    pub path: PathBuf,
    /// The plot's area, in points, when it was asked for.
    pub rect: Rect,
    /// Points to pixels.
    pub pixels_per_point: f32,
    rx: Receiver<Arc<ColorImage>>,
}

impl App {
    /// Write the review report of the board as it stands to `path`: the same document `hushrail report` writes
    /// for the same board (with the droop of each rail). With unsaved edits the report says so prominently and
    /// carries the hash of the board as shown (the file on disk is another board). Returns true when written;
    /// the status line says.
    pub fn save_report_to(&mut self, path: &Path) -> bool {
        let board = &self.doc.board;
        let droops: Vec<_> = (0..board.rails.len()).map(|i| droop(board, i, &DroopOptions::default())).collect();
        let unsaved_edits = self.is_dirty();
        let (source, command) = match &self.doc.path {
            Some(p) => (
                p.display().to_string(),
                format!("hushrail check '{}'", p.display().to_string().replace('\'', "'\\''")),
            ),
            None => (self.doc.label.clone(), "hushrail check".to_string()),
        };
        // The hash of the bytes the board was read from (or saved as) when it is unchanged, taken then: the file
        // on disk may have changed since, and the report names what it judged. Else of the board as shown.
        let sha256 = match (&self.doc.sha256, unsaved_edits) {
            (Some(read), false) => read.clone(),
            _ => board_sha256(board),
        };
        let context = ReportContext { source, sha256, command, date: utc_date_today(), unsaved_edits };
        let html = report_html(board, &context, Some(&droops));
        match write_report(path, &html) {
            Ok(()) => {
                self.status = Some((format!("Wrote the report {}.", path.display()), false));
                true
            }
            Err(e) => {
                self.status = Some((format!("{}: cannot write: {e}", path.display()), true));
                false
            }
        }
    }

    /// Ask where, then write the report.
    pub(super) fn save_report(&mut self) {
        match files::pick_export("HTML report", "html", self.doc.path.as_deref(), &self.doc.board.name, "-report") {
            Some(path) => {
                self.save_report_to(&path);
            }
            None => self.status = Some((NO_FILE_CHOSEN.into(), false)),
        }
    }

    /// Ask where, then ask the renderer for the window's pixels; the plot's area is cut out and written when they
    /// arrive (a frame later).
    pub(super) fn save_plot_png(&mut self, ctx: &Context) {
        let Some(rect) = self.plot_rect else {
            self.status = Some(("There is no plot on screen to save.".into(), true));
            return;
        };
        let suffix = format!("-{}", self.doc.board.rails.get(self.selected_rail).map_or("plot", |r| r.name.as_str()));
        let Some(path) =
            files::pick_export("PNG image", "png", self.doc.path.as_deref(), &self.doc.board.name, &suffix)
        else {
            self.status = Some((NO_FILE_CHOSEN.into(), false));
            return;
        };
        let (tx, rx) = channel();
        let waker = ctx.clone();
        ctx.request_screenshot(move |image| {
            let _ = tx.send(image);
            // The pixels come between frames: wake the window to write them.
            waker.request_repaint();
        });
        self.shot = Some(PendingShot { path, rect, pixels_per_point: ctx.pixels_per_point(), rx });
        self.status = Some(("Taking the picture…".into(), false));
    }

    /// Write the PNG once the renderer's pixels have come.
    pub(super) fn poll_screenshot(&mut self) {
        let Some(shot) = &self.shot else { return };
        let image = match shot.rx.try_recv() {
            Ok(image) => image,
            Err(TryRecvError::Empty) => return,
            Err(TryRecvError::Disconnected) => {
                self.shot = None;
                self.status = Some(("The renderer gave no picture of the window.".into(), true));
                return;
            }
        };
        let Some(shot) = self.shot.take() else { return };
        self.status = Some(match crop_rgba(&image, shot.rect, shot.pixels_per_point) {
            Some((w, h, rgba)) => match write_png(&shot.path, w, h, &rgba) {
                Ok(()) => (format!("Wrote the plot {}.", shot.path.display()), false),
                Err(e) => (e, true),
            },
            None => ("The plot was not inside the window's picture.".into(), true),
        });
    }
}

/// The pixels of `rect` (points) cut from a screenshot, as unpremultiplied RGBA; `None` when nothing of it is
/// inside the image.
fn crop_rgba(image: &ColorImage, rect: Rect, pixels_per_point: f32) -> Option<(u32, u32, Vec<u8>)> {
    let [iw, ih] = image.size;
    let px = |v: f32, max: usize| ((v * pixels_per_point).round().max(0.0) as usize).min(max);
    let (x0, x1) = (px(rect.min.x, iw), px(rect.max.x, iw));
    let (y0, y1) = (px(rect.min.y, ih), px(rect.max.y, ih));
    if x1 <= x0 || y1 <= y0 {
        return None;
    }
    let mut rgba = Vec::with_capacity((x1 - x0) * (y1 - y0) * 4);
    for y in y0..y1 {
        for c in &image.pixels[y * iw + x0..y * iw + x1] {
            rgba.extend_from_slice(&c.to_srgba_unmultiplied());
        }
    }
    Some(((x1 - x0) as u32, (y1 - y0) as u32, rgba))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crop_takes_the_rect_in_pixels_and_clips_to_the_image() {
        let mut image = ColorImage::filled([10, 8], egui::Color32::BLACK);
        image.pixels[3 * 10 + 4] = egui::Color32::from_rgb(200, 10, 20);
        let rect = Rect::from_min_max(egui::pos2(2.0, 1.5), egui::pos2(3.0, 20.0));
        let (w, h, rgba) = crop_rgba(&image, rect, 2.0).unwrap();
        assert_eq!((w, h), (2, 5));
        assert_eq!(&rgba[0..4], &[200, 10, 20, 255]);
        assert!(crop_rgba(&image, Rect::from_min_max(egui::pos2(20.0, 0.0), egui::pos2(30.0, 5.0)), 1.0).is_none());
    }
}
