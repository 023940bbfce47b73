//! The frame every picture shares: size, title, axis labels and caption, the embedded font,
//! and the PNG encoding.

use std::sync::Once;

use plotters::style::FontStyle;

/// Why a picture could not be made.
#[derive(Debug, thiserror::Error)]
pub enum RenderError {
    /// The size is too small or too large.
    #[error("picture size {0}x{1} is outside 64..=8192 pixels")]
    Size(u32, u32),
    /// Drawing failed.
    #[error("drawing failed: {0}")]
    Draw(String),
    /// PNG encoding failed.
    #[error("PNG encoding failed: {0}")]
    Encode(String),
}

/// What frames a picture.
#[derive(Clone, Debug, PartialEq)]
pub struct Figure {
    /// Width and height in pixels.
    pub size: (u32, u32),
    /// Title at the top.
    pub title: String,
    /// Caption under the plot (parameter values, the run's window).
    pub caption: String,
    /// Horizontal axis label.
    pub x_label: String,
    /// Vertical axis label.
    pub y_label: String,
}

/// Name under which the embedded font is registered.
pub(crate) const FONT: &str = "lamina-sans";

static REGISTER: Once = Once::new();

/// Registers the embedded font with plotters (once).
pub(crate) fn register_font() {
    REGISTER.call_once(|| {
        let _ = plotters::style::register_font(
            FONT,
            FontStyle::Normal,
            epaint_default_fonts::UBUNTU_LIGHT,
        );
    });
}

/// The title of a picture, in the one order the command line and the window use: the
/// scenario's title, then the view (`Clocked resonator — Cut points`).
pub fn picture_title(scenario_title: &str, view: &str) -> String {
    format!("{scenario_title} — {view}")
}

/// The view names of pictures, as the window's views are titled.
pub mod view_names {
    /// The 3D trajectory.
    pub const TRAJECTORY: &str = "Trajectory (3D)";
    /// The cut points.
    pub const CUT: &str = "Cut points";
    /// The strobe samples.
    pub const STROBE: &str = "Strobe samples";
    /// The return times.
    pub const RETURN_TIMES: &str = "Return times";
    /// The first-return map.
    pub const RETURN_MAP: &str = "First-return map";
    /// The orbit diagram of a sweep.
    pub const ORBIT: &str = "Orbit diagram";
    /// A branch of resting points over the orbit diagram.
    pub const RESTING_BRANCH: &str = "Branch of resting points";
    /// A branch of periodic orbits over the orbit diagram.
    pub const ORBIT_BRANCH: &str = "Branch of periodic orbits";
    /// The regime map over two parameters.
    pub const REGIME_MAP: &str = "Regime map";
    /// The chosen states against time.
    pub const TIME_PLOT: &str = "Time plot";
}

impl Figure {
    /// Checks the size.
    pub(crate) fn check(&self) -> Result<(), RenderError> {
        let (w, h) = self.size;
        if !(64..=8192).contains(&w) || !(64..=8192).contains(&h) {
            return Err(RenderError::Size(w, h));
        }
        Ok(())
    }
}

/// Encodes an RGB buffer as PNG.
pub(crate) fn encode_png(buffer: Vec<u8>, (w, h): (u32, u32)) -> Result<Vec<u8>, RenderError> {
    let image = image::RgbImage::from_raw(w, h, buffer)
        .ok_or_else(|| RenderError::Encode("buffer size".into()))?;
    let mut bytes = Vec::new();
    image
        .write_to(
            &mut std::io::Cursor::new(&mut bytes),
            image::ImageFormat::Png,
        )
        .map_err(|e| RenderError::Encode(e.to_string()))?;
    Ok(bytes)
}

/// Turns a plotters error into ours.
pub(crate) fn draw_error<E: std::fmt::Debug>(e: E) -> RenderError {
    RenderError::Draw(format!("{e:?}"))
}
