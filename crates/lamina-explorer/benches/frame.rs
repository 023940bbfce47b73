//! Frame-time benchmark: the explorer with 200,000 cut points and 200,000 strobe samples,
//! every frame forced to rebuild the density images (as a pan or zoom does), measured as the
//! CPU time of the egui pass plus tessellation. Also the same with 20,000 points drawn one by
//! one. Prints `frame: M ms` per case.

#![allow(clippy::print_stdout)]

use std::time::Instant;

use egui_kittest::Harness;
use lamina_explorer::ExplorerApp;

fn measure(n_points: usize) -> (f64, f64) {
    let app = ExplorerApp::benchmark_scene(n_points);
    let mut h = Harness::builder()
        .with_size(egui::vec2(1600.0, 1000.0))
        .build_ui_state(|ui, app: &mut ExplorerApp| app.show_ui(ui), app);
    for _ in 0..5 {
        h.step();
    }
    let mut pass = Vec::new();
    let mut total = Vec::new();
    for _ in 0..40 {
        h.state_mut().benchmark_touch();
        let started = Instant::now();
        h.step();
        let after_pass = started.elapsed();
        let shapes = h.output().shapes.clone();
        let ppp = h.ctx.pixels_per_point();
        let primitives = h.ctx.tessellate(shapes, ppp);
        std::hint::black_box(primitives);
        pass.push(after_pass.as_secs_f64() * 1e3);
        total.push(started.elapsed().as_secs_f64() * 1e3);
    }
    pass.sort_by(f64::total_cmp);
    total.sort_by(f64::total_cmp);
    (pass[pass.len() / 2], total[total.len() / 2])
}

fn main() {
    for n in [20_000, 200_000] {
        let (pass, total) = measure(n);
        println!(
            "{n} points: egui pass {pass:.1} ms, with tessellation {total:.1} ms (median of 40 frames)"
        );
        println!("frame: {total:.1} ms");
    }
}
