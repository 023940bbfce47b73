//! Derivatives of the return map by central differences, for models whose rates jump with
//! the states (`sign`, `step`, ...): the variational equations see zero derivative across a
//! jump and miss the kick the jump gives to nearby orbits; differencing the map does not.

use nalgebra::DMatrix;

use super::flow_map::{FlowMap, MapImage, MapPoint, norm};
use super::{CycleError, linalg};

impl FlowMap {
    /// [`FlowMap::apply`] with the Jacobian of the map from central differences.
    ///
    /// For the strobe map the differences are taken along the `n` state axes. For the cut map
    /// they are taken along an orthonormal basis of the cut's tangent plane only (`n - 1`
    /// directions, the perturbed points moved back onto the surface): a step off the surface
    /// would meet the surface at once on one side and only after a whole return on the other.
    /// The flow direction `f` at the start completes the basis with what is known exactly:
    /// the map sends it to zero and it shortens the return time at unit rate. The same passes
    /// give the gradient of the return time `tau`, and `P(x) = phi(tau(x), x)` then gives the
    /// monodromy matrix `Phi = DP - f grad tau^T` (with `f` at the image).
    pub(super) fn apply_by_differences(
        &mut self,
        seed: &MapPoint,
        k: usize,
    ) -> Result<MapImage, CycleError> {
        let n = self.dim();
        let mut image = self.follow(seed, k, false)?;
        let rtol = self.integrator_rtol();
        let size = norm(&seed.state).max(1e-8);
        let normal = if self.is_cut() {
            Some(
                self.unit_normal(seed.t, &seed.state)
                    .ok_or(CycleError::Tangent { t: seed.t })?,
            )
        } else {
            None
        };
        // the directions: tangent basis and the flow for the cut, the axes for the strobe
        let directions: Vec<Vec<f64>> = match &normal {
            Some(normal) => {
                let basis = linalg::complement_basis(normal);
                (0..n - 1)
                    .map(|j| (0..n).map(|i| basis[i * (n - 1) + j]).collect())
                    .collect()
            }
            None => (0..n)
                .map(|j| (0..n).map(|i| if i == j { 1.0 } else { 0.0 }).collect())
                .collect(),
        };
        let mut images = Vec::with_capacity(n);
        let mut times = Vec::with_capacity(n);
        for direction in &directions {
            // balances the truncation error h^2 against the integration error rtol / h
            let h = match &normal {
                Some(_) => rtol.cbrt() * size,
                None => rtol.cbrt() * direction_scale(&seed.state, direction, size),
            };
            let [up, down] = [h, -h].map(|step| {
                let mut state: Vec<f64> = seed
                    .state
                    .iter()
                    .zip(direction)
                    .map(|(x, d)| x + step * d)
                    .collect();
                self.project(seed.t, &mut state);
                MapPoint { t: seed.t, state }
            });
            let up = self.follow(&up, k, false)?;
            let down = self.follow(&down, k, false)?;
            let column: Vec<f64> = up
                .state
                .iter()
                .zip(&down.state)
                .map(|(a, b)| (a - b) / (2.0 * h))
                .collect();
            images.push(column);
            times.push((up.t - down.t) / (2.0 * h));
        }
        if normal.is_none() {
            let mut jacobian = vec![0.0; n * n];
            for (j, column) in images.iter().enumerate() {
                for (i, v) in column.iter().enumerate() {
                    jacobian[i * n + j] = *v;
                }
            }
            image.monodromy.clone_from(&jacobian);
            image.jacobian = jacobian;
            return Ok(image);
        }
        // the flow direction: mapped to zero, return time shortened at unit rate
        let flow = self.rates_at(seed.t, &seed.state);
        let mut directions = directions;
        directions.push(flow);
        images.push(vec![0.0; n]);
        times.push(-1.0);
        let by_columns = |columns: &[Vec<f64>]| DMatrix::from_fn(n, n, |i, j| columns[j][i]);
        let inverse = by_columns(&directions)
            .try_inverse()
            .ok_or(CycleError::Tangent { t: seed.t })?;
        let jacobian = by_columns(&images) * &inverse;
        let time_gradient = DMatrix::from_row_slice(1, n, &times) * &inverse;
        let flow_at_image = DMatrix::from_column_slice(n, 1, &self.rates_at(image.t, &image.state));
        let monodromy = &jacobian - flow_at_image * time_gradient;
        image.jacobian = row_major(&jacobian);
        image.monodromy = row_major(&monodromy);
        Ok(image)
    }
}

/// The size of the state along `direction` (an axis): the state's component, at least a
/// hundredth of its size.
fn direction_scale(state: &[f64], direction: &[f64], size: f64) -> f64 {
    let along: f64 = state.iter().zip(direction).map(|(x, d)| x * d).sum();
    along.abs().max(1e-2 * size)
}

/// The entries of `m` row by row.
fn row_major(m: &DMatrix<f64>) -> Vec<f64> {
    let mut out = Vec::with_capacity(m.nrows() * m.ncols());
    for i in 0..m.nrows() {
        for j in 0..m.ncols() {
            out.push(m[(i, j)]);
        }
    }
    out
}
