//! A level surface that is affine in the states (such as `x - a`), held as the plane it is at
//! the run's parameters, so that it is screened and located with the plane's arithmetic
//! instead of the expression's at every step.

use crate::expr::{Program, Scratch};

/// The plane `normal . x = offset` of an affine level surface, taken anew when the parameters
/// change.
#[derive(Clone, Debug, Default)]
pub(crate) struct LevelPlane {
    normal: Vec<f64>,
    offset: f64,
    /// The parameters the plane was taken at; `None` before the first use.
    taken_at: Option<Vec<f64>>,
    /// Whether the weights are finite and not all zero and the offset is finite (a parameter
    /// can make them otherwise, e.g. `x / a` at `a = 0`: the expression is used then).
    usable: bool,
}

impl LevelPlane {
    /// The plane of `program` (affine in the states, free of `t`; see
    /// [`Program::is_affine_in_states`]) at `parameters`: its weights are the gradient and
    /// its offset minus the value at `x = 0`. `None` when they are not usable.
    #[inline]
    pub(crate) fn at(
        &mut self,
        program: &Program,
        scratch: &mut Scratch,
        parameters: &[f64],
    ) -> Option<(&[f64], f64)> {
        // asked on every step: the common case is one comparison per parameter (written out:
        // comparing the slices through `Option::as_deref` cost 0.3 % of a map's instructions)
        let same = self.taken_at.as_ref().is_some_and(|taken| {
            taken.len() == parameters.len() && taken.iter().zip(parameters).all(|(a, b)| a == b)
        });
        if !same {
            self.take(program, scratch, parameters);
        }
        self.usable.then_some((&self.normal[..], self.offset))
    }

    /// Takes the plane anew at `parameters`.
    #[cold]
    fn take(&mut self, program: &Program, scratch: &mut Scratch, parameters: &[f64]) {
        let n = program.n_states();
        let origin = vec![0.0; n];
        self.normal.resize(n, 0.0);
        program.jacobian_reference(scratch, 0.0, &origin, parameters, &mut self.normal);
        let mut value = [f64::NAN];
        program.eval_reference(scratch, 0.0, &origin, parameters, &mut value);
        self.offset = -value[0];
        self.usable = self.offset.is_finite()
            && self.normal.iter().all(|w| w.is_finite())
            && self.normal.iter().any(|&w| w != 0.0);
        self.taken_at = Some(parameters.to_vec());
    }
}
