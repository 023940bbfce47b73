//! `lamina render`: the explorer's views drawn headless into PNG files for reports.

use std::io::Write;
use std::ops::ControlFlow;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context, Result, bail};
use lamina_core::recurrence::RecurrenceKind;
use lamina_core::run::{CutPoint, Run, Sink, StopReason, StrobeSample};
use lamina_core::sweep::{SweepColumn, SweepSpec};
use lamina_export::AtomicFile;
use lamina_render::{Figure, picture_title, view_names};
use lamina_scenario::Scenario;

use super::branch::{OfArg, StartArg};
use super::branch_picture::branch_picture;
use super::failure::Interrupted;
use super::outputs;
use super::prepare::prepare;
use super::signals::interrupt_on_signal;

/// Which view to draw.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum View {
    /// The trajectory in 3D.
    Trajectory,
    /// The cut points.
    Cut,
    /// The strobe samples.
    Strobe,
    /// The orbit diagram of the scenario's sweep.
    Sweep,
    /// A branch of resting points or orbits over the orbit diagram.
    Branch,
    /// The regime map of the scenario's map block.
    Map,
}

/// Arguments of `lamina render`.
#[derive(clap::Args, Debug)]
pub struct RenderArgs {
    /// Scenario file (.ron).
    file: PathBuf,
    /// The view to draw.
    #[arg(long, value_enum)]
    view: View,
    /// Where to write the picture.
    #[arg(long, value_name = "FILE.png")]
    png: PathBuf,
    /// Picture size in pixels.
    #[arg(long, value_name = "WxH", default_value = "1200x900", value_parser = parse_size)]
    size: (u32, u32),
    /// For the branch view: follow a resting point or an orbit. Default: a resting point if
    /// the run settles at one, else the orbit it settles into.
    #[arg(long, value_enum)]
    of: Option<OfArg>,
}

fn parse_size(text: &str) -> Result<(u32, u32), String> {
    let (w, h) = text
        .split_once(['x', 'X'])
        .ok_or("expected WxH, for example 1200x900")?;
    let w: u32 = w
        .trim()
        .parse()
        .map_err(|_| format!("'{w}' is not a width"))?;
    let h: u32 = h
        .trim()
        .parse()
        .map_err(|_| format!("'{h}' is not a height"))?;
    if !(64..=8192).contains(&w) || !(64..=8192).contains(&h) {
        return Err(format!("{w}x{h}: each side must be 64 to 8192 pixels"));
    }
    Ok((w, h))
}

#[derive(Default)]
struct Everything {
    trajectory: Vec<(f64, Vec<f64>)>,
    cut: Vec<CutPoint>,
    strobe: Vec<StrobeSample>,
}

impl Sink for Everything {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        self.cut.push(point.clone());
        ControlFlow::Continue(())
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        self.strobe.push(sample.clone());
        ControlFlow::Continue(())
    }
    fn step(&mut self, t: f64, state: &[f64]) {
        self.trajectory.push((t, state.to_vec()));
    }
}

/// The orbit diagram of a finished sweep as PNG bytes, each value coloured by its label.
pub fn orbit_diagram_png(
    size: (u32, u32),
    scenario: &Scenario,
    spec: &SweepSpec,
    coordinate: usize,
    columns: &[SweepColumn],
    kinds: &[RecurrenceKind],
) -> Result<Vec<u8>> {
    let data: Vec<(f64, Vec<f64>)> = columns
        .iter()
        .map(|c| (c.value, c.points.iter().map(|p| p[coordinate]).collect()))
        .collect();
    let figure = Figure {
        size,
        title: picture_title(&scenario.title, view_names::ORBIT),
        caption: scenario.sweep_caption(spec),
        x_label: scenario.parameter_label(spec.parameter),
        y_label: scenario.state_label(coordinate),
    };
    Ok(lamina_render::orbit_diagram_png(
        &figure,
        &data,
        Some(kinds),
    )?)
}

/// `lamina render`.
pub fn render(args: &RenderArgs) -> Result<ExitCode> {
    outputs::check_paths(&args.file, &[("--png", &args.png)])?;
    // Ctrl-C stops the run at its next step; installed before the picture's temporary file
    let interrupt = interrupt_on_signal()?;
    let png = outputs::open("--png", &args.png)?;
    if args.view == View::Branch {
        let prepared = prepare(&args.file)?;
        let of = match args.of {
            Some(of) => of,
            None if super::branch_start::run_settles_at_rest(&prepared, &interrupt) => OfArg::Rest,
            None => OfArg::Cycle,
        };
        let followed = super::branch::follow(
            &prepared,
            &args.file,
            of,
            None,
            None,
            StartArg::Settled,
            &interrupt,
        )?;
        let (bytes, note) = branch_picture(&prepared, &args.file, &followed, args.size)?;
        return finish(png, bytes, &format!("the branch picture ({note})"), true);
    }
    if args.view == View::Map {
        let run = super::map_run::run_map(&args.file, None, &interrupt)?;
        if interrupt.is_raised() {
            return Err(super::map_run::stopped_map(&run, &[&args.png]).into());
        }
        let bytes = super::map_picture::map_png(args.size, &run)?;
        return finish(png, bytes, &size_text(args), true);
    }
    if args.view == View::Sweep {
        let run = super::sweep::run_sweep(&args.file, None, &interrupt)?;
        if interrupt.is_raised() {
            let parameter = &run.scenario.parameters[run.spec.parameter].name;
            return Err(super::sweep::stopped_sweep(&run, parameter, &[&args.png]).into());
        }
        let kinds = super::sweep::labels(&run.scenario, &run.columns);
        let bytes = orbit_diagram_png(
            args.size,
            &run.scenario,
            &run.spec,
            run.coordinate,
            &run.columns,
            &kinds,
        )?;
        let succeeded = run.columns.iter().all(|c| !c.reason.is_trouble());
        return finish(png, bytes, &size_text(args), succeeded);
    }
    let prepared = prepare(&args.file)?;
    let scenario = prepared.scenario.clone();
    let n_states = scenario.states.len();
    let (cut, strobe) = match args.view {
        View::Cut if prepared.cut.is_none() => bail!("{} has no cut", args.file.display()),
        View::Strobe if prepared.strobe.is_none() => bail!("{} has no strobe", args.file.display()),
        _ => (prepared.cut, prepared.strobe),
    };
    let period = strobe.as_ref().map(|s| s.period);
    let mut sink = Everything::default();
    // the trajectory is drawn from the stored steps' dense output (ramps and the cut points
    // on the line), the other views from the points recorded
    let store = args.view == View::Trajectory;
    let mut run = Run::new(prepared.model, prepared.spec, cut, strobe, store);
    let outcome = run.execute(&mut sink, &interrupt);
    if store {
        let mut dense = Vec::new();
        let stored = run.stored();
        if lamina_render::dense_path(stored, lamina_render::MAX_DENSE_SAMPLES, |t, s| {
            dense.push((t, s.to_vec()))
        }) && stored.truncated_at().is_none()
        {
            sink.trajectory = dense;
        }
    }
    if let StopReason::Cancelled { t } = outcome.reason {
        return Err(Interrupted(format!(
            "stopped at t = {t} on a signal; {}",
            outputs::nothing_written(&[&args.png])
        ))
        .into());
    }
    let figure = |x: String, y: String, what: &str| Figure {
        size: args.size,
        title: picture_title(&scenario.title, what),
        caption: scenario.caption(),
        x_label: x,
        y_label: y,
    };
    let bytes = match args.view {
        View::Trajectory => {
            let axes = three_axes(&scenario);
            let n = n_states;
            let label = |a: usize| match a {
                _ if a < n => scenario.state_label(a),
                _ if a == n => scenario.time_label(),
                _ => time_within_period_label(&scenario),
            };
            let points = sink.trajectory.iter().map(|(t, s)| {
                let v = |a: usize| match s.get(a) {
                    Some(x) => *x,
                    None if a == n => *t,
                    None => period.map_or(*t, |p| t.rem_euclid(p)),
                };
                (v(axes[0]), v(axes[1]), v(axes[2]))
            });
            // a new piece of line wherever the time within the period wraps around
            let wrapping_axis = axes.iter().position(|&a| a == n + 1);
            let pieces = lamina_render::split_where_it_wraps(points, wrapping_axis.zip(period));
            lamina_render::trajectory_png(
                &figure(label(axes[0]), label(axes[1]), view_names::TRAJECTORY),
                &label(axes[2]),
                &pieces,
            )?
        }
        View::Cut => {
            let [a, b] = scenario.cut_axes().context("cut axes")?;
            let fixed = scenario.cut_fixed_state();
            if fixed == Some(a) || fixed == Some(b) {
                // that coordinate is the same at every cut point: show the return time instead
                let keep = if fixed == Some(b) { a } else { b };
                let points: Vec<(f64, f64)> = sink
                    .cut
                    .iter()
                    .filter_map(|p| p.return_time.map(|r| (p.state[keep], r)))
                    .collect();
                lamina_render::scatter_png(
                    &figure(
                        scenario.state_label(keep),
                        return_time_label(&scenario),
                        view_names::CUT,
                    ),
                    &points,
                    None,
                )?
            } else {
                let points: Vec<(f64, f64)> =
                    sink.cut.iter().map(|p| (p.state[a], p.state[b])).collect();
                lamina_render::scatter_png(
                    &figure(
                        scenario.state_label(a),
                        scenario.state_label(b),
                        view_names::CUT,
                    ),
                    &points,
                    Some(lamina_render::ColourKey::Arrival),
                )?
            }
        }
        View::Strobe => {
            let [a, b] = scenario.strobe_axes().context("strobe axes")?;
            let points: Vec<(f64, f64)> = sink
                .strobe
                .iter()
                .map(|p| (p.state[a], p.state[b]))
                .collect();
            lamina_render::scatter_png(
                &figure(
                    scenario.state_label(a),
                    scenario.state_label(b),
                    view_names::STROBE,
                ),
                &points,
                Some(lamina_render::ColourKey::Arrival),
            )?
        }
        View::Sweep | View::Branch | View::Map => drawn_above()?,
    };
    let trouble = outcome.reason.is_trouble();
    let code = finish(png, bytes, &size_text(args), !trouble)?;
    if trouble {
        eprintln!(
            "the run ended early: {}; the picture shows what was found before",
            outcome.reason
        );
    }
    Ok(code)
}

/// `the picture (WxH)`.
fn size_text(args: &RenderArgs) -> String {
    format!("the picture ({}x{})", args.size.0, args.size.1)
}

fn drawn_above() -> Result<Vec<u8>> {
    bail!("the sweep, branch and map views are drawn above")
}

/// Writes the picture `what` into `png`: over its target when the run `succeeded` or
/// nothing was there, else beside it; says where it went.
fn finish(mut png: AtomicFile, bytes: Vec<u8>, what: &str, succeeded: bool) -> Result<ExitCode> {
    png.write_all(&bytes).context("--png")?;
    let note = outputs::finish(png, succeeded, what)?;
    eprintln!("{note}");
    Ok(if succeeded {
        ExitCode::SUCCESS
    } else {
        ExitCode::FAILURE
    })
}

/// `return time`, with the time's unit.
fn return_time_label(scenario: &Scenario) -> String {
    with_time_unit("return time", scenario)
}

/// The label of the time within the strobe period (`t mod T`), with the time's unit.
fn time_within_period_label(scenario: &Scenario) -> String {
    with_time_unit("t mod T", scenario)
}

fn with_time_unit(label: &str, scenario: &Scenario) -> String {
    match scenario.time.unit.as_deref() {
        Some(unit) if !unit.trim().is_empty() => format!("{label} ({unit})"),
        _ => label.to_owned(),
    }
}

/// The three coordinates of the 3D picture: the view block's, else the first three states,
/// else two states and the time.
fn three_axes(scenario: &Scenario) -> [usize; 3] {
    let n = scenario.states.len();
    if let Some(axes) = scenario.view_axes() {
        return axes.map(|a| match a {
            lamina_scenario::ViewAxis::State(i) => i,
            lamina_scenario::ViewAxis::Time => n,
        });
    }
    let third = if n >= 3 {
        2
    } else if scenario.strobe.is_some() {
        n + 1
    } else {
        n
    };
    [0, 1.min(n.saturating_sub(1)), third]
}
