//! The cut (Poincaré section): a plane or a level surface, a crossing direction, and the
//! location of crossings on a step's dense output.

use super::graze::{self, Bracket, Turns};
use super::level_plane::LevelPlane;
use super::root::{brent, newton_bracketed};
use super::{CutSpec, SpecError, SurfaceSpec};
use crate::expr::{Program, Scratch};
use crate::integrate::dense::{eval_split, slope_split};
use crate::model::Model;

/// Which crossings of the surface count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Direction {
    /// `g` goes from negative to positive.
    Rising,
    /// `g` goes from positive to negative.
    Falling,
    /// Either way.
    Both,
}

impl Direction {
    /// Whether a step from `g0` to `g1` crosses in this direction. A step that starts exactly
    /// on the surface does not cross (the crossing belonged to the step before, or to nothing).
    #[inline]
    pub fn crosses(self, g0: f64, g1: f64) -> bool {
        let rising = g0 < 0.0 && g1 >= 0.0;
        let falling = g0 > 0.0 && g1 <= 0.0;
        match self {
            Self::Rising => rising,
            Self::Falling => falling,
            Self::Both => rising || falling,
        }
    }
}

/// A compiled cut surface `g(x, t) = 0`.
#[derive(Clone, Debug)]
pub enum Surface {
    /// `g = normal . x - offset`, one weight per state.
    Plane {
        /// One weight per state, in state order.
        normal: Vec<f64>,
        /// Right-hand side.
        offset: f64,
    },
    /// `g` given by an expression in states, parameters and `t`.
    Level {
        /// The compiled expression.
        program: Program,
        /// The expression as typed.
        expression: String,
    },
}

/// A compiled cut.
#[derive(Clone, Debug)]
pub struct Cut {
    /// The surface.
    pub surface: Surface,
    /// Which crossings count.
    pub direction: Direction,
    scratch: Scratch,
    /// For a level surface affine in the states and free of `t`, the plane it is at the
    /// run's parameters: every value, slope and crossing is then taken as for a plane.
    level_plane: Option<Box<LevelPlane>>,
}

impl Cut {
    /// A plane cut `normal . x = offset`.
    pub fn plane(normal: Vec<f64>, offset: f64, direction: Direction) -> Self {
        Self {
            surface: Surface::Plane { normal, offset },
            direction,
            scratch: Scratch::default(),
            level_plane: None,
        }
    }

    /// Compiles `spec` against the model's names.
    pub fn compile(spec: &CutSpec, model: &Model) -> Result<Self, SpecError> {
        let names = model.names();
        match &spec.surface {
            SurfaceSpec::Plane { normal, offset } => {
                let mut weights = vec![0.0; names.states.len()];
                for (name, weight) in normal {
                    let Some(idx) = names.states.iter().position(|s| s == name) else {
                        return Err(SpecError::UnknownNormalState {
                            name: name.clone(),
                            known: names.states.join(", "),
                        });
                    };
                    weights[idx] += weight;
                }
                if weights.iter().all(|&w| w == 0.0) {
                    return Err(SpecError::ZeroNormal);
                }
                Ok(Self::plane(weights, *offset, spec.direction))
            }
            SurfaceSpec::Level(expression) => {
                let program =
                    Program::compile(names, &[("cut surface".to_string(), expression.as_str())])?;
                let scratch = program.scratch();
                let level_plane = (program.is_affine_in_states() && !program.uses_time())
                    .then(Box::<LevelPlane>::default);
                Ok(Self {
                    surface: Surface::Level {
                        program,
                        expression: expression.clone(),
                    },
                    direction: spec.direction,
                    scratch,
                    level_plane,
                })
            }
        }
    }

    /// The plane `normal . x = offset` this cut is at `parameters`: a plane's own, or that of
    /// a level surface affine in the states (`None` for any other level surface). Live runs,
    /// re-slices and the cycle search all take a plane's arithmetic from here, so that they
    /// agree to the last bit on which steps cross.
    #[inline]
    pub(crate) fn as_plane(&mut self, parameters: &[f64]) -> Option<(&[f64], f64)> {
        match &self.surface {
            Surface::Plane { normal, offset } => Some((normal, *offset)),
            Surface::Level { program, .. } => {
                self.level_plane
                    .as_mut()?
                    .at(program, &mut self.scratch, parameters)
            }
        }
    }

    /// `g(x, t)`: zero on the surface, its sign tells the side.
    #[inline]
    pub fn value(&mut self, t: f64, x: &[f64], parameters: &[f64]) -> f64 {
        match &self.surface {
            Surface::Plane { normal, offset } => plane_value(normal, *offset, x),
            Surface::Level { program, .. } => {
                if let Some(level_plane) = self.level_plane.as_mut()
                    && let Some((normal, offset)) =
                        level_plane.at(program, &mut self.scratch, parameters)
                {
                    return plane_value(normal, offset, x);
                }
                program.eval_one(&mut self.scratch, t, x, parameters)
            }
        }
    }

    /// Gradient of `g` with respect to the states at `(t, x)` into `out` (length of `x`).
    pub fn gradient(&mut self, t: f64, x: &[f64], parameters: &[f64], out: &mut [f64]) {
        if let Some((normal, _)) = self.as_plane(parameters) {
            for (o, &w) in out.iter_mut().zip(normal) {
                *o = w;
            }
            return;
        }
        if let Surface::Level { program, .. } = &self.surface {
            program.jacobian(&mut self.scratch, t, x, parameters, out);
        }
    }

    /// `dg/dt` along the flow at `(t, x)` where the rates are `rates`: `grad g . f`, plus the
    /// surface's own motion for a level surface that uses `t`.
    #[inline]
    pub fn slope(&mut self, t: f64, x: &[f64], rates: &[f64], parameters: &[f64]) -> f64 {
        match &self.surface {
            Surface::Plane { normal, .. } => plane_slope(normal, rates),
            Surface::Level { .. } => self.level_slope(t, x, rates, parameters),
        }
    }

    /// [`Cut::slope`] of a level surface (kept out of line: a plane's is taken every step).
    fn level_slope(&mut self, t: f64, x: &[f64], rates: &[f64], parameters: &[f64]) -> f64 {
        let Surface::Level { program, .. } = &self.surface else {
            return f64::NAN;
        };
        if let Some(level_plane) = self.level_plane.as_mut()
            && let Some((normal, _)) = level_plane.at(program, &mut self.scratch, parameters)
        {
            return plane_slope(normal, rates);
        }
        let mut small = [0.0; 16];
        let mut large = Vec::new();
        let gradient = if x.len() <= small.len() {
            &mut small[..x.len()]
        } else {
            large.resize(x.len(), 0.0);
            &mut large[..]
        };
        program.jacobian(&mut self.scratch, t, x, parameters, gradient);
        let mut slope: f64 = gradient.iter().zip(rates).map(|(g, f)| g * f).sum();
        if program.uses_time() {
            let mut dt = [0.0];
            program.time_derivative(&mut self.scratch, t, x, parameters, &mut dt);
            slope += dt[0];
        }
        slope
    }

    /// The screen of [`graze`] on one step (given as for [`Cut::locate`], with `g0`, `g1`
    /// the values at its ends) with the slopes of its dense output at the ends: the extrema
    /// that may hide crossings. Live runs and re-slices decide on these, so that they agree.
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn turns_on_step(
        &mut self,
        start: &[f64],
        terms: &[f64],
        t0: f64,
        h: f64,
        g0: f64,
        g1: f64,
        parameters: &[f64],
        state: &mut [f64],
    ) -> Turns {
        let dim = start.len();
        if let Some((normal, _)) = self.as_plane(parameters) {
            // the interpolant's slopes at the ends need its first three terms after the
            // start only: c1 + c2 at s = 0 and c1 - c2 - c3 at s = 1 (the nested form)
            let project = |j: usize| -> f64 {
                terms.get(j * dim..(j + 1) * dim).map_or(0.0, |term| {
                    normal.iter().zip(term).map(|(n, c)| n * c).sum()
                })
            };
            let (p1, p2, p3) = (project(0), project(1), project(2));
            return graze::screen(g0, g1, p1 + p2, p1 - p2 - p3, graze::REACH);
        }
        let mut slopes = [0.0; 2];
        let mut velocity = vec![0.0; dim];
        for (m, s) in slopes.iter_mut().zip([0.0, 1.0]) {
            eval_split(start, terms, dim, s, state);
            slope_split(start, terms, dim, s, &mut velocity);
            for v in &mut velocity {
                *v /= h;
            }
            *m = h * self.slope(t0 + s * h, state, &velocity, parameters);
        }
        graze::screen(g0, g1, slopes[0], slopes[1], graze::REACH)
    }

    /// The pieces of one step (given as for [`Cut::locate`]) on which `g` changes sign,
    /// given the extrema `turns` of its Hermite interpolant found by the screen of
    /// [`graze`]: the crossings that enter and leave inside the step too. Writes at most three
    /// into `out` and returns the count.
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn brackets(
        &mut self,
        start: &[f64],
        terms: &[f64],
        t0: f64,
        h: f64,
        g0: f64,
        g1: f64,
        turns: &Turns,
        parameters: &[f64],
        state: &mut [f64],
        out: &mut [Bracket; 3],
    ) -> usize {
        let dim = start.len();
        if let Some((normal, offset)) = self.as_plane(parameters)
            && let Some(g) = ProjectedPlane::new(normal, offset, start, terms)
        {
            return graze::brackets(|s| g.value_and_slope(s).0, g0, g1, turns, out);
        }
        graze::brackets(
            |s| {
                eval_split(start, terms, dim, s, state);
                self.value(t0 + s * h, state, parameters)
            },
            g0,
            g1,
            turns,
            out,
        )
    }

    /// [`Cut::locate`] on the piece `bracket` of the step.
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn locate_in(
        &mut self,
        start: &[f64],
        terms: &[f64],
        t0: f64,
        h: f64,
        bracket: &Bracket,
        parameters: &[f64],
        state: &mut [f64],
    ) -> f64 {
        let dim = start.len();
        let Bracket { a, b, ga, gb } = *bracket;
        let s = match self.as_plane(parameters) {
            Some((normal, offset)) => match ProjectedPlane::new(normal, offset, start, terms) {
                Some(g) => newton_bracketed(|s| g.value_and_slope(s), a, b, ga, gb),
                None => brent(
                    |s| {
                        eval_split(start, terms, dim, s, state);
                        plane_value(normal, offset, state)
                    },
                    a,
                    b,
                    ga,
                    gb,
                ),
            },
            None => brent(
                |s| {
                    eval_split(start, terms, dim, s, state);
                    self.value(t0 + s * h, state, parameters)
                },
                a,
                b,
                ga,
                gb,
            ),
        };
        eval_split(start, terms, dim, s, state);
        t0 + s * h
    }

    /// Whether the surface moves with the time `t` (a level surface whose expression uses `t`).
    pub fn uses_time(&self) -> bool {
        match &self.surface {
            Surface::Plane { .. } => false,
            Surface::Level { program, .. } => program.uses_time(),
        }
    }

    /// Moves a plane along its normal to `offset`; a level surface is unchanged.
    pub fn set_offset(&mut self, new_offset: f64) {
        if let Surface::Plane { offset, .. } = &mut self.surface {
            *offset = new_offset;
        }
    }

    /// Locates the crossing inside one step given by its start state and the remaining
    /// dense-output terms, with `g0` and `g1` the surface values at its ends. Returns the
    /// crossing time and writes the state there into `state`. The root is found by Brent's
    /// method on the interpolant, to round-off in the step fraction; for a plane on the
    /// interpolant of `g` itself (the terms projected on the normal), which is much cheaper
    /// than interpolating the state at every trial.
    #[allow(clippy::too_many_arguments)]
    pub fn locate(
        &mut self,
        start: &[f64],
        terms: &[f64],
        t0: f64,
        h: f64,
        g0: f64,
        g1: f64,
        parameters: &[f64],
        state: &mut [f64],
    ) -> f64 {
        let dim = start.len();
        let s = match self.as_plane(parameters) {
            Some((normal, offset)) => {
                return locate_on_plane(normal, offset, start, terms, t0, h, g0, g1, state);
            }
            None => brent(
                |s| {
                    eval_split(start, terms, dim, s, state);
                    self.value(t0 + s * h, state, parameters)
                },
                0.0,
                1.0,
                g0,
                g1,
            ),
        };
        eval_split(start, terms, dim, s, state);
        t0 + s * h
    }
}

/// [`Cut::locate`] for the plane `normal . x = offset` (shared by live runs and re-slices, so
/// that they agree to the last bit).
#[allow(clippy::too_many_arguments)]
pub(crate) fn locate_on_plane(
    normal: &[f64],
    offset: f64,
    start: &[f64],
    terms: &[f64],
    t0: f64,
    h: f64,
    g0: f64,
    g1: f64,
    state: &mut [f64],
) -> f64 {
    let dim = start.len();
    let s = match ProjectedPlane::new(normal, offset, start, terms) {
        Some(g) => newton_bracketed(|s| g.value_and_slope(s), 0.0, 1.0, g0, g1),
        None => brent(
            |s| {
                eval_split(start, terms, dim, s, state);
                plane_value(normal, offset, state)
            },
            0.0,
            1.0,
            g0,
            g1,
        ),
    };
    eval_split(start, terms, dim, s, state);
    t0 + s * h
}

/// `normal . f`: how fast the value of a plane cut changes where the rates are `f`.
#[inline]
fn plane_slope(normal: &[f64], rates: &[f64]) -> f64 {
    normal.iter().zip(rates).map(|(n, f)| n * f).sum()
}

/// `normal . x - offset`: the value of a plane cut, the same arithmetic wherever it is taken
/// (a live run and a re-slice must agree to the last bit on which steps cross).
#[inline]
pub(crate) fn plane_value(normal: &[f64], offset: f64, x: &[f64]) -> f64 {
    normal.iter().zip(x).map(|(n, x)| n * x).sum::<f64>() - offset
}

/// Most interpolation terms a projected plane holds (DOP853 and `Automatic` have 8, Dormand–Prince
/// 5(4) 5, Rodas4 4).
const MAX_TERMS: usize = 8;

/// A plane's `g` along one step as a polynomial in the step fraction: the dense-output terms
/// projected on the normal, in the same nested form.
struct ProjectedPlane {
    /// `g` at the start of the step.
    start: f64,
    /// The projections of the remaining terms.
    terms: [f64; MAX_TERMS],
    n_terms: usize,
}

impl ProjectedPlane {
    /// `None` when there are more terms than it holds.
    fn new(normal: &[f64], offset: f64, start: &[f64], terms: &[f64]) -> Option<Self> {
        let dim = start.len().max(1);
        let n_terms = terms.len() / dim;
        if n_terms == 0 || n_terms > MAX_TERMS {
            return None;
        }
        let mut projected = [0.0; MAX_TERMS];
        for (p, term) in projected.iter_mut().zip(terms.chunks_exact(dim)) {
            *p = normal.iter().zip(term).map(|(n, c)| n * c).sum::<f64>();
        }
        Some(Self {
            start: plane_value(normal, offset, start),
            terms: projected,
            n_terms,
        })
    }

    /// `g` and `dg/ds` at the fraction `s` of the step (the nesting of [`eval_split`]).
    #[inline]
    fn value_and_slope(&self, s: f64) -> (f64, f64) {
        let r = 1.0 - s;
        let terms = &self.terms[..self.n_terms];
        let mut acc = terms[self.n_terms - 1];
        let mut slope = 0.0;
        for j in (0..self.n_terms - 1).rev() {
            // the factor is r (d/ds = -1) after odd full terms, s (d/ds = 1) after even ones
            let (w, dw) = if (j + 1) % 2 == 1 {
                (r, -1.0)
            } else {
                (s, 1.0)
            };
            slope = dw * acc + w * slope;
            acc = terms[j] + w * acc;
        }
        (self.start + s * acc, acc + s * slope)
    }
}

/// One crossing of the cut.
#[derive(Clone, Debug, PartialEq)]
pub struct CutPoint {
    /// Time of the crossing.
    pub t: f64,
    /// Time since the previous recorded crossing; `None` for the first.
    pub return_time: Option<f64>,
    /// State at the crossing.
    pub state: Vec<f64>,
}

impl AsRef<[f64]> for CutPoint {
    /// The state at the crossing.
    fn as_ref(&self) -> &[f64] {
        &self.state
    }
}
