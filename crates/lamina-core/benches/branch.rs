//! Branch benchmark: a branch of 200 periodic orbits of Rössler's model (three states) in
//! its parameter c from 2.5, on the cut x = 0, at rtol 1e-9: the time on one core (best of
//! three, wall clock and CPU), the time per orbit and Newton's steps per point.

#![allow(clippy::print_stdout)]

use std::time::Instant;

use cpu_time::ProcessTime;
use lamina_core::Interrupt;
use lamina_core::branch::{BranchRange, BranchSettings, OrbitMap, OrbitStart, follow_orbit_branch};
use lamina_core::cycle::{FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, find_cycle};
use lamina_core::integrate::{Method, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::recurrence::close_returns;
use lamina_core::run::{Collect, Cut, Direction, Run, RunSpec};

fn model() -> Model {
    let state = |name: &str, start: f64, rate: &str| StateSpec {
        name: name.into(),
        start,
        rate: rate.into(),
    };
    let parameter = |name: &str, value: f64| ParameterSpec {
        name: name.into(),
        value,
    };
    Model::compile(&ModelSpec {
        states: vec![
            state("x", 1.0, "-y - z"),
            state("y", 1.0, "x + a*y"),
            state("z", 0.0, "b + z*(x - c)"),
        ],
        parameters: vec![
            parameter("c", 2.5),
            parameter("a", 0.2),
            parameter("b", 0.2),
        ],
    })
    .expect("compiles")
}

fn main() {
    let m = model();
    let run = RunSpec {
        method: Method::Dp853,
        control: StepControl {
            rtol: 1e-9,
            atol: 1e-12,
            max_step: None,
            initial_step: None,
        },
        settle: 200.0,
        span: 100.0,
        ..RunSpec::default()
    };
    let cut = Cut::plane(vec![1.0, 0.0, 0.0], 0.0, Direction::Falling);
    let mut cloud = Collect::default();
    Run::new(m.clone(), run.clone(), Some(cut.clone()), None, false)
        .execute(&mut cloud, &Interrupt::new());
    let points: Vec<MapPoint> = cloud
        .cut_points
        .iter()
        .map(|p| MapPoint {
            t: p.t,
            state: p.state.clone(),
        })
        .collect();
    let seeds: Vec<MapPoint> = close_returns(&points, 1, 4)
        .iter()
        .map(|r| points[r.index].clone())
        .collect();
    let mut map = FlowMap::new(
        m.clone(),
        MapKind::Cut(cut.clone()),
        MapSettings::from_run(&run, 100.0),
    )
    .expect("map");
    let report = find_cycle(&mut map, &seeds, 1, &NewtonSettings::for_rtol(1e-9)).expect("orbit");
    let start = OrbitStart::from_report(&report);
    let range = BranchRange {
        parameter: 0,
        from: 2.5,
        to: 40.0,
    };
    // small steps, so that the 200 points stay in c < 10 (the range only keeps the branch
    // from ending before its point limit)
    let settings = BranchSettings {
        max_points: 199,
        max_step: 0.001,
        ..BranchSettings::default()
    };
    let mut best_wall = f64::INFINITY;
    let mut best_cpu = f64::INFINITY;
    let mut outcome = None;
    for _ in 0..3 {
        let wall = Instant::now();
        let cpu = ProcessTime::now();
        let branch = follow_orbit_branch(
            &m,
            &OrbitMap::Cut(cut.clone()),
            &run,
            &range,
            &start,
            &settings,
            &mut (),
            &Interrupt::new(),
        )
        .expect("branch");
        best_wall = best_wall.min(wall.elapsed().as_secs_f64());
        best_cpu = best_cpu.min(cpu.elapsed().as_secs_f64());
        outcome = Some(branch);
    }
    let branch = outcome.expect("ran");
    let last = branch.points.last().expect("points");
    println!(
        "branch of {} orbits of Rössler's model, c from 2.5 to {:.4} ({} special points, at most {} shooting segments)",
        branch.points.len(),
        last.value,
        branch.special.len(),
        branch.most_segments
    );
    println!(
        "  time        {:.3} s wall, {:.3} s CPU (best of 3), {:.2} ms per orbit",
        best_wall,
        best_cpu,
        1e3 * best_wall / branch.points.len() as f64
    );
    println!(
        "  Newton      {:.2} steps per point (plus one evaluation that confirms convergence)",
        branch.newton_steps_per_point()
    );
    for special in &branch.special {
        println!("  {:16} c = {}", special.kind.words(), special.value);
    }
}
