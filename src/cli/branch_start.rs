//! Where a branch of `lamina branch` starts: the resting point the run settles into (or the
//! one Newton's method reaches from the start state), or the orbit the run settles into as
//! `lamina cycle` finds it, and the map the orbit is followed on.

use std::path::Path;

use anyhow::{Context, Result, bail};
use lamina_core::Interrupt;
use lamina_core::branch::{OrbitMap, OrbitStart};
use lamina_core::cycle::{FlowMap, MapKind, MapSettings, NewtonSettings, Number, find_cycle};
use lamina_core::rest::{RestNewtonSettings, solve_resting_point};
use lamina_core::run::{Run, Sink};

use super::cycle::{MapArg, SeedOrigin, seeds_from_run};
use super::prepare::Prepared;
use super::progress::Progress;

/// Discards what a run finds.
struct Quiet<'a>(&'a Progress);

impl Sink for Quiet<'_> {
    fn progress(&mut self, t: f64, fraction: f64) {
        self.0.update(t, fraction);
    }
}

/// Whether the scenario's run ends at a resting point (Newton's method from its end state
/// converges next to it).
pub fn run_settles_at_rest(prepared: &Prepared, interrupt: &Interrupt) -> bool {
    !prepared.model.uses_time()
        && resting_start(prepared, interrupt).is_ok_and(|(_, origin)| origin == RestOrigin::Settled)
}

/// Where the resting point a branch starts from was found.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RestOrigin {
    /// Where the scenario's run settles.
    Settled,
    /// Newton's method from the start state.
    FromStart,
}

impl RestOrigin {
    /// In words, for the output.
    pub fn words(self) -> &'static str {
        match self {
            Self::Settled => "the resting point the run settles into",
            Self::FromStart => "the resting point Newton's method reaches from the start state",
        }
    }
}

/// The resting point a resting branch starts from: the one the run settles into, else the
/// one Newton's method reaches from the start state; and how it was found, in words.
pub fn resting_start(prepared: &Prepared, interrupt: &Interrupt) -> Result<(Vec<f64>, RestOrigin)> {
    let mut model = prepared.model.clone();
    let settings = RestNewtonSettings::default();
    let escape = prepared.spec.escape;
    let progress = Progress::new("settling");
    let outcome = Run::new(model.clone(), prepared.spec.clone(), None, None, false)
        .execute(&mut Quiet(&progress), interrupt);
    progress.finish();
    if !outcome.reason.is_trouble()
        && let Ok(solved) = solve_resting_point(&mut model, &outcome.final_state, escape, &settings)
    {
        let scale = solved.state.iter().fold(1.0f64, |m, v| m.max(v.abs()));
        let gap = solved
            .state
            .iter()
            .zip(&outcome.final_state)
            .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
        if gap <= 1e-3 * scale {
            return Ok((solved.state, RestOrigin::Settled));
        }
    }
    let start = model.start().to_vec();
    match solve_resting_point(&mut model, &start, escape, &settings) {
        Ok(solved) => Ok((solved.state, RestOrigin::FromStart)),
        Err(err) => bail!(
            "the start is not near a resting point: the run does not settle at one ({}), and \
             from the start state {err}; `lamina rest` lists the resting points Newton's method \
             finds from many seeds (set the start state near the one to follow)",
            outcome.reason
        ),
    }
}

/// The map an orbit branch is followed on (`born`: for orbits born at a Hopf point, which
/// need no cut).
pub fn map_for(prepared: &Prepared, asked: Option<MapArg>, born: bool) -> Result<OrbitMap> {
    let forced = prepared.model.uses_time();
    match (forced, asked) {
        (true, Some(MapArg::Cut)) => bail!(lamina_core::branch::BranchError::ForcedCut),
        (true, _) => {
            let spec = prepared.scenario.strobe_spec().context(
                "the model uses t (it is forced): its orbits are followed on the strobe map; \
                 add a `strobe: Some((...))` block with the forcing period",
            )?;
            Ok(OrbitMap::Strobe(spec))
        }
        (false, Some(MapArg::Strobe)) => bail!(lamina_core::branch::BranchError::AutonomousStrobe),
        (false, _) => match &prepared.cut {
            Some(cut) => Ok(OrbitMap::Cut(cut.clone())),
            None if born => Ok(OrbitMap::Flow),
            None => bail!(
                "the scenario has no cut: the orbit to follow is found on the cut map; add a \
                 `cut: Some((...))` block"
            ),
        },
    }
}

/// The orbit the run settles into, found as `lamina cycle` finds it; with its map and how it
/// was found, in words.
pub fn settled_orbit(
    prepared: &Prepared,
    path: &Path,
    asked: Option<MapArg>,
    returns: Option<usize>,
    interrupt: &Interrupt,
) -> Result<(OrbitMap, OrbitStart, String)> {
    let orbit_map = map_for(prepared, asked, false)?;
    let (choice, kind) = match &orbit_map {
        OrbitMap::Cut(cut) => (MapArg::Cut, MapKind::Cut(cut.clone())),
        OrbitMap::Strobe(_) => {
            let strobe = prepared.strobe.context("the scenario has no strobe")?;
            (MapArg::Strobe, MapKind::Strobe(strobe))
        }
        OrbitMap::Flow => bail!("the scenario has no cut"),
    };
    let (seeds, k, origin, max_return_time) =
        seeds_from_run(prepared.clone(), choice, returns, path, interrupt).with_context(|| {
            "the start is not near a periodic orbit (if the run settles to rest, follow the \
             orbits born at its Hopf point with --start hopf)"
        })?;
    let settings = MapSettings::from_run(&prepared.spec, max_return_time);
    let mut flow_map = FlowMap::new(prepared.model.clone(), kind, settings)?;
    let rtol = prepared.spec.control.rtol;
    let report = find_cycle(&mut flow_map, &seeds, k, &NewtonSettings::for_rtol(rtol))
        .with_context(|| {
            format!(
                "the start is not near a periodic orbit: no {k}-return orbit found from {} seed(s)",
                seeds.len()
            )
        })?;
    let map_words = match choice {
        MapArg::Cut => "cut map",
        MapArg::Strobe => "strobe map",
    };
    let seed_words = match origin {
        SeedOrigin::Start => "the start state",
        SeedOrigin::CloseReturn { .. } => "the closest return of the run's settled points",
    };
    // the orbit as it is: fewer returns than asked when no seed gave k distinct ones
    let mut how = format!(
        "the {}-return orbit of the {map_words} (period {}) found by Newton's method from \
         {seed_words}",
        report.k,
        Number(report.period)
    );
    if let Some(note) = report.search_note() {
        how.push_str(&format!(" ({note})"));
    }
    Ok((orbit_map, OrbitStart::from_report(&report), how))
}
