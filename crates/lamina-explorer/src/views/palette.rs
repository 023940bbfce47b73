//! Lamina's colour ramp for point order and return time: deep blue through teal and sand
//! to coral.

use egui::Color32;

const STOPS: [(f32, [u8; 3]); 5] = [
    (0.0, [40, 56, 140]),
    (0.3, [34, 132, 160]),
    (0.55, [92, 190, 140]),
    (0.8, [226, 200, 110]),
    (1.0, [240, 112, 84]),
];

/// Colour of the ramp at `u` in [0, 1] (clamped).
pub fn ramp(u: f32) -> Color32 {
    let u = if u.is_finite() {
        u.clamp(0.0, 1.0)
    } else {
        0.0
    };
    for pair in STOPS.windows(2) {
        let (a, ca) = pair[0];
        let (b, cb) = pair[1];
        if u <= b {
            let f = (u - a) / (b - a);
            let mix = |i: usize| {
                (f32::from(ca[i]) + f * (f32::from(cb[i]) - f32::from(ca[i]))).round() as u8
            };
            return Color32::from_rgb(mix(0), mix(1), mix(2));
        }
    }
    let [r, g, b] = STOPS[STOPS.len() - 1].1;
    Color32::from_rgb(r, g, b)
}
