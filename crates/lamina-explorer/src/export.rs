//! Exports from the window: CSV of cut points, strobe samples and the trajectory (the same
//! columns as the command line), and PNG of any view at a chosen size (a screenshot of the
//! view, resampled to the size asked for).

use std::path::{Path, PathBuf};

use egui::Context;
use lamina_export::{AtomicFile, CutCsv, StrobeCsv, TrajectoryCsv};

use crate::app::ExplorerApp;
use crate::files::Purpose;
use crate::layout::ViewKind;

/// A point set that can be written as CSV.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PointSet {
    /// Cut points: `k,t,return_time,<states>`.
    Cut,
    /// Strobe samples: `k,t,<states>`.
    Strobe,
    /// Trajectory samples (step ends): `t,<states>`.
    Trajectory,
    /// The sweep's kept points: `<parameter>,k,<states>`.
    Sweep,
}

impl PointSet {
    fn file_stem(self) -> &'static str {
        match self {
            Self::Cut => "cut_points",
            Self::Strobe => "strobe_samples",
            Self::Trajectory => "trajectory",
            Self::Sweep => "sweep",
        }
    }
}

/// A PNG export waiting for its screenshot.
pub struct PngRequest {
    /// Which view.
    pub view: ViewKind,
    /// Where to write.
    pub path: PathBuf,
}

impl ExplorerApp {
    /// A file beside the scenario (or in the working folder) to suggest for an export.
    fn suggested_export(&self, file_name: String) -> PathBuf {
        let dir = self
            .doc
            .path
            .as_ref()
            .and_then(|p| p.parent().map(Path::to_path_buf))
            .unwrap_or_default();
        dir.join(file_name)
    }

    pub(crate) fn request_csv_export(&mut self, set: PointSet) {
        let suggested = self.suggested_export(format!("{}.csv", set.file_stem()));
        self.files.ask_path(Purpose::Csv(set), Some(suggested));
    }

    /// Writes `set` to `path` atomically.
    pub(crate) fn export_csv(&mut self, set: PointSet, path: &Path) {
        let names = self.results.names.clone();
        let result = (|| -> Result<usize, lamina_export::ExportError> {
            let mut file = AtomicFile::create(path)?;
            let n = match set {
                PointSet::Cut => {
                    let mut csv = CutCsv::new(&mut file, &names)?;
                    for p in self.results.cut.cut_points() {
                        csv.write(&p)?;
                    }
                    csv.finish()?;
                    self.results.cut.len()
                }
                PointSet::Strobe => {
                    let mut csv = StrobeCsv::new(&mut file, &names)?;
                    for s in self.results.strobe.strobe_samples() {
                        csv.write(&s)?;
                    }
                    csv.finish()?;
                    self.results.strobe.len()
                }
                PointSet::Sweep => {
                    let parameter = self.swept_parameter_name();
                    let mut csv = lamina_export::SweepCsv::new(&mut file, &parameter, &names)?;
                    for (c, _) in &self.sweep.columns {
                        csv.write_column(c.value, &c.points)?;
                    }
                    csv.finish()?;
                    self.sweep.columns.iter().map(|(c, _)| c.points.len()).sum()
                }
                PointSet::Trajectory => {
                    let mut csv = TrajectoryCsv::new(&mut file, &names)?;
                    let traj = &self.results.trajectory;
                    for i in 0..traj.len() {
                        csv.write(traj.t[i], traj.state(i))?;
                    }
                    csv.finish()?;
                    traj.len()
                }
            };
            file.commit()?;
            Ok(n)
        })();
        match result {
            Ok(n) => self.note(format!("wrote {n} rows to {}", path.display())),
            Err(e) => {
                let message = format!("export failed: {e}");
                self.note(message.clone());
                self.files.alert = Some(message);
            }
        }
    }

    pub(crate) fn request_png_export(&mut self, view: ViewKind) {
        let suggested = self.suggested_export(format!("{}.png", view.file_stem()));
        self.files.ask_path(Purpose::Png(view), Some(suggested));
    }

    /// Asks for a screenshot; the PNG is written when it arrives.
    pub(crate) fn start_png_export(&mut self, ctx: &Context, view: ViewKind, path: PathBuf) {
        self.layout.png_request = Some(PngRequest { view, path });
        let slot = std::sync::Arc::clone(&self.layout.screenshot);
        let repaint = ctx.clone();
        ctx.send_viewport_cmd(egui::ViewportCommand::Screenshot(
            egui::ScreenshotCallback::new(move |image| {
                if let Ok(mut s) = slot.lock() {
                    *s = Some(image);
                }
                repaint.request_repaint();
            }),
        ));
        ctx.request_repaint();
    }

    /// Handles a screenshot event: crops the requested view and writes it at the chosen size.
    pub(crate) fn receive_screenshot(&mut self, ctx: &Context) {
        if self.layout.png_request.is_none() {
            return;
        }
        // the screenshot arrives a frame or two after it was asked for
        let Some(image) = self
            .layout
            .screenshot
            .lock()
            .ok()
            .and_then(|mut s| s.take())
        else {
            return;
        };
        let Some(request) = self.layout.png_request.take() else {
            return;
        };
        let Some(rect) = self.layout.view_rects.get(&request.view).copied() else {
            self.note("that view is not on screen: show it, then export");
            return;
        };
        let ppp = ctx.pixels_per_point();
        let [w, h] = image.size;
        let x0 = ((rect.min.x * ppp).max(0.0) as usize).min(w);
        let y0 = ((rect.min.y * ppp).max(0.0) as usize).min(h);
        let x1 = ((rect.max.x * ppp) as usize).clamp(x0, w);
        let y1 = ((rect.max.y * ppp) as usize).clamp(y0, h);
        let mut buffer = image::RgbaImage::new((x1 - x0).max(1) as u32, (y1 - y0).max(1) as u32);
        for y in y0..y1 {
            for x in x0..x1 {
                let c = image.pixels[y * w + x];
                buffer.put_pixel(
                    (x - x0) as u32,
                    (y - y0) as u32,
                    image::Rgba([c.r(), c.g(), c.b(), 255]),
                );
            }
        }
        let [tw, th] = self.settings.png_size;
        // fit the view into the chosen size without distorting it, on the window's background
        let (w, h) = (buffer.width().max(1), buffer.height().max(1));
        let (tw, th) = (tw.max(16), th.max(16));
        let scale = (f64::from(tw) / f64::from(w)).min(f64::from(th) / f64::from(h));
        let (fw, fh) = (
            ((f64::from(w) * scale).round() as u32).clamp(1, tw),
            ((f64::from(h) * scale).round() as u32).clamp(1, th),
        );
        let fitted =
            image::imageops::resize(&buffer, fw, fh, image::imageops::FilterType::Lanczos3);
        let mut resized = image::RgbaImage::from_pixel(tw, th, image::Rgba([27, 27, 27, 255]));
        image::imageops::overlay(
            &mut resized,
            &fitted,
            i64::from((tw - fw) / 2),
            i64::from((th - fh) / 2),
        );
        let mut bytes = Vec::new();
        let encoded = resized.write_to(
            &mut std::io::Cursor::new(&mut bytes),
            image::ImageFormat::Png,
        );
        let written = encoded.map_err(|e| e.to_string()).and_then(|()| {
            lamina_export::write_atomically(&request.path, |f| {
                use std::io::Write;
                f.write_all(&bytes)
                    .map_err(|e| lamina_export::ExportError::Io {
                        path: request.path.display().to_string(),
                        source: e,
                    })
            })
            .map_err(|e| e.to_string())
        });
        match written {
            Ok(()) => self.note(format!("wrote {} ({tw}×{th})", request.path.display())),
            Err(e) => self.files.alert = Some(format!("PNG export failed: {e}")),
        }
    }
}
