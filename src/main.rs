//! The `lamina` binary: the command-line definition and the glue between the scenario file,
//! the numerical core, the exports and the explorer window.

mod cli;

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// The command line; its one-line description is the package's (the tagline, also in the
/// About box).
#[derive(Parser, Debug)]
#[command(name = "lamina", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Open the explorer window on a scenario.
    Open {
        /// Scenario file (.ron).
        file: PathBuf,
    },
    /// Validate a scenario and print every problem with its location; exit 1 if any.
    Check {
        /// Scenario file (.ron).
        file: PathBuf,
    },
    /// Compute cut points (Poincaré section) and write them as CSV.
    Cut(cli::PointsArgs),
    /// Compute strobe samples (time-T map) and write them as CSV.
    Strobe(cli::PointsArgs),
    /// Sweep one parameter (the scenario's sweep block) into an orbit diagram: CSV and PNG.
    Sweep(cli::SweepArgs),
    /// Classify every cell of two parameters (the scenario's map block): resting, periodic,
    /// quasi-periodic, chaotic, escaped or failed; CSV, PNG and JSON.
    Map(cli::MapArgs),
    /// Join the shard files of a sweep or a map into exactly the file one unsharded run
    /// writes, checking that every value or cell is there once.
    Merge(cli::MergeArgs),
    /// Draw a view (trajectory, cut, strobe, sweep, branch, map) into a PNG without a window.
    Render(cli::RenderArgs),
    /// Find a periodic orbit of the cut or strobe map: period, point, multipliers, verdict.
    Cycle(cli::CycleArgs),
    /// Find every resting point: eigenvalues, stability and kind.
    Rest(cli::RestArgs),
    /// Follow a resting point or periodic orbit through the sweep's parameter range and locate
    /// where the behaviour changes (fold, Hopf, period doubling, torus birth, branch point).
    Branch(cli::BranchArgs),
    /// Compute Lyapunov exponents (the spectrum, its spread, Kaplan–Yorke dimension, verdict).
    Lyapunov(cli::LyapunovArgs),
}

impl Command {
    /// The subcommand's name, for the JSON error object.
    fn name(&self) -> &'static str {
        match self {
            Self::Open { .. } => "open",
            Self::Check { .. } => "check",
            Self::Cut(_) => "cut",
            Self::Strobe(_) => "strobe",
            Self::Sweep(_) => "sweep",
            Self::Map(_) => "map",
            Self::Merge(_) => "merge",
            Self::Render(_) => "render",
            Self::Cycle(_) => "cycle",
            Self::Rest(_) => "rest",
            Self::Branch(_) => "branch",
            Self::Lyapunov(_) => "lyapunov",
        }
    }

    /// Whether the command writes JSON on stdout (`--json`).
    fn writes_json(&self) -> bool {
        match self {
            Self::Cycle(args) => args.json(),
            Self::Rest(args) => args.json(),
            Self::Branch(args) => args.json(),
            Self::Lyapunov(args) => args.json(),
            Self::Map(args) => args.json(),
            _ => false,
        }
    }
}

fn main() -> ExitCode {
    let args = Cli::parse();
    let json = args.command.as_ref().is_some_and(Command::writes_json);
    let name = args.command.as_ref().map_or("open", Command::name);
    let result = match args.command {
        None => cli::open_explorer(None),
        Some(Command::Open { file }) => cli::open_explorer(Some(file)),
        Some(Command::Check { file }) => cli::check(&file),
        Some(Command::Cut(args)) => cli::points(cli::PointKind::Cut, &args),
        Some(Command::Strobe(args)) => cli::points(cli::PointKind::Strobe, &args),
        Some(Command::Sweep(args)) => cli::sweep(&args),
        Some(Command::Map(args)) => cli::map(&args),
        Some(Command::Merge(args)) => cli::merge(&args),
        Some(Command::Render(args)) => cli::render(&args),
        Some(Command::Cycle(args)) => cli::cycle(&args),
        Some(Command::Rest(args)) => cli::rest(&args),
        Some(Command::Branch(args)) => cli::branch(&args),
        Some(Command::Lyapunov(args)) => cli::lyapunov(&args),
    };
    match result {
        Ok(code) => code,
        // the reader of our output has what it wanted (`lamina cut ... | head`)
        Err(err) if cli::output_closed(&err) => ExitCode::SUCCESS,
        Err(err) => {
            let text = error_chain(&err);
            let interrupted = err.downcast_ref::<cli::Interrupted>().is_some();
            if interrupted {
                eprintln!("{text}");
            } else {
                eprintln!("error: {text}");
            }
            if json {
                cli::print_json_error(name, &text, &err);
            }
            if interrupted {
                ExitCode::from(cli::INTERRUPTED)
            } else {
                ExitCode::FAILURE
            }
        }
    }
}

/// The error and its causes joined by `: `, leaving out a cause whose text the message before
/// it already ends with (errors that print their source as part of their own message).
fn error_chain(err: &anyhow::Error) -> String {
    let mut text = err.to_string();
    for cause in err.chain().skip(1) {
        let cause = cause.to_string();
        if !text.ends_with(&cause) {
            text.push_str(": ");
            text.push_str(&cause);
        }
    }
    text
}
