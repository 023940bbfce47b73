//! Exports from the window: CSV of cut points, strobe samples, the trajectory (the same
//! columns as the command line) and the time plot's lines as drawn (`t` and the states shown,
//! along the finished run's dense path), and PNG of any view at a chosen size (drawn again at that
//! size, see `png_export.rs`).

use std::path::{Path, PathBuf};

use lamina_export::{AtomicFile, CutCsv, StrobeCsv, TrajectoryCsv};

use super::ExplorerApp;
use crate::jobs::{Job, Poll};
use crate::vocabulary::{JobKind, PointSet, Purpose, ViewKind};

impl ExplorerApp {
    /// A file beside the scenario (or in the working folder) to suggest for an export.
    fn suggested_export(&self, file_name: String) -> PathBuf {
        let doc = &self.session.doc;
        let dir = (doc.path.as_ref())
            .and_then(|p| p.parent().map(Path::to_path_buf))
            .unwrap_or_default();
        // named after the scenario's file (or its title), so exports of several scenarios
        // in one folder do not overwrite one another
        let stem = (doc.path.as_ref())
            .and_then(|p| p.file_stem())
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| doc.scenario.title.clone());
        match file_name_part(&stem) {
            Some(prefix) => dir.join(format!("{prefix}_{file_name}")),
            None => dir.join(file_name),
        }
    }

    pub(crate) fn request_csv_export(&mut self, set: PointSet) {
        let suggested = self.suggested_export(format!("{}.csv", set.file_stem()));
        let waker = self.session.waker.clone();
        self.files
            .ask_path(Purpose::Csv(set), Some(suggested), waker);
    }

    /// Writes `set` to `path` atomically.
    pub fn export_csv(&mut self, set: PointSet, path: &Path) {
        let names = self.session.results.names.clone();
        let result = (|| -> Result<usize, lamina_export::ExportError> {
            let mut file = AtomicFile::create(path)?;
            let n = match set {
                PointSet::Cut => {
                    let mut csv = CutCsv::new(&mut file, &names)?;
                    for p in self.session.results.cut.cut_points() {
                        csv.write(&p)?;
                    }
                    csv.finish()?;
                    self.session.results.cut.len()
                }
                PointSet::Strobe => {
                    let mut csv = StrobeCsv::new(&mut file, &names)?;
                    for s in self.session.results.strobe.strobe_samples() {
                        csv.write(&s)?;
                    }
                    csv.finish()?;
                    self.session.results.strobe.len()
                }
                PointSet::Sweep => {
                    let parameter = self.session.swept_parameter_name();
                    let mut csv = lamina_export::SweepCsv::new(&mut file, &parameter, &names)?;
                    for (c, _) in &self.session.sweep.columns {
                        csv.write_column(c.value, &c.points)?;
                    }
                    csv.finish()?;
                    self.session
                        .sweep
                        .columns
                        .iter()
                        .map(|(c, _)| c.points.len())
                        .sum()
                }
                PointSet::Map => {
                    let map = &self.session.map;
                    let names = (map.names.0.as_str(), map.names.1.as_str());
                    lamina_export::write_map_cells(&mut file, names, &map.cells)?;
                    map.cells.len()
                }
                PointSet::TimeSeries => {
                    let results = &self.session.results;
                    let path = crate::dense_path::path_of(results);
                    let shown = self.chrome.view.time_plot.shown_states(results.names.len());
                    let shown_names: Vec<String> =
                        shown.iter().map(|&k| names[k].clone()).collect();
                    let mut csv = TrajectoryCsv::new(&mut file, &shown_names)?;
                    let mut row = vec![0.0; shown.len()];
                    for i in 0..path.len() {
                        let state = path.state(i);
                        for (value, &k) in row.iter_mut().zip(&shown) {
                            *value = state[k];
                        }
                        csv.write(path.t[i], &row)?;
                    }
                    csv.finish()?;
                    path.len()
                }
                PointSet::Trajectory => {
                    let mut csv = TrajectoryCsv::new(&mut file, &names)?;
                    let traj = &self.session.results.trajectory;
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
            Ok(n) => self
                .session
                .note(format!("wrote {n} rows to {}", path.display())),
            Err(e) => {
                let message = format!("export failed: {e}");
                self.session.note(message.clone());
                self.files.alert = Some(message);
            }
        }
    }

    pub(crate) fn request_png_export(&mut self, view: ViewKind) {
        let suggested = self.suggested_export(format!("{}.png", view.file_stem()));
        let waker = self.session.waker.clone();
        self.files
            .ask_path(Purpose::Png(view), Some(suggested), waker);
    }

    /// Exports `view` as a PNG to `path`: draws it again at the chosen size and writes it, as
    /// a background job (File ▸ Export calls this once the path is chosen).
    pub fn export_png(&mut self, view: ViewKind, path: PathBuf) {
        if self.png_export.is_some() {
            self.files.alert = Some("a PNG is still being drawn: wait for it".into());
            return;
        }
        let picture = match self.png_job(view, path) {
            Ok(picture) => picture,
            Err(why) => {
                self.files.alert = Some(format!("PNG export: {why}"));
                return;
            }
        };
        let spawned = Job::spawn(
            JobKind::PngExport,
            self.session.revision,
            self.session.waker.clone(),
            move |_, _| picture.run(),
        );
        match spawned {
            Ok(job) => {
                self.png_export = Some(job);
                self.session
                    .note(format!("drawing the {} picture", view.title()));
            }
            Err(e) => self.files.alert = Some(e.to_string()),
        }
    }

    /// Takes the outcome of a PNG export when it has arrived.
    pub(crate) fn drain_png_export(&mut self) {
        let Some(job) = &self.png_export else {
            return;
        };
        match job.poll() {
            Poll::Running => {}
            Poll::Done(Ok(message)) => {
                self.png_export = None;
                self.session.note(message);
            }
            Poll::Done(Err(e)) => {
                self.png_export = None;
                self.files.alert = Some(format!("PNG export failed: {e}"));
            }
            Poll::Lost => {
                self.png_export = None;
                self.files.alert = Some("PNG export failed: the drawing stopped".into());
            }
        }
    }

    /// Sets the size of PNG exports.
    pub fn set_png_size(&mut self, width: u32, height: u32) {
        self.chrome.settings.png_size = [width, height];
    }

    /// Whether a PNG export is being drawn.
    pub fn is_exporting_png(&self) -> bool {
        self.png_export.is_some()
    }
}

/// `text` made fit for a file name: letters and digits kept (lower case), every other run of
/// characters one `_`, at most 40 characters; `None` when nothing is left.
fn file_name_part(text: &str) -> Option<String> {
    let mut part = String::new();
    for c in text.chars() {
        if c.is_alphanumeric() {
            part.extend(c.to_lowercase());
        } else if !part.is_empty() && !part.ends_with('_') {
            part.push('_');
        }
        if part.chars().count() >= 40 {
            break;
        }
    }
    let part = part.trim_end_matches('_').to_string();
    (!part.is_empty()).then_some(part)
}

#[cfg(test)]
mod tests {
    use super::file_name_part;

    #[test]
    fn a_title_becomes_a_plain_file_name_part() {
        // [common practice] file names of letters, digits and underscores travel between
        // systems unharmed
        assert_eq!(
            file_name_part("Clocked buck converter").as_deref(),
            Some("clocked_buck_converter")
        );
        assert_eq!(
            file_name_part("  Relay loop (v2): 10 ms/div ").as_deref(),
            Some("relay_loop_v2_10_ms_div")
        );
        assert_eq!(
            file_name_part("clocked_resonator").as_deref(),
            Some("clocked_resonator")
        );
        assert_eq!(file_name_part(" -- ").as_deref(), None);
        assert!(file_name_part(&"x".repeat(100)).is_some_and(|p| p.len() == 40));
    }
}
