//! Bracketing root finders that place cut crossings on a step's dense output: Brent's method
//! for any surface, and Newton's method kept inside the bracket for a plane, whose value and
//! slope along the step come cheaply from the projected interpolant.

/// Finds `s` in `[a, b]` with `f(s) = 0`, given `fa = f(a)` and `fb = f(b)` of opposite sign
/// (or one of them zero). Converges to within a few ulps of the bracket; at most 100
/// evaluations. R. P. Brent, Algorithms for Minimization without Derivatives (1973), ch. 4.
pub fn brent(mut f: impl FnMut(f64) -> f64, a: f64, b: f64, fa: f64, fb: f64) -> f64 {
    let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..100 {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * f64::EPSILON;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return b;
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            // inverse quadratic or secant step
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        } else {
            d = m;
            e = m;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol.copysign(m) };
        fb = f(b);
    }
    b
}

/// Finds `s` in `[a, b]` with `f(s) = 0`, where `f` returns the value and the derivative, given
/// `fa = f(a)` and `fb = f(b)` of opposite sign (or one of them zero). Starts from the secant
/// and takes Newton steps, falling back to bisection for a step that leaves the bracket
/// (which shrinks with every evaluation); stops when a step is within a few ulps. Converges
/// quadratically near a simple root; at most 100 evaluations.
pub fn newton_bracketed(
    mut f: impl FnMut(f64) -> (f64, f64),
    a: f64,
    b: f64,
    fa: f64,
    fb: f64,
) -> f64 {
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    // f(below) < 0 < f(above)
    let (mut below, mut above) = if fa < 0.0 { (a, b) } else { (b, a) };
    let inside = |x: f64, p: f64, q: f64| x > p.min(q) && x < p.max(q);
    let mut x = a - fa * (b - a) / (fb - fa);
    if !inside(x, a, b) {
        x = 0.5 * (a + b);
    }
    for _ in 0..100 {
        let (fx, slope) = f(x);
        if fx == 0.0 {
            return x;
        }
        if fx < 0.0 {
            below = x;
        } else {
            above = x;
        }
        let mut next = x - fx / slope;
        if !inside(next, below, above) {
            next = 0.5 * (below + above);
        }
        let tol = 2.0 * f64::EPSILON * next.abs() + 0.5 * f64::EPSILON;
        if (next - x).abs() <= tol || (above - below).abs() <= tol {
            return next;
        }
        x = next;
    }
    x
}

#[cfg(test)]
mod tests {
    use super::{brent, newton_bracketed};

    #[test]
    fn finds_roots_to_round_off() {
        // [analytic] cos has its root at pi/2; x^3 - 2 at 2^(1/3)
        let root = brent(f64::cos, 1.0, 2.0, 1f64.cos(), 2f64.cos());
        assert!((root - std::f64::consts::FRAC_PI_2).abs() < 4.0 * f64::EPSILON);
        let f = |x: f64| x * x * x - 2.0;
        let root = brent(f, 0.0, 2.0, f(0.0), f(2.0));
        assert!((root - 2f64.cbrt()).abs() < 4.0 * f64::EPSILON);
    }

    #[test]
    fn bracketed_newton_finds_roots_to_round_off() {
        // [analytic] cos has its root at pi/2; x^3 - 2 at 2^(1/3)
        let f = |x: f64| (x.cos(), -x.sin());
        let root = newton_bracketed(f, 1.0, 2.0, 1f64.cos(), 2f64.cos());
        assert!((root - std::f64::consts::FRAC_PI_2).abs() < 4.0 * f64::EPSILON);
        let g = |x: f64| (x * x * x - 2.0, 3.0 * x * x);
        let root = newton_bracketed(g, 0.0, 2.0, -2.0, 6.0);
        assert!((root - 2f64.cbrt()).abs() < 4.0 * f64::EPSILON);
        // a flat start (zero slope at the secant point) falls back to bisection
        let h = |x: f64| ((x - 0.5).powi(3), 3.0 * (x - 0.5).powi(2));
        let root = newton_bracketed(h, 0.0, 1.0, -0.125, 0.125);
        assert!((root - 0.5).abs() < 1e-5);
        assert_eq!(newton_bracketed(g, 2f64.cbrt(), 2.0, 0.0, 6.0), 2f64.cbrt());
    }

    #[test]
    fn endpoint_roots_are_returned() {
        assert_eq!(brent(|x| x, 0.0, 1.0, 0.0, 1.0), 0.0);
        assert_eq!(brent(|x| x - 1.0, 0.0, 1.0, -1.0, 0.0), 1.0);
    }
}
