//! Exports from the window: CSV of cut points, strobe samples and the trajectory (the same
//! columns as the command line), and PNG of any view at a chosen size (drawn again at that
//! size, see [`crate::png_export`]).

use std::path::{Path, PathBuf};

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

    /// Exports `view` as a PNG to `path`: draws it again at the chosen size and writes it, on a
    /// helper thread (File ▸ Export calls this once the path is chosen).
    pub fn export_png(&mut self, view: ViewKind, path: PathBuf) {
        match self.png_job(view, path) {
            Ok(job) => {
                self.layout.png_export = Some(job.spawn());
                self.note(format!("drawing the {} picture", view.title()));
            }
            Err(why) => self.files.alert = Some(format!("PNG export: {why}")),
        }
    }

    /// Takes the outcome of a PNG export when it has arrived.
    pub(crate) fn drain_png_export(&mut self) {
        let Some(receiver) = &self.layout.png_export else {
            return;
        };
        match receiver.try_recv() {
            Ok(Ok(message)) => {
                self.layout.png_export = None;
                self.note(message);
            }
            Ok(Err(e)) => {
                self.layout.png_export = None;
                self.files.alert = Some(format!("PNG export failed: {e}"));
            }
            Err(std::sync::mpsc::TryRecvError::Empty) => {}
            Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                self.layout.png_export = None;
                self.files.alert = Some("PNG export failed: the drawing stopped".into());
            }
        }
    }

    /// Sets the size of PNG exports.
    pub fn set_png_size(&mut self, width: u32, height: u32) {
        self.settings.png_size = [width, height];
    }

    /// Whether a PNG export is being drawn.
    pub fn is_exporting_png(&self) -> bool {
        self.layout.png_export.is_some()
    }
}
